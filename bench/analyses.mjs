// `npm run bench:analyses`: times the analysis commands (field, wl, bottlenecks, spectrum) on the
// benchmark graphs (bench/out/graph-1m.npy, graph-10m.npy; made by `npm run bench` or gen.mjs), each
// as a fresh process, with wall time from performance.now() and peak RSS / CPU from GNU time when
// /usr/bin/time exists. `field5` (5 nodes answered by one process) and `wl3` (--rounds 3) are set
// beside NetworkX doing the same work (bench/analyses_baseline.py, Debian's python3) in the same
// run: runs alternate Hopscope / NetworkX, medians are printed with their ratio, and the figures
// are cross-checked (hop counts and influence weights; classes per round). Prints figures only;
// nothing here is a test.
//
//   node bench/analyses.mjs [--sizes 1m,10m] [--only field5,wl3] [--runs 3] [--no-networkx]
//                           [--networkx-above-1m] [--check] [--cli PATH]
//
// --check adds the --check variant of field5 and wl3 (the full check pass first), for comparison.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureGraph, DEFAULT_SEED } from './gen.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const arg0 = (name) => { const i = process.argv.indexOf(name); return i > 0 ? process.argv[i + 1] : undefined; };
/** --cli PATH times another build of the command line (e.g. one made from an earlier commit). */
const CLI = resolve(arg0('--cli') ?? join(ROOT, 'dist', 'cli.js'));
const OUT = join(ROOT, 'bench', 'out');
const PY = '/usr/bin/python3';
const BASELINE = join(ROOT, 'bench', 'analyses_baseline.py');
const arg = (name, dflt) => { const i = process.argv.indexOf(name); return i > 0 ? process.argv[i + 1] : dflt; };
const flag = (name) => process.argv.includes(name);
const sizes = arg('--sizes', '1m,10m').split(',').map((s) => Number(s.replace(/m$/i, 'e6').replace(/k$/i, 'e3')));
const only = arg('--only', 'field,field5,wl,wl3,bottlenecks,spectrum,spectrum-beyond-zeros').split(',');
const runs = Math.max(1, Number(arg('--runs', '3')));
const withCheck = flag('--check');
const LAYERS = 3, ROUNDS = 3;

if (!existsSync(CLI)) { console.error(`${CLI} missing: run npm run build`); process.exit(1); }
const tmp = mkdtempSync(join(tmpdir(), 'hopscope-bench-'));
const gnuTime = existsSync('/usr/bin/time');
let networkx = !flag('--no-networkx');
if (networkx) {
  const probe = spawnSync(PY, ['-c', 'import networkx, numpy'], { encoding: 'utf8', env: pyEnv() });
  if (probe.status !== 0) { console.log(`NetworkX comparison skipped: ${PY} with networkx and numpy not found`); networkx = false; }
}

function pyEnv() {
  const env = { ...process.env };
  delete env.OPENBLAS_CORETYPE; delete env.OPENBLAS_L2_SIZE;
  return env;
}

function spawnTimed(cmd, args, env) {
  const stats = join(tmp, 'time.txt');
  rmSync(stats, { force: true });
  const full = gnuTime ? ['-f', '%e %M %U %S', '-o', stats, cmd, ...args] : args;
  const t0 = performance.now();
  const r = spawnSync(gnuTime ? '/usr/bin/time' : cmd, full, { encoding: 'utf8', maxBuffer: 1 << 28, ...(env ? { env } : {}) });
  const wall = performance.now() - t0;
  let rss = null, cpu = null;
  if (gnuTime && existsSync(stats)) {
    const [, kb, user, sys] = readFileSync(stats, 'utf8').trim().split('\n').pop().split(' ').map(Number);
    rss = kb / 1024; cpu = (user + sys) * 1000;
  }
  return { status: r.status, wall, rss, cpu, out: r.stdout, err: r.stderr };
}
const run = (args) => spawnTimed(process.execPath, [CLI, ...args]);
const median = (xs) => { const s = xs.filter((x) => x !== null).sort((a, b) => a - b); return s.length ? s[(s.length - 1) >> 1] : null; };
const fmt = (ms) => (ms === null ? '—' : `${ms.toFixed(0)} ms`);

/** Hop counts equal and influence lists equal in order, weights within 1e-12 relative. */
function sameFields(hs, nx) {
  if (hs.length !== nx.length) return `MISMATCH (${hs.length} vs ${nx.length} fields)`;
  for (let i = 0; i < hs.length; i++) {
    const a = hs[i], b = nx[i];
    if (JSON.stringify(a.perHop) !== JSON.stringify(b.perHop)) return `MISMATCH perHop of node ${a.node}`;
    if (a.influence.length !== b.influence.length) return `MISMATCH influence length of node ${a.node}`;
    for (let j = 0; j < a.influence.length; j++) {
      const x = a.influence[j], y = b.influence[j];
      if (x.node !== y.node || Math.abs(x.weight - y.weight) > 1e-12 * Math.abs(y.weight)) return `MISMATCH influence of node ${a.node} at ${j}`;
    }
  }
  return 'MATCH';
}

const rows = [];
for (const e of sizes) {
  const stem = e >= 1e6 ? `graph-${e / 1e6}m` : `graph-${e / 1e3}k`;
  const g = ensureGraph(join(OUT, stem), e, DEFAULT_SEED, { log: (m) => process.stderr.write(m + '\n') });
  const file = g.npy;
  const n = String(g.N);
  // Five fixed nodes spread over the id range.
  const five = [0, 17, 42, Math.floor(g.N / 2) + 7, g.N - 1].join(',');
  const cases = {
    field: ['field', file, '--node', '0', '--layers', String(LAYERS), '--num-nodes', n, '--json'],
    field5: ['field', file, '--node', five, '--layers', String(LAYERS), '--num-nodes', n, '--json'],
    wl: ['wl', file, '--num-nodes', n, '--json'],
    wl3: ['wl', file, '--rounds', String(ROUNDS), '--num-nodes', n, '--json'],
    bottlenecks: ['bottlenecks', file, '--top', '20', '--num-nodes', n, '--json'],
    spectrum: ['spectrum', file, '--k', '8', '--laplacian', 'normalized', '--num-nodes', n, '--json'],
  };
  const baseline = {
    field5: ['field', file, '--num-nodes', n, '--layers', String(LAYERS), '--nodes', five],
    wl3: ['wl', file, '--num-nodes', n, '--rounds', String(ROUNDS)],
  };
  // The bench graphs have one zero eigenvalue per component (N/1000 + 1 of them): asking for 8
  // beyond those makes Lanczos work. Only up to 1M edges: at 10M that is 3,009 eigenpairs.
  if (e <= 1e6 && only.includes('spectrum-beyond-zeros')) {
    const c = JSON.parse(run(['check', file, '--directed', '--num-nodes', n, '--json']).out).files[0].graph.components;
    cases['spectrum-beyond-zeros'] = ['spectrum', file, '--k', String(c + 8), '--laplacian', 'normalized', '--num-nodes', n, '--json'];
  }
  const names = only.flatMap((x) => (withCheck && (x === 'field5' || x === 'wl3') ? [x, `${x}+check`] : [x]));
  for (const name of names) {
    const plain = name.replace(/\+check$/, '');
    if (!cases[plain]) continue;
    const args = name.endsWith('+check') ? [...cases[plain], '--check'] : cases[plain];
    const nxArgs = networkx && baseline[plain] && !name.endsWith('+check') && (e <= 1e6 || flag('--networkx-above-1m')) ? baseline[plain] : null;
    const hs = [], nx = [];
    for (let i = 0; i < runs; i++) {
      // Alternate, so both sides see the same load on a shared machine.
      hs.push(run(args));
      if (nxArgs) nx.push(spawnTimed(PY, [BASELINE, ...nxArgs], pyEnv()));
    }
    const last = hs[hs.length - 1];
    let note = '';
    let j = null;
    try {
      j = JSON.parse(last.out);
      if (plain === 'field') note = `perHop ${JSON.stringify(j.perHop)}, coverage ${j.coverage.toFixed(3)}`;
      if (plain === 'field5') note = `totals ${JSON.stringify(j.fields.map((f) => f.total))}`;
      if (plain.startsWith('wl')) note = `classes ${JSON.stringify(j.classesPerRound)}`;
      if (plain === 'bottlenecks') note = `${j.bridgeCount ?? j.bridges.length} bridges`;
      if (plain.startsWith('spectrum')) note = `K = ${j.eigenvalues.length}, largest λ = ${j.eigenvalues.slice(-3).map((x) => x.toFixed(4)).join(', ')}`;
    } catch { note = `exit ${last.status}: ${(last.err || '').split('\n')[0]}`; }
    const row = {
      file: `${stem}.npy`, name, runs,
      wall: median(hs.map((r) => r.wall)), cpu: median(hs.map((r) => r.cpu)), rss: median(hs.map((r) => r.rss)), note,
    };
    let line = `${stem}.npy  ${name.padEnd(14)} ${fmt(row.wall).padStart(9)} wall  ${row.cpu === null ? '' : `${fmt(row.cpu).padStart(9)} CPU`}  ${row.rss === null ? '' : `${row.rss.toFixed(1)} MiB`}  ${note.slice(0, 100)}`;
    if (nxArgs) {
      const okNx = nx.filter((r) => r.status === 0);
      let agree = 'no NetworkX result';
      if (okNx.length) {
        const b = JSON.parse(okNx[okNx.length - 1].out);
        if (j && plain === 'field5') agree = sameFields(j.fields, b.fields);
        // NetworkX joins labels without separators, so two different signatures can (rarely) hash alike.
        if (j && plain === 'wl3') agree = JSON.stringify(j.classesPerRound) === JSON.stringify(b.classesPerRound) ? 'MATCH' : `MISMATCH (NetworkX ${JSON.stringify(b.classesPerRound)})`;
      }
      row.networkx = {
        wall: median(okNx.map((r) => r.wall)), cpu: median(okNx.map((r) => r.cpu)), rss: median(okNx.map((r) => r.rss)),
        phases: okNx.length ? JSON.parse(okNx[okNx.length - 1].out).seconds : null, agree,
      };
      row.ratio = row.networkx.wall ? row.wall / row.networkx.wall : null;
      row.cpuRatio = row.networkx.cpu && row.cpu !== null ? row.cpu / row.networkx.cpu : null;
      line += `\n${' '.repeat(stem.length + 6)}${'NetworkX'.padEnd(14)} ${fmt(row.networkx.wall).padStart(9)} wall  ${row.networkx.cpu === null ? '' : `${fmt(row.networkx.cpu).padStart(9)} CPU`}  ${row.networkx.rss === null ? '' : `${row.networkx.rss.toFixed(1)} MiB`}  ` +
        `ratio ${row.ratio === null ? '—' : row.ratio.toFixed(3)} wall${row.cpuRatio === null ? '' : `, ${row.cpuRatio.toFixed(3)} CPU`}; figures ${agree}`;
    }
    rows.push(row);
    console.log(line);
  }
}
console.log(`medians of ${runs} fresh processes each; load average at the end: ${loadavg().map((x) => x.toFixed(2)).join(' / ')}`);
console.log('targets (informative): field5 ≤ 0.15 × NetworkX, wl3 ≤ 0.05 × NetworkX (wall, same run)');
rmSync(tmp, { recursive: true, force: true });
