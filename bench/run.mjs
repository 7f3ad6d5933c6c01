// `npm run bench`: speed and memory of `hopscope check` on large edge indices, next to the usual
// NumPy/SciPy way of computing the same figures. Prints figures only; nothing here is a test.
//
//   npm run bench                      # 1M and 10M edges, 3 runs each (2 when a run is slow)
//   npm run bench -- --quick           # 1M only
//   npm run bench -- --sizes 1m,5m     # any sizes (k/m suffixes or plain numbers)
//   node bench/run.mjs --help          # all options (skips the build that `npm run bench` does)
//
// What is measured
//   Every measurement is a fresh process over a file that has just been read once (warm page
//   cache), so both tools pay their own start-up and read the same cached bytes.
//   - Hopscope: `node dist/cli.js check FILE --json --directed --num-nodes N --index-base 0` with
//     HOPSCOPE_TIMINGS=1, which makes the CLI print one stderr line
//       HOPSCOPE_TIMINGS {"read":ms,"build":ms,"checks":ms,"total":ms,"bytes":N,"peakRssMiB":x}
//     giving the per-phase figures. Without that line only the wall time is reported.
//     Exit 1 (problems found) is the normal outcome for these graphs; 2 or a crash is a failure.
//   - NumPy/SciPy: `/usr/bin/python3 bench/numpy_baseline.py FILE.npy --num-nodes N` (np.load,
//     np.unique, scipy.sparse CSR, A != A.T, csgraph.connected_components), with
//     OPENBLAS_CORETYPE and OPENBLAS_L2_SIZE removed from that command's environment only.
//     Skipped, with the reason printed, when python3 or either library is missing.
//   Wall time is taken here around the spawn (performance.now()). Peak RSS of the child comes
//   from GNU time (`/usr/bin/time -f '%e %M %U %S' -o FILE`, Debian package `time`): the kernel's
//   ru_maxrss of the waited-for child, exact; its user+system CPU time is reported too, since
//   wall time on a shared machine depends on what else runs (the load average is printed). When /usr/bin/time is absent the child is spawned
//   directly and /proc/PID/status VmHWM (the kernel's high-water mark, monotonic) is polled every
//   5 ms; the last value read is reported, which can miss growth in the final few milliseconds
//   of the process (reported as a lower bound "≥"). Node cannot read a child's rusage itself
//   (process.resourceUsage() covers only the calling process).
//   Each figure is the median over the runs (3 by default; 2 when the first run of a
//   measurement took longer than 20 s). MB/s = file bytes / 10^6 / phase seconds.
//
// Exit status: 0 when every Hopscope run produced a report and every cross-checked figure
// matched NumPy/SciPy; 1 otherwise (target misses are informative and never change it).

import { spawn, spawnSync } from 'node:child_process';
import { closeSync, existsSync, mkdtempSync, openSync, readFileSync, readSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, release, tmpdir, totalmem } from 'node:os';
import { basename, dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { DEFAULT_SEED, ensureGraph } from './gen.mjs';

const BENCH_DIR = dirname(fileURLToPath(import.meta.url));
const ROOT = resolve(BENCH_DIR, '..');
const OUT_DIR = join(BENCH_DIR, 'out');
let CLI = join(ROOT, 'dist', 'cli.js');
const PYTHON = '/usr/bin/python3';
const BASELINE = join(BENCH_DIR, 'numpy_baseline.py');
const GNU_TIME = '/usr/bin/time';
const SLOW_RUN_MS = 20_000;
const TIME_FORMAT = '%e %M %U %S'; // wall s, max RSS KiB, user s, system s
const TIME_LINE = /^(\d+(?:\.\d+)?) (\d+) (\d+(?:\.\d+)?) (\d+(?:\.\d+)?)$/;

// Figures compared between Hopscope's JSON (files[0].graph) and the NumPy/SciPy baseline.
const FIGURES = ['edges', 'selfLoops', 'duplicateEdges', 'asymmetricPairs', 'isolatedNodes', 'components'];
const HOPSCOPE_PHASES = ['read', 'build', 'checks', 'total'];
const NUMPY_PHASES = ['load', 'bounds', 'selfLoops', 'duplicates', 'csr', 'asymmetry', 'isolated', 'components', 'total'];

// Targets (informative).
const TARGET_TIME_RATIO = 0.35; // 10M .npy: hopscope wall <= 0.35 x numpy/scipy wall (issue 13)
const TARGET_RSS_MIB = 400; // 10M .npy: hopscope peak RSS <= 400 MiB
/** Text edge list read phase, MB/s: 150 up to 1M lines, 250 from 10M lines on (issue 13). */
const targetTextReadMbps = (E) => (E >= 10_000_000 ? 250 : 150);

// ---------------------------------------------------------------- options

const USAGE = `usage: node bench/run.mjs [options]
  --quick            only the 1M-edge graph
  --sizes LIST       edge counts, comma separated: 1m,10m (default), 500k, 2500000, 1e6
  --runs N           runs per measurement (default 3; 2 when a first run exceeds ${SLOW_RUN_MS / 1000} s)
  --no-numpy         skip the NumPy/SciPy baseline
  --regen            regenerate the graphs even when bench/out has them
  --seed N           generator seed (default ${DEFAULT_SEED})
  --cli PATH         the CLI script to time (default dist/cli.js)
  --no-huge-pages    run the CLI with HOPSCOPE_HUGE_PAGES=0 (one process, no huge pages;
                     by default dist/cli.js decides, see server/src/node/relaunch.ts)
  --rss METHOD       how to take a child's peak RSS: time (/usr/bin/time, default when it
                     works) or proc (poll /proc/PID/status VmHWM)
  --help             this text`;

function parseSize(s) {
  const m = /^(\d+(?:\.\d+)?(?:e\d+)?)([km]?)$/i.exec(s.trim());
  if (!m) throw new Error(`bad size "${s}"`);
  const mult = { '': 1, k: 1e3, m: 1e6 }[m[2].toLowerCase()];
  const n = Math.round(Number(m[1]) * mult);
  if (!Number.isSafeInteger(n) || n < 1000) throw new Error(`size "${s}" must be at least 1000 edges`);
  return n;
}

function parseArgs(argv) {
  const o = { sizes: [1_000_000, 10_000_000], runs: 3, runsFixed: false, numpy: true, regen: false, seed: DEFAULT_SEED, hugePages: true };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const val = () => {
      if (i + 1 >= argv.length) throw new Error(`${a} needs a value`);
      return argv[++i];
    };
    if (a === '--quick') o.sizes = [1_000_000];
    else if (a === '--sizes') o.sizes = val().split(',').filter(Boolean).map(parseSize);
    else if (a.startsWith('--sizes=')) o.sizes = a.slice(8).split(',').filter(Boolean).map(parseSize);
    else if (a === '--runs') {
      o.runs = Number(val());
      o.runsFixed = true;
      if (!Number.isInteger(o.runs) || o.runs < 1) throw new Error('--runs needs a positive integer');
    } else if (a === '--no-numpy' || a === '--skip-numpy') o.numpy = false;
    else if (a === '--regen') o.regen = true;
    else if (a === '--no-huge-pages') o.hugePages = false;
    else if (a === '--seed') o.seed = Number(val());
    else if (a === '--cli') CLI = resolve(val());
    else if (a === '--rss') {
      o.rss = { time: 'gnu-time', proc: 'proc-vmhwm' }[val()];
      if (!o.rss) throw new Error('--rss takes time or proc');
    }
    else if (a === '--help' || a === '-h') {
      console.log(USAGE);
      process.exit(0);
    } else throw new Error(`unknown option ${a}\n${USAGE}`);
  }
  if (o.sizes.length === 0) throw new Error('--sizes is empty');
  return o;
}

// ---------------------------------------------------------------- measuring one process

function detectRssMethod() {
  if (existsSync(GNU_TIME)) {
    const dir = mkdtempSync(join(tmpdir(), 'hopscope-bench-'));
    const out = join(dir, 't');
    const r = spawnSync(GNU_TIME, ['-f', TIME_FORMAT, '-o', out, process.execPath, '-e', '0'], { encoding: 'utf8' });
    let ok = false;
    try {
      ok = r.status === 0 && TIME_LINE.test(readFileSync(out, 'utf8').trim().split('\n').pop());
    } catch { /* not GNU time */ }
    rmSync(dir, { recursive: true, force: true });
    if (ok) return 'gnu-time';
  }
  if (existsSync('/proc/self/status')) return 'proc-vmhwm';
  return 'none';
}

function readVmHwmKiB(pid) {
  try {
    const m = /^VmHWM:\s+(\d+) kB/m.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) : undefined;
  } catch {
    return undefined;
  }
}

/** The largest VmHWM of a process and its descendants: dist/cli.js may run the check in a second
 * process (huge pages, server/src/cli-launch.ts), whose peak is the one that matters (GNU time
 * reports the same: ru_maxrss of the largest waited-for descendant). */
function treeVmHwmKiB(pid) {
  let best = readVmHwmKiB(pid);
  let children = [];
  try { children = readFileSync(`/proc/${pid}/task/${pid}/children`, 'utf8').trim().split(/\s+/).filter(Boolean); } catch { /* gone */ }
  for (const c of children) {
    const k = treeVmHwmKiB(Number(c));
    if (k !== undefined) best = Math.max(best ?? 0, k);
  }
  return best;
}

let timeOutDir;

/**
 * Runs one command as a fresh process. Resolves to
 * { wallMs, peakRssMiB, rssExact, code, signal, stdout, stderr }.
 */
function measure(cmd, args, { env = process.env, rssMethod }) {
  return new Promise((resolvePromise, reject) => {
    let file = cmd;
    let argv = args;
    let timeFile;
    if (rssMethod === 'gnu-time') {
      timeOutDir ??= mkdtempSync(join(tmpdir(), 'hopscope-bench-'));
      timeFile = join(timeOutDir, 'time.txt');
      rmSync(timeFile, { force: true });
      file = GNU_TIME;
      argv = ['-f', TIME_FORMAT, '-o', timeFile, cmd, ...args];
    }
    const out = [];
    const err = [];
    const t0 = performance.now();
    const child = spawn(file, argv, { cwd: ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] });
    let hwm;
    let timer;
    if (rssMethod === 'proc-vmhwm') {
      timer = setInterval(() => {
        const k = treeVmHwmKiB(child.pid);
        if (k !== undefined) hwm = Math.max(hwm ?? 0, k);
      }, 5);
    }
    child.stdout.on('data', (b) => out.push(b));
    child.stderr.on('data', (b) => err.push(b));
    child.on('error', (e) => {
      if (timer) clearInterval(timer);
      reject(e);
    });
    child.on('close', (code, signal) => {
      const wallMs = performance.now() - t0;
      if (timer) clearInterval(timer);
      let peakRssMiB;
      let cpuMs;
      let rssExact = false;
      if (rssMethod === 'gnu-time') {
        try {
          // GNU time may put "Command exited with non-zero status N" before the format line.
          const lines = readFileSync(timeFile, 'utf8').trim().split('\n');
          const m = TIME_LINE.exec(lines[lines.length - 1]);
          if (m) {
            peakRssMiB = Number(m[2]) / 1024;
            cpuMs = (Number(m[3]) + Number(m[4])) * 1000;
            rssExact = true;
          }
        } catch { /* leave undefined */ }
      } else if (hwm !== undefined) {
        peakRssMiB = hwm / 1024;
      }
      resolvePromise({
        wallMs,
        cpuMs,
        peakRssMiB,
        rssExact,
        code,
        signal,
        stdout: Buffer.concat(out).toString('utf8'),
        stderr: Buffer.concat(err).toString('utf8'),
      });
    });
  });
}

/** Reads a file once so every timed run starts from the same warm page cache. */
function warmCache(path) {
  const fd = openSync(path, 'r');
  const buf = Buffer.allocUnsafe(16 << 20);
  try {
    while (readSync(fd, buf, 0, buf.length, null) > 0) { /* discard */ }
  } finally {
    closeSync(fd);
  }
}

// ---------------------------------------------------------------- the two tools

function parseHopscope(res) {
  const r = { ok: false, code: res.code, wallMs: res.wallMs, cpuMs: res.cpuMs, peakRssMiB: res.peakRssMiB, rssExact: res.rssExact };
  const line = res.stderr.split('\n').find((l) => l.startsWith('HOPSCOPE_TIMINGS '));
  if (line) {
    try {
      r.timings = JSON.parse(line.slice('HOPSCOPE_TIMINGS '.length));
    } catch { /* reported as missing */ }
  }
  if (res.signal || (res.code !== 0 && res.code !== 1)) {
    r.error = `exit ${res.code ?? res.signal}: ${tail(res.stderr)}`;
    return r;
  }
  try {
    const report = JSON.parse(res.stdout);
    const f = report.files?.[0];
    if (!f?.graph) {
      const probs = (f?.problems ?? []).map((p) => `${p.code}: ${p.message}`).join('; ');
      r.error = `no graph in the JSON report${probs ? ` (${probs})` : ''}`;
      return r;
    }
    r.graph = f.graph;
    r.format = f.format;
    r.problems = (f.problems ?? []).map((p) => ({ code: p.code, severity: p.severity, count: p.count }));
    r.ok = true;
  } catch (e) {
    r.error = `stdout is not a JSON report (${e.message}): ${tail(res.stdout)}`;
  }
  return r;
}

function tail(s, n = 400) {
  s = s.trim();
  return s.length > n ? '…' + s.slice(-n) : s;
}

function numpyEnv() {
  const env = { ...process.env };
  // These can slow NumPy down on this kind of machine; removed for the baseline command only.
  delete env.OPENBLAS_CORETYPE;
  delete env.OPENBLAS_L2_SIZE;
  return env;
}

function probeNumpy() {
  if (!existsSync(PYTHON)) return { available: false, reason: `${PYTHON} not found` };
  const r = spawnSync(
    PYTHON,
    ['-c', 'import json, sys, numpy, scipy, scipy.sparse.csgraph; print(json.dumps({"numpy": numpy.__version__, "scipy": scipy.__version__, "python": sys.version.split()[0]}))'],
    { env: numpyEnv(), encoding: 'utf8' },
  );
  if (r.status !== 0) {
    const last = (r.stderr || r.error?.message || '').trim().split('\n').pop();
    return { available: false, reason: `${PYTHON} cannot import numpy/scipy (${last})` };
  }
  return { available: true, versions: JSON.parse(r.stdout) };
}

function parseNumpy(res) {
  const r = { ok: false, code: res.code, wallMs: res.wallMs, cpuMs: res.cpuMs, peakRssMiB: res.peakRssMiB, rssExact: res.rssExact };
  try {
    const j = JSON.parse(res.stdout);
    if (res.code !== 0 || !j.figures) throw new Error(j.error ?? `exit ${res.code}`);
    r.figures = j.figures;
    r.timings = j.timings;
    r.ok = true;
  } catch (e) {
    r.error = `baseline failed (${e.message}): ${tail(res.stderr)}`;
  }
  return r;
}

// ---------------------------------------------------------------- statistics and printing

function median(xs) {
  const a = xs.filter((x) => typeof x === 'number' && Number.isFinite(x)).sort((p, q) => p - q);
  if (a.length === 0) return undefined;
  const h = a.length >> 1;
  return a.length % 2 ? a[h] : (a[h - 1] + a[h]) / 2;
}

const fmtMs = (x) => (x === undefined ? '—' : x >= 100 ? x.toFixed(0) : x.toFixed(1));
const fmtMiB = (x, exact = true) => (x === undefined ? '—' : `${exact ? '' : '≥'}${x.toFixed(1)}`);
const fmtMBps = (bytes, ms) => (ms === undefined || ms <= 0 ? '—' : (bytes / 1e6 / (ms / 1000)).toFixed(1));
const fmtBytes = (b) => (b >= 1e6 ? `${(b / 1e6).toFixed(1)} MB` : `${(b / 1e3).toFixed(1)} kB`);
const fmtLoad = () => loadavg().map((x) => x.toFixed(2)).join(' / ');
const fmtInt = (n) => (typeof n === 'number' ? n.toLocaleString('en-US') : String(n));

function label(E) {
  if (E % 1_000_000 === 0) return `${E / 1_000_000}m`;
  if (E % 1_000 === 0) return `${E / 1_000}k`;
  return String(E);
}

function table(rows, header) {
  const all = [header, ...rows];
  const w = header.map((_, c) => Math.max(...all.map((r) => String(r[c] ?? '').length)));
  const right = header.map((_, c) => rows.some((r) => /^[≥\d.,—x-]+$/.test(String(r[c] ?? '')) && r[c] !== ''));
  const line = (r) => r.map((cell, c) => (right[c] ? String(cell ?? '').padStart(w[c]) : String(cell ?? '').padEnd(w[c]))).join('  ').trimEnd();
  console.log(line(header));
  console.log(w.map((n) => '-'.repeat(n)).join('  '));
  for (const r of rows) console.log(line(r));
}

// ---------------------------------------------------------------- main

async function runSeries(name, count, once) {
  const results = [];
  for (let i = 0; i < count; i++) {
    const r = await once();
    results.push(r);
    process.stderr.write(`  ${name} run ${i + 1}: ${fmtMs(r.wallMs)} ms wall, ${fmtMs(r.cpuMs)} ms CPU, ${fmtMiB(r.peakRssMiB, r.rssExact)} MiB${r.ok ? '' : ` — ${r.error}`}\n`);
    if (!r.ok) break; // a failing tool fails the same way again
    if (i === 0 && !opts.runsFixed && count > 2 && r.wallMs > SLOW_RUN_MS) count = 2;
  }
  return results;
}

function summarise(results, phases, bytes) {
  const ok = results.filter((r) => r.ok);
  const phaseMs = {};
  for (const p of phases) phaseMs[p] = median(ok.map((r) => r.timings?.[p]));
  return {
    runs: results.length,
    ok: ok.length === results.length && ok.length > 0,
    error: results.find((r) => !r.ok)?.error,
    wallMs: median(ok.map((r) => r.wallMs)),
    wallRuns: ok.map((r) => r.wallMs),
    cpuMs: median(ok.map((r) => r.cpuMs)),
    peakRssMiB: median(ok.map((r) => r.peakRssMiB)),
    rssExact: ok.every((r) => r.rssExact),
    selfRssMiB: median(ok.map((r) => r.timings?.peakRssMiB)),
    hasTimings: ok.length > 0 && ok.every((r) => r.timings),
    phaseMs,
    bytes,
    last: ok[ok.length - 1],
  };
}

const opts = (() => {
  try {
    return parseArgs(process.argv.slice(2));
  } catch (e) {
    console.error(e.message);
    process.exit(2);
  }
})();

async function main() {
  let failed = false;
  const rssMethod = opts.rss ?? detectRssMethod();
  const np = opts.numpy ? probeNumpy() : { available: false, reason: 'turned off with --no-numpy' };
  const haveCli = existsSync(CLI);

  // Machine info.
  const cpuList = cpus();
  console.log('Hopscope benchmark');
  console.log(`  cpu      ${cpuList[0]?.model ?? 'unknown'} × ${cpuList.length} cores, ${(totalmem() / 2 ** 30).toFixed(1)} GiB RAM, Linux ${release()}`);
  console.log(`  node     ${process.version}`);
  console.log(`  numpy    ${np.available ? `numpy ${np.versions.numpy}, scipy ${np.versions.scipy}, python ${np.versions.python} (${PYTHON})` : `comparison skipped: ${np.reason}`}`);
  console.log(
    `  peak RSS ${
      rssMethod === 'gnu-time'
        ? `${GNU_TIME} -f '${TIME_FORMAT}' (kernel ru_maxrss and CPU time of the child)`
        : rssMethod === 'proc-vmhwm'
          ? '/proc/PID/status VmHWM polled every 5 ms (lower bound; install Debian package `time` for exact figures)'
          : 'unavailable (no /usr/bin/time, no /proc)'
    }`,
  );
  console.log(`  runs     ${opts.runs} per measurement${opts.runsFixed ? '' : ` (2 when the first run exceeds ${SLOW_RUN_MS / 1000} s)`}, median reported; MB = 10^6 bytes, MiB = 2^20 bytes`);
  console.log(`  load     ${fmtLoad()} (1/5/15 min)${loadavg()[0] > cpuList.length * 0.5 ? ' — the machine is busy: wall times will be inflated; compare CPU times' : ''}`);
  if (!haveCli) {
    console.log(`  hopscope ${CLI} not found — run \`npm run build\`; Hopscope measurements skipped`);
    failed = true;
  }
  console.log('');

  const results = { machine: { cpu: cpuList[0]?.model, cores: cpuList.length, node: process.version, numpy: np.versions, rssMethod }, loadAtStart: loadavg(), sizes: [] };
  let timingsMissingNoted = false;

  for (const E of opts.sizes) {
    const stem = join(OUT_DIR, `graph-${label(E)}`);
    const g = ensureGraph(stem, E, opts.seed, { force: opts.regen, log: (m) => process.stderr.write(m + '\n') });
    const N = g.N;
    console.log(`== ${label(E).toUpperCase()} edges: E = ${fmtInt(E)}, N = ${fmtInt(N)} (seed ${opts.seed}; ${g.reused ? 'reused' : `generated in ${(g.genMs / 1000).toFixed(1)} s`}) ==`);

    const files = [
      { kind: 'npy', path: g.npy, bytes: g.npyBytes },
      { kind: 'txt', path: g.txt, bytes: g.txtBytes },
    ];
    const sizeResult = { E, N, files: [], numpy: undefined };

    // Hopscope, each file.
    for (const f of files) {
      if (!haveCli) break;
      warmCache(f.path);
      const args = [CLI, 'check', f.path, '--json', '--directed', '--num-nodes', String(N), '--index-base', '0'];
      const env = { ...process.env, HOPSCOPE_TIMINGS: '1', ...(opts.hugePages ? {} : { HOPSCOPE_HUGE_PAGES: '0' }) };
      const runs = await runSeries(`hopscope ${basename(f.path)}`, opts.runs, async () =>
        parseHopscope(await measure(process.execPath, args, { env, rssMethod })),
      );
      const s = summarise(runs, HOPSCOPE_PHASES, f.bytes);
      if (!s.ok) failed = true;
      sizeResult.files.push({ ...f, hopscope: s });
    }

    // NumPy/SciPy on the .npy.
    if (np.available) {
      warmCache(g.npy);
      const args = [BASELINE, g.npy, '--num-nodes', String(N)];
      const runs = await runSeries(`numpy ${basename(g.npy)}`, opts.runs, async () =>
        parseNumpy(await measure(PYTHON, args, { env: numpyEnv(), rssMethod })),
      );
      sizeResult.numpy = summarise(runs, NUMPY_PHASES, g.npyBytes);
      if (!sizeResult.numpy.ok) console.log(`  NumPy/SciPy baseline failed: ${sizeResult.numpy.error}`);
    }

    // Timing table.
    const rows = [];
    for (const f of sizeResult.files) {
      const s = f.hopscope;
      const name = `${basename(f.path)} (${fmtBytes(f.bytes)})`;
      if (!s.ok) {
        rows.push([name, 'hopscope', 'FAILED', '', '', '', '', s.error ?? '']);
        continue;
      }
      if (s.hasTimings) {
        for (const p of HOPSCOPE_PHASES) {
          rows.push([p === HOPSCOPE_PHASES[0] ? name : '', 'hopscope', p === 'total' ? 'total (in-process)' : p, fmtMs(s.phaseMs[p]), fmtMBps(f.bytes, s.phaseMs[p]), '', p === 'total' ? fmtMiB(s.selfRssMiB) : '', '']);
        }
      } else if (!timingsMissingNoted) {
        timingsMissingNoted = true;
        console.log('  note: the CLI printed no HOPSCOPE_TIMINGS line; wall time and peak RSS only');
      }
      rows.push([s.hasTimings ? '' : name, 'hopscope', 'process (wall)', fmtMs(s.wallMs), fmtMBps(f.bytes, s.wallMs), fmtMs(s.cpuMs), fmtMiB(s.peakRssMiB, s.rssExact), s.wallRuns.map(fmtMs).join(', ')]);
    }
    if (sizeResult.numpy?.ok) {
      const s = sizeResult.numpy;
      const name = `${basename(g.npy)} (${fmtBytes(g.npyBytes)})`;
      NUMPY_PHASES.forEach((p, i) => {
        rows.push([i === 0 ? name : '', 'numpy/scipy', p === 'total' ? 'total (in-process)' : p, fmtMs(s.phaseMs[p]), fmtMBps(g.npyBytes, s.phaseMs[p]), '', p === 'total' ? fmtMiB(s.selfRssMiB) : '', '']);
      });
      rows.push(['', 'numpy/scipy', 'process (wall)', fmtMs(s.wallMs), fmtMBps(g.npyBytes, s.wallMs), fmtMs(s.cpuMs), fmtMiB(s.peakRssMiB, s.rssExact), s.wallRuns.map(fmtMs).join(', ')]);
    }
    if (rows.length) table(rows, ['file', 'tool', 'phase', 'median ms', 'MB/s', 'CPU ms', 'peak RSS MiB', 'runs (wall ms)']);
    console.log('');

    // Ratios (fresh process against fresh process, same .npy).
    const hsNpy = sizeResult.files.find((f) => f.kind === 'npy')?.hopscope;
    if (hsNpy?.ok && sizeResult.numpy?.ok) {
      const tr = hsNpy.wallMs / sizeResult.numpy.wallMs;
      const rr = hsNpy.peakRssMiB !== undefined && sizeResult.numpy.peakRssMiB !== undefined ? hsNpy.peakRssMiB / sizeResult.numpy.peakRssMiB : undefined;
      const cr = hsNpy.cpuMs !== undefined && sizeResult.numpy.cpuMs ? hsNpy.cpuMs / sizeResult.numpy.cpuMs : undefined;
      sizeResult.ratios = { time: tr, cpu: cr, rss: rr };
      console.log(`  hopscope / numpy-scipy on ${basename(g.npy)}: wall time ${tr.toFixed(2)}× (${fmtMs(hsNpy.wallMs)} / ${fmtMs(sizeResult.numpy.wallMs)} ms), CPU time ${cr === undefined ? '—' : `${cr.toFixed(2)}× (${fmtMs(hsNpy.cpuMs)} / ${fmtMs(sizeResult.numpy.cpuMs)} ms)`}, peak RSS ${rr === undefined ? '—' : rr.toFixed(2) + '×'} (${fmtMiB(hsNpy.peakRssMiB, hsNpy.rssExact)} / ${fmtMiB(sizeResult.numpy.peakRssMiB, sizeResult.numpy.rssExact)} MiB)`);
    }

    // Cross-check of the figures.
    if (sizeResult.numpy?.ok) {
      const ref = sizeResult.numpy.figures ?? sizeResult.numpy.last.figures;
      const rowsF = [];
      for (const f of sizeResult.files) {
        if (!f.hopscope.ok) continue;
        const gr = f.hopscope.last.graph;
        for (const k of FIGURES) {
          const match = gr[k] === ref[k];
          if (!match) failed = true;
          rowsF.push([basename(f.path), k, fmtInt(gr[k]), fmtInt(ref[k]), match ? 'MATCH' : 'MISMATCH']);
        }
        if (gr.nodes !== N) rowsF.push([basename(f.path), 'nodes (informative)', fmtInt(gr.nodes), fmtInt(N), gr.nodes === N ? 'MATCH' : 'differs']);
      }
      if (rowsF.length) {
        console.log('');
        table(rowsF, ['file', 'figure', 'hopscope', 'numpy/scipy', 'check']);
      }
    } else if (sizeResult.files.some((f) => f.hopscope.ok)) {
      const gr = sizeResult.files.find((f) => f.hopscope.ok).hopscope.last.graph;
      console.log(`  figures (not cross-checked): ${FIGURES.map((k) => `${k}=${fmtInt(gr[k])}`).join(', ')}`);
    }
    console.log('');
    sizeResult.numpy &&= { ...sizeResult.numpy, figures: sizeResult.numpy.last?.figures, last: undefined };
    for (const f of sizeResult.files) f.hopscope = { ...f.hopscope, graph: f.hopscope.last?.graph, problems: f.hopscope.last?.problems, last: undefined };
    results.sizes.push(sizeResult);
  }

  // Targets.
  console.log('Targets (informative)');
  const big = results.sizes.find((s) => s.E === 10_000_000);
  const mark = (ok) => (ok === undefined ? 'n/a ' : ok ? 'PASS' : 'MISS');
  const bigHs = big?.files.find((f) => f.kind === 'npy')?.hopscope;
  if (!big) {
    console.log('  n/a   10M .npy targets: the 10M graph was not part of this run');
  } else {
    const ratio = big.ratios?.time;
    console.log(`  ${mark(ratio === undefined ? undefined : ratio <= TARGET_TIME_RATIO)}  10M .npy: hopscope check wall ≤ ${TARGET_TIME_RATIO} × numpy/scipy wall — ${ratio === undefined ? 'not measured' : `${ratio.toFixed(2)}×`}`);
    const rss = bigHs?.ok ? bigHs.peakRssMiB : undefined;
    console.log(`  ${mark(rss === undefined ? undefined : rss <= TARGET_RSS_MIB)}  10M .npy: hopscope peak RSS ≤ ${TARGET_RSS_MIB} MiB — ${rss === undefined ? 'not measured' : `${fmtMiB(rss, bigHs.rssExact)} MiB`}`);
  }
  for (const s of results.sizes) {
    const t = s.files.find((f) => f.kind === 'txt');
    if (!t) continue;
    const ms = t.hopscope.ok ? t.hopscope.phaseMs.read : undefined;
    const mbps = ms ? t.bytes / 1e6 / (ms / 1000) : undefined;
    console.log(`  ${mark(mbps === undefined ? undefined : mbps >= targetTextReadMbps(s.E))}  ${label(s.E).toUpperCase()} .txt: read phase ≥ ${targetTextReadMbps(s.E)} MB/s — ${mbps === undefined ? 'not measured (no HOPSCOPE_TIMINGS read figure)' : `${mbps.toFixed(1)} MB/s`}`);
  }

  console.log(`\nload average at the end: ${fmtLoad()} (1/5/15 min)`);
  results.loadAtEnd = loadavg();
  writeFileSync(join(OUT_DIR, 'results.json'), JSON.stringify(results, null, 2) + '\n');
  console.log(`\nraw figures: ${join('bench', 'out', 'results.json')}`);
  if (timeOutDir) rmSync(timeOutDir, { recursive: true, force: true });
  if (failed) console.log('bench: FAILED (see above: a Hopscope run failed, the CLI is missing, or a figure did not match)');
  process.exitCode = failed ? 1 : 0;
}

main().catch((e) => {
  console.error(e);
  process.exitCode = 1;
});
