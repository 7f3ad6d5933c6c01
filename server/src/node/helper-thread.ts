/**
 * One helper thread per process (or per check worker) for work that runs beside the caller over
 * shared memory: building the reverse graph (pair-build.ts) and reading a large file while it is
 * parsed (file-stream.ts). The caller hands it a job and blocks in `Atomics.wait` on a shared
 * control word (allowed in Node's main thread and in workers), so the core's synchronous API
 * stays as it is. Jobs run one after another in the order they were posted.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { Worker } from 'node:worker_threads';

let helper: Worker | null | undefined;
/** The bundled helper entry (dist/helper.js), beside this bundle. */
let script = path.join(__dirname, 'helper.js');

/** Points at another helper bundle (tests run from source, where it is not beside this file). */
export function setHelperScript(p: string): void {
  if (p !== script) {
    script = p;
    helper = undefined;
  }
}

/** The helper thread, started on first use; null when it cannot run (then callers work alone). */
export function getHelper(): Worker | null {
  if (helper !== undefined) return helper;
  if (!fs.existsSync(script)) return (helper = null);
  try {
    const w = new Worker(script);
    w.unref();
    w.on('error', () => { if (helper === w) helper = null; });
    w.on('exit', () => { if (helper === w) helper = null; });
    helper = w;
  } catch {
    helper = null;
  }
  return helper;
}

/** Gives up on a helper that did not answer in time: later callers work alone. */
export function dropHelper(w: Worker): void {
  if (helper === w) helper = null;
  void w.terminate();
}

/** An Int32Array of `length` zeros over shared memory. */
export function sharedInt32(length: number): Int32Array {
  return new Int32Array(new SharedArrayBuffer(length * 4));
}

/** Waits until control[at] leaves `from`; false on timeout. */
export function waitWhile(control: Int32Array, at: number, from: number, ms: number): boolean {
  const deadline = Date.now() + ms;
  while (Atomics.load(control, at) === from) {
    const left = deadline - Date.now();
    if (left <= 0) return false;
    Atomics.wait(control, at, from, left);
  }
  return true;
}

/** Sets control[at] and wakes whoever waits on it. */
export function signal(control: Int32Array, at: number, value: number): void {
  Atomics.store(control, at, value);
  Atomics.notify(control, at);
}
