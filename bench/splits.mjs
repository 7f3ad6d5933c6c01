// Link-prediction split checks at scale, part of `npm run bench` (also `npm run bench:splits`):
// a random directed message graph of 10M edges over 1M nodes with 1M positive and 1M negative
// pairs per split (train, val, test), written by NumPy (bench/splits_baseline.py --make, seeded),
// checked by `hopscope check --json --directed --num-nodes N` and counted the NumPy way (np.isin
// over encoded pairs) in the same run, side by side. Prints figures and whether the leak and
// negative counts match; nothing is asserted about time. Needs /usr/bin/python3 with NumPy
// (Debian's python3-numpy); skipped with the reason otherwise.
//
//   node bench/splits.mjs [--edges 10m] [--pairs 1m] [--nodes 1m]
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
  if (!m) { console.error(`--${name} takes a count such as 10m or 500k`); process.exit(2); }
  return Math.round(Number(m[1]) * ({ k: 1e3, m: 1e6 }[m[2].toLowerCase()] ?? 1));
};
const edges = arg('edges', '10m');
const pairs = arg('pairs', '1m');
const nodes = arg('nodes', '1m');
const python = '/usr/bin/python3';

const numpyOk = existsSync(python) && spawnSync(python, ['-c', 'import numpy'], { stdio: 'ignore' }).status === 0;
if (!numpyOk) {
  console.log('bench/splits: skipped (needs /usr/bin/python3 with NumPy: apt-get install python3-numpy)');
  process.exit(0);
}

const dir = mkdtempSync(join(tmpdir(), 'hopscope-splits-'));
const file = join(dir, 'splits.npz');
try {
  console.log(`== link-prediction splits: ${edges.toLocaleString('en')} message edges, ${pairs.toLocaleString('en')} positive + ` +
    `${pairs.toLocaleString('en')} negative pairs per split, ${nodes.toLocaleString('en')} nodes (load ${loadavg()[0].toFixed(1)})`);
  const made = spawnSync(python, [join(root, 'bench/splits_baseline.py'), file, '--make', '--nodes', String(nodes),
    '--edges', String(edges), '--pairs', String(pairs)], { stdio: 'inherit' });
  if (made.status !== 0) throw new Error('writing the split file failed');
  console.log(`   ${(statSync(file).size / 1e6).toFixed(0)} MB written by numpy.savez`);

  const t = performance.now();
  const h = spawnSync('/usr/bin/time', ['-f', '%M', process.execPath, join(root, 'dist/cli.js'), 'check', file, '--json',
    '--directed', '--num-nodes', String(nodes)], { encoding: 'utf8', maxBuffer: 512 * 1024 ** 2, env: { ...process.env, HOPSCOPE_TIMINGS: '1' } });
  const hSecs = (performance.now() - t) / 1000;
  if (h.status !== 0 && h.status !== 1) throw new Error(`hopscope check exited ${h.status}: ${h.stderr}`);
  const rss = Number(h.stderr.trim().split('\n').pop());
  const phases = JSON.parse(/HOPSCOPE_TIMINGS (\{.*\})/.exec(h.stderr)?.[1] ?? '{}');
  const report = JSON.parse(h.stdout).files[0];
  const ours = { leaked: {}, negativesAreEdges: {} };
  for (const p of report.problems) {
    const split = /^(train|val|test)_/.exec(p.tensor ?? '')?.[1];
    if (!split) continue;
    if (p.code === 'leaked-positive-pairs') ours.leaked[split] = p.count;
    if (p.code === 'negative-pairs-are-edges') ours.negativesAreEdges[split] = p.count;
  }

  const t2 = performance.now();
  const b = spawnSync(python, [join(root, 'bench/splits_baseline.py'), file, '--nodes', String(nodes)], { encoding: 'utf8' });
  const bSecs = (performance.now() - t2) / 1000;
  if (b.status !== 0) throw new Error(`the NumPy baseline failed: ${b.stderr}`);
  const numpy = JSON.parse(b.stdout);

  const rows = [];
  let match = true;
  for (const [what, splits] of [['leaked positives', ['val', 'test']], ['negatives that are edges', ['train', 'val', 'test']]]) {
    for (const s of splits) {
      const key = what.startsWith('leaked') ? 'leaked' : 'negativesAreEdges';
      const a = ours[key][s] ?? 0;
      const n = numpy[key][s];
      if (a !== n) match = false;
      rows.push(`   ${what.padEnd(25)} ${s.padEnd(5)} hopscope ${String(a).padStart(8)}   numpy ${String(n).padStart(8)}   ${a === n ? 'MATCH' : 'DIFFER'}`);
    }
  }
  console.log(rows.join('\n'));
  console.log(`   hopscope split checks (pair keys, leaks, negatives, two splits, self-pairs, cold start): ` +
    `${((phases.splits ?? NaN) / 1000).toFixed(2)} s`);
  console.log(`   hopscope check (whole file: read ${((phases.read ?? NaN) / 1000).toFixed(2)} s, build ${((phases.build ?? NaN) / 1000).toFixed(2)} s, ` +
    `every check): ${hSecs.toFixed(2)} s, peak RSS ${(rss / 1024).toFixed(0)} MiB`);
  console.log(`   NumPy (np.load + np.unique + np.isin):                 ${bSecs.toFixed(2)} s wall, ${numpy.seconds.total} s in NumPy ` +
    `(load ${numpy.seconds.load} s, set operations ${numpy.seconds.sets} s)`);
  console.log(`   counts: ${match ? 'all MATCH' : 'some DIFFER'}`);
  process.exitCode = match ? 0 : 1;
} finally {
  rmSync(dir, { recursive: true, force: true });
}
