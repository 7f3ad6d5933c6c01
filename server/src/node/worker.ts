/**
 * Worker-thread entry (dist/worker.js): hosts the graph store so reading and checking never block
 * the language server's message loop. Requests and replies are worker-methods.ts's wire messages;
 * the methods themselves are the store's (typed by the same table).
 *
 * A cancellable request reads its cancel flag (a slot of the SharedArrayBuffer the client sent at
 * start-up) through a `Cancel`; the analysis throws `AnalysisCancelled`, the request is answered
 * "cancelled", and the next message is taken as usual.
 */
import { parentPort } from 'node:worker_threads';
import { AnalysisCancelled, type Cancel } from '../core/cancel';
import { GraphStore } from './graph-store';
import { useParallelPairBuilder } from './pair-build';
import { WORKER_METHODS, type MethodHandlers, type WorkerInit, type WorkerReply, type WorkerRequest } from './worker-methods';

const NEVER: Cancel = { isCancellationRequested: false };

/** Runs one request against the handlers; `flags` holds the cancel slots. */
export function dispatch(handlers: MethodHandlers, msg: WorkerRequest, flags: Int32Array | undefined): WorkerReply {
  const spec = Object.prototype.hasOwnProperty.call(WORKER_METHODS, msg.method) ? WORKER_METHODS[msg.method] : undefined;
  if (!spec) return { id: msg.id, outcome: 'error', error: `unknown graph worker method ${String(msg.method)}` };
  let cancel = NEVER;
  if (spec.cancellable && flags && msg.slot >= 0 && msg.slot < flags.length) {
    const slot = msg.slot;
    cancel = { get isCancellationRequested() { return Atomics.load(flags, slot) !== 0; } };
    // Cancelled between being sent and being taken: never started.
    if (cancel.isCancellationRequested) return { id: msg.id, outcome: 'cancelled' };
  }
  try {
    const fn = handlers[msg.method] as (p: unknown, c: Cancel) => unknown;
    const result = fn.call(handlers, msg.params, cancel);
    return { id: msg.id, outcome: 'ok', result };
  } catch (e) {
    if (e instanceof AnalysisCancelled) return { id: msg.id, outcome: 'cancelled' };
    return { id: msg.id, outcome: 'error', error: (e as Error)?.stack ?? String(e) };
  }
}

if (parentPort) {
  const port = parentPort;
  useParallelPairBuilder();
  const store = new GraphStore();
  let flags: Int32Array | undefined;
  port.on('message', (msg: WorkerInit | WorkerRequest) => {
    if (msg.kind === 'init') {
      flags = new Int32Array(msg.flags);
      return;
    }
    port.postMessage(dispatch(store, msg, flags));
  });
}
