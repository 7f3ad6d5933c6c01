/**
 * Runs the receptive-field layouts (panel-layout.ts) for the panel: in the layout worker
 * (panel-layout-worker.ts, dist/webview/panel-layout.js) when it starts, else in the page in chunks
 * between frames. Both give the same positions for the same input (the layout is seeded).
 */
import type { FieldViewPayload } from '../../common/protocol';
import { startLayout, type LayoutInput } from './panel-layout';

/** Seed of every field layout, so the same field is always drawn the same way. */
const LAYOUT_SEED = 7;

export type LayoutResult = { positions: Float32Array; rings: number[] };

/** Runs layouts in a Web Worker; falls back to chunks in the page when a worker cannot start. */
export class LayoutRunner {
  route: 'worker' | 'page' = 'page';
  private worker: Worker | undefined;
  private ready: Promise<void>;
  private nextId = 1;
  private pending = new Map<number, (r: LayoutResult | Error) => void>();
  private pageToken = 0;
  whyPage = '';

  constructor(url: string) {
    this.ready = this.start(url);
  }

  private async start(url: string): Promise<void> {
    if (!url) { this.whyPage = 'no worker script'; return; }
    try {
      // A webview page and its resources have different origins, so the worker starts from a
      // blob: URL holding the fetched script (CSP: connect-src for the fetch, worker-src blob:).
      const res = await fetch(url);
      if (!res.ok) throw new Error(`HTTP ${res.status}`);
      const blobUrl = URL.createObjectURL(new Blob([await res.text()], { type: 'text/javascript' }));
      const w = new Worker(blobUrl);
      w.onmessage = (e: MessageEvent<{ id: number; positions?: Float32Array; rings?: number[]; error?: string }>) => {
        const cb = this.pending.get(e.data.id);
        this.pending.delete(e.data.id);
        cb?.(e.data.error !== undefined ? new Error(e.data.error) : { positions: e.data.positions!, rings: e.data.rings! });
      };
      w.onerror = (e) => {
        e.preventDefault();
        this.fallBack(`worker error: ${e.message || 'unknown'}`);
      };
      this.worker = w;
      this.route = 'worker';
    } catch (e) {
      this.whyPage = `worker unavailable: ${(e as Error).message}`;
    }
  }

  private fallBack(why: string): void {
    this.worker?.terminate();
    this.worker = undefined;
    this.route = 'page';
    this.whyPage = why;
    for (const cb of this.pending.values()) cb(new Error('retry'));
    this.pending.clear();
  }

  async run(input: LayoutInput): Promise<LayoutResult> {
    await this.ready;
    if (this.worker) {
      const id = this.nextId++;
      const r = await new Promise<LayoutResult | Error>((resolve) => {
        this.pending.set(id, resolve);
        this.worker!.postMessage({ id, input });
      });
      if (!(r instanceof Error)) return r;
    }
    return this.runInPage(input);
  }

  /** Same layout in chunks of ticks between animation frames; a newer run cancels an older one. */
  private runInPage(input: LayoutInput): Promise<LayoutResult> {
    const token = ++this.pageToken;
    const job = startLayout(input);
    return new Promise((resolve, reject) => {
      const chunk = () => {
        if (token !== this.pageToken) { reject(new Error('superseded')); return; }
        if (job.step(20)) resolve({ positions: job.positions(), rings: job.rings });
        else setTimeout(chunk, 0);
      };
      chunk();
    });
  }
}

/** Lays out successive fields, each starting where its nodes were in the last drawing. */
export class FieldLayouts {
  /** Positions of the last drawing by node id. */
  private previous = new Map<number, [number, number]>();

  constructor(readonly runner: LayoutRunner) {}

  /**
   * The layout of `v` with the given node radii, or undefined when a newer field replaced it
   * (`current()` is false once the layout is done, or the run was superseded).
   */
  async layOut(v: FieldViewPayload, radius: number[], current: () => boolean): Promise<LayoutResult | undefined> {
    const initial = new Float64Array(2 * v.ids.length).fill(NaN);
    v.ids.forEach((id, i) => {
      const p = this.previous.get(id);
      if (p && i > 0) { initial[2 * i] = p[0]; initial[2 * i + 1] = p[1]; }
    });
    let r: LayoutResult;
    try {
      r = await this.runner.run({ hops: v.hops, radius, edges: v.edges, initial: Array.from(initial), seed: LAYOUT_SEED });
    } catch {
      return undefined; // a newer field replaced this one
    }
    if (!current()) return undefined;
    this.previous = new Map(v.ids.map((id, i) => [id, [r.positions[2 * i]!, r.positions[2 * i + 1]!]]));
    return r;
  }

  /** The file changed: the next field starts afresh. */
  forget(): void {
    this.previous.clear();
  }
}
