/**
 * The accuracy ceiling in path hovers, bounded in time: the hover waits a moment for the worker's
 * `ceiling` answer and otherwise says "computing…"; the answer is kept per checked report (a new
 * check of the file makes a new report and a new question), so the next hover shows it. Asked
 * only of files that can have one: a dataset with graph labels, or one graph with a label tensor.
 */
import type { FileReport } from '../core/checks/check-set';
import type { CallOptions, WorkerApi } from '../node/worker-methods';
import type { CeilingHover } from './hover-text';

/**
 * Edge entries above which a hover does not start the ceiling on its own (the worker would be busy
 * for seconds on a mere pointer move); `hopscope ceiling` and the panel still compute it.
 */
export const HOVER_CEILING_MAX_EDGES = { graph: 2_000_000, dataset: 10_000_000 };

/** Whether a hover on this file asks for the ceiling. */
export function wantsCeiling(report: FileReport): boolean {
  if (report.dataset) {
    return report.dataset.edges.total <= HOVER_CEILING_MAX_EDGES.dataset &&
      (report.dataset.graphLabels !== null || report.tensors.some((t) => t.role === 'labels'));
  }
  return report.graph !== null && report.typed === undefined && report.graph.edges <= HOVER_CEILING_MAX_EDGES.graph &&
    report.tensors.some((t) => t.role === 'labels');
}

interface Entry { report: FileReport; work: Promise<CeilingHover>; value?: CeilingHover }

export class CeilingHovers {
  private readonly known = new Map<string, Entry>();

  constructor(
    private readonly api: Pick<WorkerApi, 'ceiling'>,
    /** How long a hover waits for a ceiling not known yet. */
    private readonly waitMs = 700,
    private readonly keep = 64,
  ) {}

  /** The ceiling of `file` for its current report: known, arriving within waitMs, or "computing". Undefined when the file has none to ask. */
  async get(file: string, report: FileReport): Promise<CeilingHover | undefined> {
    if (!wantsCeiling(report)) return undefined;
    let e = this.known.get(file);
    if (!e || e.report !== report) {
      // Behind the panel's requests (normal priority); not cancelled when the hover goes, so the answer is kept.
      const options: CallOptions = { priority: 'normal', supersedeKey: `ceiling-hover:${file}` };
      const work: Promise<CeilingHover> = this.api.ceiling({ path: file }, options)
        .then((r): CeilingHover => r)
        .catch((err: unknown): CeilingHover => ({ error: (err as Error)?.message ?? String(err) }));
      const entry: Entry = { report, work };
      void work.then((v) => { entry.value = v; });
      this.known.delete(file);
      this.known.set(file, entry);
      if (this.known.size > this.keep) this.known.delete(this.known.keys().next().value!);
      e = entry;
    }
    if (e.value) return e.value;
    let timer: NodeJS.Timeout | undefined;
    const late = new Promise<CeilingHover>((resolve) => { timer = setTimeout(() => resolve({ computing: true }), this.waitMs); });
    try {
      return await Promise.race([e.work, late]);
    } finally {
      clearTimeout(timer);
    }
  }

  forget(file: string): void {
    this.known.delete(file);
  }
}
