/**
 * Whether the command line should run its command in a second process started with huge pages
 * (common/huge-pages.ts says what they are and why): only on Linux with glibc and transparent huge
 * pages in `madvise` mode, and only when the files named on the command line are large enough that
 * the first-write faults saved outweigh a second process start. `HOPSCOPE_HUGE_PAGES=1` asks for it
 * whatever the size. This file imports only node built-ins, common/huge-pages.ts and the list of
 * skipped folders: the launcher loads it before the command line's bundle.
 */
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { hugePagesSwitch, tunablesWithHugePages, HUGE_PAGES_SWITCH, type Env } from '../../../common/huge-pages';
import { walkedDir } from './skipped-dirs';

/** What the decision to start again looks at; every field is measured by `measureMachine`. */
export interface RelaunchInputs {
  platform: string;
  env: Env;
  /** The bracketed word of /sys/kernel/mm/transparent_hugepage/enabled, or null when unreadable. */
  thpMode: string | null;
  /** Whether this process runs on glibc (the tunable means nothing to other C libraries). */
  glibc: boolean;
  /** Bytes of the files named on the command line (folders walked, up to a cap). */
  inputBytes: number;
  /** Milliseconds the first writes to one fresh MiB took in this process. */
  faultMsPerMiB: number;
  /** Milliseconds this process took to start (what a second start costs again). */
  startMs: number;
  /** Node options this process was started with (passed on to a second process). */
  execArgv: readonly string[];
}

export interface RelaunchDecision { relaunch: boolean; why: string }

/**
 * How much fresh memory a check writes per input byte, roughly: an int64 `.npy` edge index becomes
 * int32 ids (half its bytes) plus the CSR pair (as much again), about 1; a text list keeps its bytes
 * plus the ids and the CSR pair, about 2. 1.5 is between the two: an estimate, not a measurement
 * of each file (what huge pages saved on the bench graphs: 2.8 ms per input MiB on the 10M `.npy`,
 * 4.6 on the 10M-line list, 6.6 on the 1M-line one, at 3.4 ms per fresh MiB).
 */
export const FRESH_BYTES_PER_INPUT_BYTE = 1.5;
/** Share of the fault cost huge pages remove (measured on the bench's 80 MB buffers: 277 → 87 ms). */
export const FAULT_SHARE_SAVED = 0.7;
/** Start again only when the saving is this many times the cost of the second start. */
export const SAFETY_FACTOR = 1.5;
/** A pessimistic cost of first writes, ms per MiB (the bench's virtual machine: 3.4): when even
 * this would not pay for a second start, the probe is not run and nothing is started. */
export const MAX_FAULT_MS_PER_MIB = 8;

/** Milliseconds the huge pages would save on these inputs at this fault cost (an estimate). */
export function expectedSavingMs(inputBytes: number, faultMsPerMiB: number): number {
  return (inputBytes / 2 ** 20) * FRESH_BYTES_PER_INPUT_BYTE * faultMsPerMiB * FAULT_SHARE_SAVED;
}

/** Whether to start this command line again with huge pages, and why (for `HOPSCOPE_HUGE_PAGES_DEBUG`). */
export function decideRelaunch(i: RelaunchInputs): RelaunchDecision {
  if (i.platform !== 'linux') return { relaunch: false, why: 'not Linux' };
  const sw = hugePagesSwitch(i.env);
  if (sw === 'off') return { relaunch: false, why: `${HUGE_PAGES_SWITCH} is off` };
  if (tunablesWithHugePages(i.env.GLIBC_TUNABLES) === undefined) return { relaunch: false, why: 'GLIBC_TUNABLES already sets hugetlb' };
  if (!i.glibc) return { relaunch: false, why: 'not glibc' };
  if (i.thpMode !== 'madvise') return { relaunch: false, why: `transparent huge pages: ${i.thpMode ?? 'unknown'}` };
  // A debugger or profiler attached to this process should see the command run in it.
  const watched = i.execArgv.find((a) => /^--(inspect|debug|cpu-prof|heap-prof|prof)\b/.test(a));
  if (watched) return { relaunch: false, why: `started with ${watched}` };
  if (sw === 'on') return { relaunch: true, why: `${HUGE_PAGES_SWITCH} is on` };
  const savedMs = expectedSavingMs(i.inputBytes, i.faultMsPerMiB);
  const relaunch = savedMs > SAFETY_FACTOR * i.startMs;
  return { relaunch, why: `expected saving ${savedMs.toFixed(0)} ms against a ${i.startMs.toFixed(0)} ms start` };
}

/** The mode the kernel gives transparent huge pages (`always`, `madvise`, `never`), or null. */
export function readThpMode(path = '/sys/kernel/mm/transparent_hugepage/enabled'): string | null {
  try {
    const m = /\[(\w+)\]/.exec(readFileSync(path, 'latin1'));
    return m ? m[1] : null;
  } catch { return null; }
}

/** Whether this process's C library is glibc: its mappings name libc.so.6 (musl's is ld-musl-*). */
export function runsOnGlibc(): boolean {
  try {
    const maps = readFileSync('/proc/self/maps', 'latin1');
    return /\/libc(\.so\.6|-2\.\d+\.so)\b/.test(maps);
  } catch { return false; }
}

/** Milliseconds to write one fresh MiB: times the first writes to a fresh 2 MiB allocation
 * (above malloc's mapping threshold, so its pages are new to the process). */
export function probeFaultMsPerMiB(): number {
  const buf = Buffer.allocUnsafeSlow(2 * 2 ** 20);
  const t0 = process.hrtime.bigint();
  for (let i = 0; i < buf.length; i += 4096) buf[i] = 1;
  const ms = Number(process.hrtime.bigint() - t0) / 1e6;
  return ms / 2;
}

/** Bytes of the existing files among `words` (folders walked depth-first, at most `maxEntries`
 * entries, hidden and tool folders skipped; stops once `enough` bytes are found). Words that are
 * not paths (options, numbers) count nothing. */
export function inputBytes(words: readonly string[], enough = Infinity, maxEntries = 5000): number {
  let total = 0;
  let entries = 0;
  const visit = (path: string): void => {
    if (total >= enough || entries >= maxEntries) return;
    entries++;
    let st;
    try { st = statSync(path, { throwIfNoEntry: false }); } catch { return; }
    if (!st) return;
    if (st.isFile()) { total += st.size; return; }
    if (!st.isDirectory()) return;
    let names: string[];
    try { names = readdirSync(path); } catch { return; }
    for (const name of names) {
      if (!walkedDir(name)) continue;
      visit(join(path, name));
      if (total >= enough || entries >= maxEntries) return;
    }
  };
  for (const w of words) if (!w.startsWith('-')) visit(w);
  return total;
}

/** Everything `decideRelaunch` needs, measured in this process (the probe runs only when the
 * inputs are large enough for it to matter). */
export function measureMachine(words: readonly string[], env: Env = process.env): RelaunchInputs {
  const platform = process.platform;
  const startMs = process.uptime() * 1000;
  const base: RelaunchInputs = { platform, env, thpMode: null, glibc: false, inputBytes: 0, faultMsPerMiB: 0, startMs, execArgv: process.execArgv };
  if (platform !== 'linux' || hugePagesSwitch(env) === 'off' || tunablesWithHugePages(env.GLIBC_TUNABLES) === undefined) return base;
  base.thpMode = readThpMode();
  if (base.thpMode !== 'madvise') return base;
  base.glibc = runsOnGlibc();
  if (!base.glibc) return base;
  if (hugePagesSwitch(env) === 'on') return base;
  base.inputBytes = inputBytes(words, 4 * 2 ** 30);
  if (expectedSavingMs(base.inputBytes, MAX_FAULT_MS_PER_MIB) > SAFETY_FACTOR * startMs) base.faultMsPerMiB = probeFaultMsPerMiB();
  return base;
}
