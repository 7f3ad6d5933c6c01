/**
 * Talks to the GraphService in a worker thread. Calls queue in the worker (one at a time), so a
 * long check delays later calls but never the caller's event loop. If the worker dies it is
 * restarted and pending calls fail with a clear error.
 */
import { Worker } from 'node:worker_threads';
import type { GraphService } from './service';

type Service = Pick<GraphService, 'configure' | 'check' | 'report' | 'forget' | 'nodeInfo' | 'tensorPage' | 'tensorStats'
  | 'fieldView' | 'wlClasses' | 'bottlenecks' | 'smoothing'>;
type Async<T> = { [K in keyof T]: T[K] extends (...a: infer A) => infer R ? (...a: A) => Promise<R> : never };

export class WorkerService {
  private worker: Worker | undefined;
  private nextId = 1;
  private readonly pending = new Map<number, { resolve: (v: unknown) => void; reject: (e: Error) => void }>();
  private lastConfig: unknown[] | undefined;

  constructor(private readonly script: string, private readonly log: (s: string) => void = () => {}) {}

  readonly api: Async<Service> = new Proxy({} as Async<Service>, {
    get: (_t, method: string) => (...args: unknown[]) => this.call(method, args),
  });

  private start(): Worker {
    const w = new Worker(this.script, { resourceLimits: { maxOldGenerationSizeMb: 4096 } });
    w.on('message', (m: { id: number; result?: unknown; error?: string }) => {
      const p = this.pending.get(m.id);
      if (!p) return;
      this.pending.delete(m.id);
      if (m.error !== undefined) p.reject(new Error(m.error));
      else p.resolve(m.result);
    });
    const fail = (why: string) => {
      this.log(`graph worker stopped: ${why}`);
      for (const p of this.pending.values()) p.reject(new Error(`the graph worker stopped (${why})`));
      this.pending.clear();
      this.worker = undefined;
    };
    w.on('error', (e) => fail(e.message));
    w.on('exit', (code) => { if (this.worker === w) fail(`exit code ${code}`); });
    this.worker = w;
    if (this.lastConfig) w.postMessage({ id: 0, method: 'configure', args: this.lastConfig });
    return w;
  }

  private call(method: string, args: unknown[]): Promise<unknown> {
    if (method === 'configure') this.lastConfig = args;
    const w = this.worker ?? this.start();
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      w.postMessage({ id, method, args });
    });
  }

  async dispose(): Promise<void> {
    const w = this.worker;
    this.worker = undefined;
    await w?.terminate();
  }
}
