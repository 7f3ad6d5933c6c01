/**
 * Builds the forward and reverse CSR of large graphs on two threads: this thread sorts the forward
 * direction while a helper thread sorts the reverse one (and then counts weakly connected
 * components on it), over shared memory. Same results as the core's `sequentialPair`; the core
 * stays single-threaded and pure, this module only plugs a faster builder into it.
 *
 * The calling thread blocks in `Atomics.wait` (allowed in Node's main thread and in workers), so
 * the core's synchronous API is kept. Any failure — the helper script missing, the helper not
 * answering, an exception in it — falls back to building on this thread.
 */
import { sequentialPair, setPairBuilder, sortedCsr, type Csr, type PairBuild, type PairBuilder } from '../core/graph/structure/csr';
import { countComponentsCsr } from '../core/graph/structure/figures';
import { dropHelper, getHelper, setHelperScript, sharedInt32, signal, waitWhile } from './helper-thread';

/** Below this many edge entries the second thread is not worth its start-up (~30 ms). */
export const PARALLEL_MIN_EDGES = 1 << 20;

/** Control words shared with the helper: [0] state, [1] components. */
const STATE = 0, COMPONENTS = 1;
/** Helper states: waiting, reverse graph ready, components ready, failed. */
const WAITING = 0, REVERSE_READY = 1, COMPONENTS_READY = 2, FAILED = -1;

export interface PairJob {
  kind: 'pair';
  n: number;
  src: Int32Array;
  dst: Int32Array;
  revIndptr: Int32Array;
  revIndices: Int32Array;
  control: Int32Array;
  components: boolean;
}

/** An Int32Array over shared memory with the contents of `a` (`a` itself when already shared). */
function shared(a: Int32Array): Int32Array {
  if (a.buffer instanceof SharedArrayBuffer) return a;
  const s = new Int32Array(new SharedArrayBuffer(a.byteLength));
  s.set(a);
  return s;
}

/** Generous bound on the helper's time: its work is a few passes over the edges. */
function patienceMs(e: number): number {
  return 20_000 + e / 100;
}

export const parallelPair: PairBuilder = (n, src, dst, opts) => {
  const e = src.length;
  const w = e >= PARALLEL_MIN_EDGES ? getHelper() : null;
  if (!w) return sequentialPair(n, src, dst, opts);
  const control = sharedInt32(2);
  const job: PairJob = {
    kind: 'pair', n, src: shared(src), dst: shared(dst), revIndptr: sharedInt32(n + 1), revIndices: sharedInt32(e),
    control, components: opts?.components === true,
  };
  w.postMessage(job);
  const fwd = sortedCsr(n, src, dst);
  if (!waitWhile(control, STATE, WAITING, patienceMs(e))) {
    dropHelper(w);
    return sequentialPair(n, src, dst, opts);
  }
  if (Atomics.load(control, STATE) === FAILED) return sequentialPair(n, src, dst, opts);
  const rev: Csr = { n, indptr: job.revIndptr, indices: job.revIndices };
  const result: PairBuild = { fwd, rev };
  if (job.components) {
    result.components = () => {
      if (waitWhile(control, STATE, REVERSE_READY, patienceMs(e)) && Atomics.load(control, STATE) === COMPONENTS_READY) {
        return Atomics.load(control, COMPONENTS);
      }
      return countComponentsCsr(fwd);
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

/** The helper thread's side: sorts the reverse direction, then counts components on it. */
export function runPairJob(job: PairJob): void {
  const { control } = job;
  try {
    const rev = sortedCsr(job.n, job.dst, job.src, { indptr: job.revIndptr, indices: job.revIndices });
    signal(control, STATE, REVERSE_READY);
    if (job.components) {
      Atomics.store(control, COMPONENTS, countComponentsCsr(rev));
      signal(control, STATE, COMPONENTS_READY);
    }
  } catch {
    signal(control, STATE, FAILED);
  }
}
