/**
 * Worker-thread entry: hosts one GraphService so reading and checking never block the language
 * server's message loop. Messages: { id, method, args } in, { id, result } or { id, error } out.
 */
import { parentPort } from 'node:worker_threads';
import { GraphService } from './service';
import { useParallelPairBuilder } from './pair-build';

useParallelPairBuilder();

const service = new GraphService();

type Method = 'configure' | 'check' | 'report' | 'forget' | 'nodeInfo' | 'tensorPage' | 'tensorStats'
  | 'fieldView' | 'wlClasses' | 'bottlenecks' | 'smoothing';

parentPort?.on('message', (msg: { id: number; method: Method; args: unknown[] }) => {
  try {
    const fn = (service[msg.method] as (...a: unknown[]) => unknown).bind(service);
    const result = fn(...msg.args);
    parentPort!.postMessage({ id: msg.id, result });
  } catch (e) {
    parentPort!.postMessage({ id: msg.id, error: (e as Error)?.stack ?? String(e) });
  }
});
