// `npm run bench:analyses`: times the analysis commands (field, wl, bottlenecks, spectrum) on the
// benchmark graphs (bench/out/graph-1m.npy, graph-10m.npy; made by `npm run bench` or gen.mjs), each
// as a fresh process, with wall time from performance.now() and peak RSS / CPU from GNU time when
// /usr/bin/time exists. Prints figures only; nothing here is a test.
//
//   node bench/analyses.mjs [--sizes 1m,10m] [--only field,wl]
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureGraph, DEFAULT_SEED } from './gen.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const CLI = join(ROOT, 'dist', 'cli.js');
const OUT = join(ROOT, 'bench', 'out');
const arg = (name, dflt) => { const i = process.argv.indexOf(name); return i > 0 ? process.argv[i + 1] : dflt; };
const sizes = arg('--sizes', '1m,10m').split(',').map((s) => Number(s.replace(/m$/i, 'e6').replace(/k$/i, 'e3')));
const only = arg('--only', 'field,wl,bottlenecks,spectrum,spectrum-beyond-zeros').split(',');

if (!existsSync(CLI)) { console.error('dist/cli.js missing: run npm run build'); process.exit(1); }
const tmp = mkdtempSync(join(tmpdir(), 'hopscope-bench-'));
const gnuTime = existsSync('/usr/bin/time');

function run(args) {
  const stats = join(tmp, 'time.txt');
  const cmd = gnuTime ? '/usr/bin/time' : process.execPath;
  const full = gnuTime ? ['-f', '%e %M %U %S', '-o', stats, process.execPath, CLI, ...args] : [CLI, ...args];
  const t0 = performance.now();
  const r = spawnSync(cmd, full, { encoding: 'utf8', maxBuffer: 1 << 28 });
  const wall = performance.now() - t0;
  let rss = null, cpu = null;
  if (gnuTime && existsSync(stats)) {
    const [, kb, user, sys] = readFileSync(stats, 'utf8').trim().split('\n').pop().split(' ').map(Number);
    rss = kb / 1024; cpu = (user + sys) * 1000;
  }
  return { status: r.status, wall, rss, cpu, out: r.stdout, err: r.stderr };
}

const rows = [];
for (const e of sizes) {
  const stem = e >= 1e6 ? `graph-${e / 1e6}m` : `graph-${e / 1e3}k`;
  const g = ensureGraph(join(OUT, stem), e, DEFAULT_SEED, { log: (m) => process.stderr.write(m + '\n') });
  const file = g.npy;
  const n = String(g.N);
  const cases = {
    field: ['field', file, '--node', '0', '--layers', '3', '--num-nodes', n, '--json'],
    wl: ['wl', file, '--num-nodes', n, '--json'],
    bottlenecks: ['bottlenecks', file, '--top', '20', '--num-nodes', n, '--json'],
    spectrum: ['spectrum', file, '--k', '8', '--laplacian', 'normalized', '--num-nodes', n, '--json'],
  };
  // The bench graphs have one zero eigenvalue per component (N/1000 + 1 of them): asking for 8
  // beyond those makes Lanczos work. Only up to 1M edges: at 10M that is 3,009 eigenpairs.
  if (e <= 1e6 && only.includes('spectrum-beyond-zeros')) {
    const c = JSON.parse(run(['check', file, '--directed', '--num-nodes', n, '--json']).out).files[0].graph.components;
    cases['spectrum-beyond-zeros'] = ['spectrum', file, '--k', String(c + 8), '--laplacian', 'normalized', '--num-nodes', n, '--json'];
  }
  for (const name of only) {
    if (!cases[name]) continue;
    const r = run(cases[name]);
    let note = '';
    try {
      const j = JSON.parse(r.out);
      if (name === 'field') note = `perHop ${JSON.stringify(j.perHop)}, coverage ${j.coverage.toFixed(3)}`;
      if (name === 'wl') note = `classes ${JSON.stringify(j.classesPerRound)}`;
      if (name === 'bottlenecks') note = `${j.bridgeCount ?? j.bridges.length} bridges`;
      if (name.startsWith('spectrum')) note = `K = ${j.eigenvalues.length}, largest λ = ${j.eigenvalues.slice(-3).map((x) => x.toFixed(4)).join(', ')}`;
    } catch { note = `exit ${r.status}: ${(r.err || '').split('\n')[0]}`; }
    rows.push({ file: `${stem}.npy`, name, wall: r.wall, cpu: r.cpu, rss: r.rss, note });
    console.log(`${stem}.npy  ${name.padEnd(12)} ${r.wall.toFixed(0).padStart(7)} ms wall  ${r.cpu === null ? '' : `${r.cpu.toFixed(0).padStart(7)} ms CPU`}  ${r.rss === null ? '' : `${r.rss.toFixed(1)} MiB`}  ${note.slice(0, 110)}`);
  }
}
console.log(`load average at the end: ${loadavg().map((x) => x.toFixed(2)).join(' / ')}`);
rmSync(tmp, { recursive: true, force: true });
