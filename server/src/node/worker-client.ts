/**
 * Talks to the graph store in a worker thread (worker.ts), one request at a time: calls wait in
 * a queue here, so a cancelled call that has not started is dropped without running, and 'high'
 * priority calls (hovers, the panel) go before queued workspace checks. A long check still
 * delays later calls, but never the caller's event loop.
 *
 * Cancellation (worker-methods.ts): each request sent gets a slot of a SharedArrayBuffer of cancel
 * flags; cancelling sets the slot, the worker's analysis sees it between chunks and answers
 * "cancelled". A cancelled or superseded call rejects with `WorkerCancelled` once the worker has
 * stopped it (or at once while it was queued).
 *
 * If the worker dies, the request it was running fails with a clear error; the worker is started
 * again (with the last settings) for the calls still queued.
 */
import { Worker } from 'node:worker_threads';
import {
  CANCEL_SLOTS, WORKER_METHODS, WorkerCancelled,
  type CallOptions, type ConfigureParams, type MethodName, type ParamsOf, type ResultOf, type WorkerApi,
  type WorkerInit, type WorkerReply, type WorkerRequest,
} from './worker-methods';

interface Call {
  id: number;
  method: MethodName;
  params: unknown;
  cancellable: boolean;
  priority: 'high' | 'normal';
  supersedeKey: string | undefined;
  /** Cancel slot while sent, -1 otherwise. */
  slot: number;
  state: 'queued' | 'sent' | 'settled';
  /** Why it was cancelled, once it was. */
  cancelled: 'token' | 'superseded' | undefined;
  stopListening: () => void;
  resolve: (v: unknown) => void;
  reject: (e: Error) => void;
}

export class WorkerService {
  private worker: Worker | undefined;
  private nextId = 1;
  private readonly flags = new Int32Array(new SharedArrayBuffer(4 * CANCEL_SLOTS));
  private readonly freeSlots: number[] = Array.from({ length: CANCEL_SLOTS }, (_, i) => i);
  private readonly queue: Call[] = [];
  private readonly sent = new Map<number, Call>();
  private readonly latest = new Map<string, Call>();
  private lastConfig: ConfigureParams | undefined;
  private disposed = false;

  constructor(private readonly script: string, private readonly log: (s: string) => void = () => {}) {}

  /** One async function per method of the table: `api.check({ paths }, { token })`. */
  readonly api: WorkerApi = Object.fromEntries(
    (Object.keys(WORKER_METHODS) as MethodName[]).map((m) => [m, (params: unknown, options?: CallOptions) => this.call(m, params as never, options)]),
  ) as WorkerApi;

  /** Calls queued or running (for a busy indicator). */
  get pending(): number {
    return this.queue.length + this.sent.size;
  }

  call<M extends MethodName>(method: M, params: ParamsOf<M>, options: CallOptions = {}): Promise<ResultOf<M>> {
    if (this.disposed) return Promise.reject(new Error('the graph worker was shut down'));
    if (method === 'configure') this.lastConfig = params as ConfigureParams;
    const cancellable = WORKER_METHODS[method].cancellable;
    const token = cancellable ? options.token : undefined;
    const key = cancellable ? options.supersedeKey : undefined;
    return new Promise<ResultOf<M>>((resolve, reject) => {
      const call: Call = {
        id: this.nextId++, method, params, cancellable, priority: options.priority ?? 'normal', supersedeKey: key,
        slot: -1, state: 'queued', cancelled: undefined, stopListening: () => {},
        resolve: resolve as (v: unknown) => void, reject,
      };
      if (key !== undefined) {
        const older = this.latest.get(key);
        if (older) this.cancel(older, 'superseded');
        this.latest.set(key, call);
      }
      if (token?.isCancellationRequested) {
        call.cancelled = 'token';
        this.settle(call, undefined, new WorkerCancelled(method));
        return;
      }
      const sub = token?.onCancellationRequested?.(() => this.cancel(call, 'token'));
      if (sub && typeof (sub as { dispose?: unknown }).dispose === 'function') call.stopListening = () => (sub as { dispose(): void }).dispose();
      this.enqueue(call);
      this.pump();
    });
  }

  async dispose(): Promise<void> {
    this.disposed = true;
    for (const c of this.queue.splice(0)) this.settle(c, undefined, new Error('the graph worker was shut down'));
    for (const c of [...this.sent.values()]) this.settle(c, undefined, new Error('the graph worker was shut down'));
    const w = this.worker;
    this.worker = undefined;
    await w?.terminate();
  }

  // ---- queue ------------------------------------------------------------------------------------

  private enqueue(call: Call): void {
    if (call.priority === 'high') {
      const at = this.queue.findIndex((c) => c.priority !== 'high');
      this.queue.splice(at < 0 ? this.queue.length : at, 0, call);
    } else {
      this.queue.push(call);
    }
  }

  /** Sends the next queued call when the worker is idle. */
  private pump(): void {
    if (this.disposed || this.sent.size > 0) return;
    const call = this.queue.shift();
    if (!call) return;
    const w = this.worker ?? this.start();
    call.state = 'sent';
    if (call.cancellable) {
      call.slot = this.freeSlots.pop() ?? -1;
      if (call.slot >= 0) Atomics.store(this.flags, call.slot, 0);
    }
    this.sent.set(call.id, call);
    const msg: WorkerRequest = { kind: 'call', id: call.id, method: call.method, params: call.params, slot: call.slot };
    w.postMessage(msg);
  }

  private cancel(call: Call, why: 'token' | 'superseded'): void {
    if (call.state === 'settled' || call.cancelled) return;
    call.cancelled = why;
    if (call.state === 'queued') {
      // Never started: dropped without running.
      const i = this.queue.indexOf(call);
      if (i >= 0) this.queue.splice(i, 1);
      this.settle(call, undefined, new WorkerCancelled(call.method, why === 'superseded'));
      return;
    }
    // Running: the worker sees the flag between chunks of work and answers "cancelled".
    if (call.slot >= 0) Atomics.store(this.flags, call.slot, 1);
  }

  private settle(call: Call, result: unknown, error: Error | undefined): void {
    if (call.state === 'settled') return;
    if (call.state === 'sent') this.sent.delete(call.id);
    call.state = 'settled';
    if (call.slot >= 0) {
      Atomics.store(this.flags, call.slot, 0);
      this.freeSlots.push(call.slot);
      call.slot = -1;
    }
    call.stopListening();
    if (call.supersedeKey !== undefined && this.latest.get(call.supersedeKey) === call) this.latest.delete(call.supersedeKey);
    if (error) call.reject(error);
    else call.resolve(result);
  }

  // ---- the worker -------------------------------------------------------------------------------

  private start(): Worker {
    const w = new Worker(this.script, { resourceLimits: { maxOldGenerationSizeMb: 4096 } });
    w.on('message', (m: WorkerReply) => {
      const call = this.sent.get(m.id);
      if (!call) return;
      if (m.outcome === 'cancelled' || call.cancelled) {
        // A call cancelled after it finished still rejects: its caller no longer wants the answer.
        this.settle(call, undefined, new WorkerCancelled(call.method, call.cancelled === 'superseded'));
      } else if (m.outcome === 'error') {
        this.settle(call, undefined, new Error(m.error));
      } else {
        this.settle(call, m.result, undefined);
      }
      this.pump();
    });
    const fail = (why: string) => {
      if (this.worker !== w) return;
      this.worker = undefined;
      this.log(`graph worker stopped: ${why}`);
      for (const c of [...this.sent.values()]) this.settle(c, undefined, new Error(`the graph worker stopped (${why})`));
      // Calls still queued go to a new worker.
      this.pump();
    };
    w.on('error', (e) => fail(e.message));
    w.on('exit', (code) => fail(`exit code ${code}`));
    this.worker = w;
    const init: WorkerInit = { kind: 'init', flags: this.flags.buffer as SharedArrayBuffer };
    w.postMessage(init);
    if (this.lastConfig) {
      // A new worker starts from the last settings, before anything else.
      const msg: WorkerRequest = { kind: 'call', id: 0, method: 'configure', params: this.lastConfig, slot: -1 };
      w.postMessage(msg);
    }
    return w;
  }
}
