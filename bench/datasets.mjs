// Datasets of many graphs at scale, part of `npm run bench` (also `npm run bench:datasets`):
// 100,000 graphs of 25 nodes (2.5M nodes, 5M edge entries) saved by PyTorch as a (data, slices)
// tuple with a graph-index split beside it (bench/datasets_make.py, seeded), checked by
// `hopscope check --json`: per-graph checks and the isomorphism checks (labels and splits present);
// then `hopscope ceiling` on the same file beside a NetworkX baseline (bench/ceiling_baseline.py).
// Prints figures; nothing is asserted about time. Needs /usr/bin/python3 with PyTorch and NumPy
// (Debian's python3-torch, python3-numpy); skipped with the reason otherwise.
//
//   node bench/datasets.mjs [--graphs 100k] [--nodes 25]
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const arg = (name, dflt) => {
  const i = process.argv.indexOf(`--${name}`);
  const v = i >= 0 ? process.argv[i + 1] : dflt;
  const m = /^(\d+(?:\.\d+)?)([km]?)$/i.exec(String(v));
  if (!m) { console.error(`--${name} takes a count such as 100k`); process.exit(2); }
  return Math.round(Number(m[1]) * ({ k: 1e3, m: 1e6 }[m[2].toLowerCase()] ?? 1));
};
const graphs = arg('graphs', '100k');
const nodes = arg('nodes', '25');
const python = '/usr/bin/python3';

const torchOk = existsSync(python) && spawnSync(python, ['-c', 'import torch, numpy'], { stdio: 'ignore' }).status === 0;
if (!torchOk) {
  console.log('bench/datasets: skipped (needs /usr/bin/python3 with PyTorch and NumPy: apt-get install python3-torch python3-numpy)');
  process.exit(0);
}

const dir = mkdtempSync(join(tmpdir(), 'hopscope-datasets-'));
try {
  console.log(`== datasets: ${graphs.toLocaleString('en')} graphs of ${nodes} nodes (${(graphs * nodes).toLocaleString('en')} nodes, ` +
    `${(graphs * nodes * 2).toLocaleString('en')} edge entries), load ${loadavg()[0].toFixed(1)}`);
  const made = spawnSync(python, [join(root, 'bench/datasets_make.py'), dir, '--graphs', String(graphs), '--nodes', String(nodes)], { stdio: 'inherit' });
  if (made.status !== 0) throw new Error('writing the dataset failed');
  const file = join(dir, 'bench.pt');
  console.log(`   ${(statSync(file).size / 1e6).toFixed(0)} MB written by torch.save`);

  const t = performance.now();
  const h = spawnSync('/usr/bin/time', ['-f', '%M', process.execPath, join(root, 'dist/cli.js'), 'check', file, '--json'],
    { encoding: 'utf8', maxBuffer: 512 * 1024 ** 2, env: { ...process.env, HOPSCOPE_TIMINGS: '1' } });
  const secs = (performance.now() - t) / 1000;
  if (h.status !== 0 && h.status !== 1) throw new Error(`hopscope check exited ${h.status}: ${h.stderr}`);
  const rss = Number(h.stderr.trim().split('\n').pop());
  const phases = JSON.parse(/HOPSCOPE_TIMINGS (\{.*\})/.exec(h.stderr)?.[1] ?? '{}');
  const report = JSON.parse(h.stdout).files.find((f) => f.dataset);
  const d = report?.dataset;
  console.log(`   read as a dataset: ${d ? `${d.graphs} graphs, ${d.nodes.total} nodes, ${d.edges.total} edge entries, splits ${JSON.stringify(d.splits)}` : 'NO (not recognised)'}`);
  console.log(`   problems: ${report ? report.problems.map((p) => `${p.code} ×${p.count}${p.graphs !== undefined ? ` in ${p.graphs} graphs` : ''}`).join(', ') || 'none' : '-'}`);
  console.log(`   hopscope dataset check (per-graph checks + isomorphism): ${((phases.datasets ?? NaN) / 1000).toFixed(2)} s`);
  console.log(`   hopscope check (whole run: read ${((phases.read ?? NaN) / 1000).toFixed(2)} s): ${secs.toFixed(2)} s wall, peak RSS ${(rss / 1024).toFixed(0)} MiB`);
  ceilingRow(file);
} finally {
  rmSync(dir, { recursive: true, force: true });
}

// The accuracy ceiling (`hopscope ceiling`) of the same file, beside NetworkX computing it the
// per-graph way (bench/ceiling_baseline.py: one weisfeiler_lehman_graph_hash per graph, with as many
// iterations as our refinement needed, plus one) in the same run. Figures only.
function ceilingRow(file) {
  const runs = [];
  for (const extra of [[], ['--with', 'triangles']]) {
    const t = performance.now();
    const h = spawnSync('/usr/bin/time', ['-f', '%M', process.execPath, join(root, 'dist/cli.js'), 'ceiling', file, '--json', ...extra],
      { encoding: 'utf8', maxBuffer: 512 * 1024 ** 2, env: { ...process.env, HOPSCOPE_TIMINGS: '1' } });
    const secs = (performance.now() - t) / 1000;
    if (h.status !== 0) throw new Error(`hopscope ceiling exited ${h.status}: ${h.stderr}`);
    const phases = JSON.parse(/HOPSCOPE_TIMINGS (\{.*\})/.exec(h.stderr)?.[1] ?? '{}');
    const rss = Number(h.stderr.trim().split('\n').pop());
    const j = JSON.parse(h.stdout);
    runs.push(j);
    const w = j.with?.[0];
    console.log(`   hopscope ceiling${extra.length ? ' ' + extra.join(' ') : ''}: ${(100 * j.ceiling).toFixed(3)}% over ${j.groupCount} look-alike groups ` +
      `(${j.conflictingGroups} with mixed labels, ${j.rounds} rounds)${w ? `; + ${w.with}: ${w.ceiling === null ? w.skipped : `${(100 * w.ceiling).toFixed(3)}%`}` : ''}; ` +
      `ceiling ${(phases.ceiling / 1000).toFixed(2)} s (read ${(phases.read / 1000).toFixed(2)} s, dataset checks ${(phases.datasets / 1000).toFixed(2)} s), ` +
      `${secs.toFixed(2)} s wall, peak RSS ${(rss / 1024).toFixed(0)} MiB`);
  }
  const nxOk = spawnSync(python, ['-c', 'import networkx'], { stdio: 'ignore' }).status === 0;
  if (!nxOk) { console.log('   NetworkX baseline: skipped (needs python3-networkx)'); return; }
  const ours = runs[0];
  const iterations = Math.max(1, ours.rounds) + 1;
  const b = spawnSync(python, [join(root, 'bench/ceiling_baseline.py'), file, '--iterations', String(iterations)], { encoding: 'utf8', maxBuffer: 64 * 1024 ** 2 });
  if (b.status !== 0) { console.log(`   NetworkX baseline failed: ${b.stderr.trim().split('\n').pop()}`); return; }
  const x = JSON.parse(b.stdout.trim().split('\n').pop());
  const same = x.groups === ours.groupCount && x.conflictingGroups === ours.conflictingGroups && Math.abs(x.ceiling - ours.ceiling) < 1e-12;
  console.log(`   NetworkX per-graph weisfeiler_lehman_graph_hash (${iterations} iterations): ${(100 * x.ceiling).toFixed(3)}% over ${x.groups} groups ` +
    `(${x.conflictingGroups} with mixed labels), ${x.seconds.toFixed(2)} s (after torch.load) — ${same ? 'same groups and ceiling' : 'DIFFERENT from hopscope'}`);
}
