// `npm run sweep`: runs the built `hopscope check --json` over data files Hopscope did not write —
// the test data shipped inside the installed NumPy, SciPy, NetworkX and PyTorch packages (Debian's
// python3-* packages under /usr/lib/python3/dist-packages, or SWEEP_ROOTS=dir:dir) — plus a truncated
// copy and three bit-flipped copies of each, and reports anything that is not a clean outcome:
// an exit code other than 0/1/2, output that is not JSON, a stack trace, more than 30 s, or more
// than 1 GiB peak RSS. Prints figures; exits 1 when something is not clean. Not part of CI's timed
// path (a few minutes on 2 cores).
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';

const root = new URL('..', import.meta.url).pathname;
const cli = join(root, 'dist/cli.js');
const roots = (process.env.SWEEP_ROOTS ?? ['numpy', 'scipy', 'networkx', 'torch']
  .map((p) => `/usr/lib/python3/dist-packages/${p}`).join(':')).split(':');
const EXT = /\.(npy|npz|mtx|mtx\.gz|txt|csv|tsv|json|pt|pth|safetensors|edges|el|txt\.gz|csv\.gz)$/i;
const MAX_BYTES = 64 * 1024 ** 2;

function walk(dir, out) {
  let entries;
  try { entries = readdirSync(dir, { withFileTypes: true }); } catch { return out; }
  for (const e of entries) {
    const p = join(dir, e.name);
    if (e.isDirectory()) walk(p, out);
    else if (e.isFile() && EXT.test(e.name) && statSync(p).size <= MAX_BYTES) out.push(p);
  }
  return out;
}

// A small deterministic generator (mulberry32) so a failing mutant can be made again.
function rng(seed) {
  return () => {
    seed = (seed + 0x6d2b79f5) | 0;
    let t = Math.imul(seed ^ (seed >>> 15), 1 | seed);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const work = mkdtempSync(join(tmpdir(), 'hopscope-sweep-'));
const originals = roots.flatMap((r) => walk(r, []));
const cases = [];
originals.forEach((p, i) => {
  cases.push({ path: p, kind: 'original' });
  const bytes = readFileSync(p);
  if (bytes.length < 2) return;
  const name = basename(p);
  const cut = join(work, `${i}-cut-${name}`);
  writeFileSync(cut, bytes.subarray(0, Math.floor(bytes.length / 2)));
  cases.push({ path: cut, kind: 'truncated', from: p });
  const r = rng(i + 1);
  for (let k = 0; k < 3; k++) {
    const m = Buffer.from(bytes);
    const at = Math.floor(r() * m.length);
    m[at] ^= 1 << Math.floor(r() * 8);
    const f = join(work, `${i}-flip${k}-${name}`);
    writeFileSync(f, m);
    cases.push({ path: f, kind: `bit ${at}`, from: p });
  }
});

const bad = [];
const exits = { 0: 0, 1: 0, 2: 0 };
let slowest = { ms: 0 }, biggest = { kib: 0 };
for (const c of cases) {
  const t = Date.now();
  const r = spawnSync('/usr/bin/time', ['-f', '%M', process.execPath, cli, 'check', c.path, '--json'],
    { encoding: 'utf8', timeout: 30_000, maxBuffer: 256 * 1024 ** 2 });
  const ms = Date.now() - t;
  const kib = Number((r.stderr ?? '').trim().split('\n').pop());
  const what = `${c.kind === 'original' ? c.path : `${c.from} (${c.kind})`}`;
  if (ms > slowest.ms) slowest = { ms, what };
  if (kib > biggest.kib) biggest = { kib, what };
  let why;
  if (r.error) why = `did not finish: ${r.error.message}`;
  else if (![0, 1, 2].includes(r.status)) why = `exit ${r.status ?? r.signal}`;
  else {
    try { JSON.parse(r.stdout); } catch { why = 'output is not JSON'; }
    if (/\n\s+at .+:\d+:\d+\)?\n/.test(r.stdout + r.stderr)) why = 'stack trace in the output';
    if (kib > 1024 * 1024) why = `peak RSS ${Math.round(kib / 1024)} MiB`;
  }
  if (why) bad.push(`${what}: ${why}`);
  else exits[r.status]++;
}
rmSync(work, { recursive: true, force: true });
console.log(`${originals.length} files from ${roots.join(', ')}; ${cases.length} runs with truncated and bit-flipped copies`);
console.log(`exit 0: ${exits[0]}, exit 1: ${exits[1]}, exit 2: ${exits[2]}; slowest ${(slowest.ms / 1000).toFixed(2)} s (${slowest.what}); ` +
  `largest peak RSS ${Math.round(biggest.kib / 1024)} MiB (${biggest.what})`);
if (bad.length) {
  console.log(`\n${bad.length} not clean:`);
  for (const b of bad) console.log(`  ${b}`);
  process.exit(1);
}
console.log('all clean');
