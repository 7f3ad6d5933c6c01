/**
 * Builds the forward and reverse CSR of large graphs on two threads over shared memory: each step
 * of the core's PairPlan is cut into two node ranges, this thread and the helper each take one
 * (whichever is free takes the next); then the helper takes the last 45 % of the rows' figures
 * (figures.ts `rowFigures`) and counts weakly connected components while this thread does the
 * rest of the rows and the other figures. Same results as the core's `sequentialPair`; the core
 * stays single-threaded and pure, this module only plugs a faster builder into it.
 *
 * The calling thread blocks in `Atomics.wait` (allowed in Node's main thread and in workers), so
 * the core's synchronous API is kept. Any failure — the helper script missing, the helper not
 * answering, an exception in it — falls back to building on this thread.
 */
import {
  PAIR_STEPS, pairOf, pairPlan, pairStepParts, runPairStep, sequentialPair, setPairBuilder, type PairBuild, type PairBuilder, type PairPlan,
} from '../core/graph/structure/csr';
import { countComponentsPair, rowFigures } from '../core/graph/structure/figures';
import type { RowFigures } from '../core/graph/structure/csr';
import { dropHelper, getHelper, setHelperScript, sharedInt32 } from './helper-thread';

/** Below this many edge entries the second thread is not worth its start-up (~30 ms). */
export const PARALLEL_MIN_EDGES = 1 << 20;

/** Parts per step: one per thread. */
const PARTS = 2;
/**
 * Control words shared with the helper: per step a claim counter and a done counter, then the
 * components' claim, done flag and count, then a failure flag, then the row figures' claim, done
 * flag and five counts. A thread takes a part by incrementing its claim counter, so whichever
 * thread is free takes the next part: when the helper is late (starting, or busy with an earlier
 * job) this thread does every part itself.
 */
const CLAIM = 0, DONE = PAIR_STEPS, COMP_CLAIM = 2 * PAIR_STEPS, COMP_DONE = COMP_CLAIM + 1, COMPONENTS = COMP_CLAIM + 2,
  FAILED = COMP_CLAIM + 3, ROWS_CLAIM = COMP_CLAIM + 4, ROWS_DONE = ROWS_CLAIM + 1, ROWS = ROWS_CLAIM + 2,
  CONTROL_WORDS = ROWS + 5;
/** Share of the entries whose rows' figures the helper takes (it also counts the components). */
const HELPER_ROW_SHARE = 0.45;
/** Added to a done counter when the helper fails, so a waiter wakes at once. */
const FAIL_BUMP = 1 << 20;

export interface PairJob {
  kind: 'pair';
  plan: PairPlan;
  control: Int32Array;
  components: boolean;
  rowFigures: boolean;
  patienceMs: number;
}

/** The first node of the helper's rows: the forward rows from it on hold about HELPER_ROW_SHARE of the entries. */
function rowSplit(plan: PairPlan): number {
  const { n, fwdIndptr } = plan;
  const want = Math.floor(fwdIndptr[n]! * (1 - HELPER_ROW_SHARE));
  let lo = 0, hi = n;
  while (lo < hi) { const mid = (lo + hi) >>> 1; if (fwdIndptr[mid]! < want) lo = mid + 1; else hi = mid; }
  return lo;
}

/** The row figures in the order of their control words. */
const ROW_KEYS = ['selfLoops', 'duplicates', 'distinctNonLoop', 'asymmetric', 'isolated'] as const;

function storeRows(control: Int32Array, r: RowFigures): void {
  ROW_KEYS.forEach((k, i) => Atomics.store(control, ROWS + i, r[k]));
}

function loadRows(control: Int32Array): RowFigures {
  const r = {} as RowFigures;
  ROW_KEYS.forEach((k, i) => { r[k] = Atomics.load(control, ROWS + i); });
  return r;
}

function addRows(a: RowFigures, b: RowFigures): RowFigures {
  const r = {} as RowFigures;
  for (const k of ROW_KEYS) r[k] = a[k] + b[k];
  return r;
}

function isShared(a: Int32Array): boolean {
  return a.buffer instanceof SharedArrayBuffer;
}

/** Generous bound on the other thread's time: its work is a few passes over the edges. */
function patienceMs(e: number): number {
  return 20_000 + e / 100;
}

/** Waits until control[at] ≥ target; false on timeout or when the helper failed. */
function waitAtLeast(control: Int32Array, at: number, target: number, deadline: number): boolean {
  for (;;) {
    const v = Atomics.load(control, at);
    if (Atomics.load(control, FAILED) !== 0) return false;
    if (v >= target) return true;
    const left = deadline - Date.now();
    if (left <= 0) return false;
    Atomics.wait(control, at, v, left);
  }
}

/** Both threads run this: every step, taking parts while any is left, then waiting for the step's other parts. */
function runSteps(job: PairJob): boolean {
  const { plan, control } = job;
  const deadline = Date.now() + job.patienceMs;
  for (let s = 0; s < PAIR_STEPS; s++) {
    const parts = pairStepParts(plan, s);
    for (let p = Atomics.add(control, CLAIM + s, 1); p < parts; p = Atomics.add(control, CLAIM + s, 1)) {
      runPairStep(plan, s, p);
      Atomics.add(control, DONE + s, 1);
      Atomics.notify(control, DONE + s);
    }
    if (!waitAtLeast(control, DONE + s, parts, deadline)) return false;
  }
  return true;
}

export const parallelPair: PairBuilder = (n, src, dst, opts) => {
  const e = src.length;
  // Edge lists not already in shared memory (text reads) are built here: copying them for the
  // helper costs more than the helper saves (bench/README.md).
  const w = e >= PARALLEL_MIN_EDGES && isShared(src) && isShared(dst) ? getHelper() : null;
  if (!w) return sequentialPair(n, src, dst, opts);
  const control = sharedInt32(CONTROL_WORDS);
  const job: PairJob = {
    kind: 'pair', plan: pairPlan(n, src, dst, PARTS, sharedInt32), control,
    components: opts?.components === true, rowFigures: opts?.rowFigures === true, patienceMs: patienceMs(e),
  };
  w.postMessage(job);
  if (!runSteps(job)) {
    if (Atomics.load(control, FAILED) === 0) dropHelper(w);
    Atomics.store(control, FAILED, 1);
    return sequentialPair(n, src, dst, opts);
  }
  const result: PairBuild = pairOf(job.plan);
  if (job.rowFigures) {
    const { fwd, rev } = result;
    result.rowFigures = () => {
      const split = rowSplit(job.plan);
      const mine = rowFigures(fwd, rev, 0, split);
      // The helper's rows, counted here when it has not taken them; else its counts, once ready.
      if (Atomics.add(control, ROWS_CLAIM, 1) === 0) return addRows(mine, rowFigures(fwd, rev, split, fwd.n));
      if (waitAtLeast(control, ROWS_DONE, 1, Date.now() + job.patienceMs)) return addRows(mine, loadRows(control));
      return addRows(mine, rowFigures(fwd, rev, split, fwd.n));
    };
  }
  if (job.components) {
    const { fwd, rev } = result;
    result.components = () => {
      // Counted here when the helper has not taken it; else its count, once ready.
      if (Atomics.add(control, COMP_CLAIM, 1) === 0) return countComponentsPair(fwd, rev);
      if (waitAtLeast(control, COMP_DONE, 1, Date.now() + job.patienceMs)) return Atomics.load(control, COMPONENTS);
      return countComponentsPair(fwd, rev);
    };
  }
  return result;
};

/**
 * Plugs the two-thread builder into the core (idempotent). `script` overrides where the helper's
 * bundle is (tests run from source, where it is not beside this file).
 */
export function useParallelPairBuilder(script?: string): void {
  if (script !== undefined) setHelperScript(script);
  setPairBuilder(parallelPair);
}

/** The helper thread's side: the parts of each step it can take, then its share of the row figures and the components, each when not taken yet. */
export function runPairJob(job: PairJob): void {
  const { control } = job;
  try {
    if (!runSteps(job)) return;
    const { fwd, rev } = pairOf(job.plan);
    if (job.rowFigures && Atomics.add(control, ROWS_CLAIM, 1) === 0) {
      storeRows(control, rowFigures(fwd, rev, rowSplit(job.plan), fwd.n));
      Atomics.store(control, ROWS_DONE, 1);
      Atomics.notify(control, ROWS_DONE);
    }
    if (job.components && Atomics.add(control, COMP_CLAIM, 1) === 0) {
      Atomics.store(control, COMPONENTS, countComponentsPair(fwd, rev));
      Atomics.store(control, COMP_DONE, 1);
      Atomics.notify(control, COMP_DONE);
    }
  } catch {
    Atomics.store(control, FAILED, 1);
    for (let s = 0; s < PAIR_STEPS; s++) { Atomics.add(control, DONE + s, FAIL_BUMP); Atomics.notify(control, DONE + s); }
    Atomics.add(control, COMP_DONE, FAIL_BUMP);
    Atomics.notify(control, COMP_DONE);
    Atomics.add(control, ROWS_DONE, FAIL_BUMP);
    Atomics.notify(control, ROWS_DONE);
  }
}
