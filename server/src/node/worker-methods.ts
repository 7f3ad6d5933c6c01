/**
 * The graph worker's requests, each declared once: its name, its params (one object), its result,
 * and whether a caller may cancel it. The worker's dispatch (worker.ts) and the client proxy
 * (worker-client.ts) are both typed from this table; the language server calls
 * `worker.api.<name>(params, { token, supersedeKey, priority })`.
 *
 * Cancellation: the worker is busy synchronously while it computes, so a cancel cannot arrive as
 * a message. The client owns a SharedArrayBuffer of cancel flags, one slot per request in flight;
 * cancelling sets the slot, and the analysis reads it through a `Cancel` (core/cancel.ts) between
 * chunks of work, throws `AnalysisCancelled`, and the worker answers that request "cancelled".
 * A request cancelled while still queued in the client is dropped without running. Either way the
 * caller's promise rejects with `WorkerCancelled`.
 *
 * Plain types only: no LSP or VS Code types cross this seam.
 */
import type { CheckSetOptions, FileReport } from '../core/checks/check-set';
import type { Csr } from '../core/graph/structure/csr';
import type {
  BottlenecksPayload, DatasetTable, FieldViewPayload, FieldViewRequest, FixedCopyResult, NodeInfo, PairFieldPayload, PairFieldRequest,
  SmoothingPayload, TensorPage, TensorStats, WlClassesPayload,
} from '../../../common/protocol';
import type { CeilingParams, CeilingResult } from '../../../common/ceiling';

/** A sentence for the user when a file or a node cannot be analysed (the LSP turns it into a request error). */
export interface AnalysisError { error: string }

export interface ConfigureParams {
  /** Check options (severity overrides, editor defaults). */
  options: CheckSetOptions;
  /** `hopscope.maxFileSizeMB` in bytes: no file above it is read, whichever request asks. */
  maxFileBytes?: number;
  /**
   * Workspace folders (absolute) and the glob patterns of `files.exclude` + `hopscope.exclude`,
   * matched against paths relative to the folder that holds them. Excluded paths are never walked,
   * read as siblings, checked or analysed.
   */
  roots?: string[];
  exclude?: string[];
}

/** What a walk of folders found (load.ts `Collected`). */
export interface WalkResult {
  files: string[];
  manifests: string[];
  /** Inputs that do not exist. */
  missing: string[];
  /** Inputs that exist but are not a supported file type. */
  unsupported: string[];
}

/**
 * A checked graph's degree and neighbour structure, its arrays over SharedArrayBuffers
 * (shared-structure.ts): a check's outcome carries it to the language-server thread without a
 * copy, and node-id hovers are answered there at once (`nodeInfoOf`).
 */
export interface CheckedStructure {
  n: number;
  indexBase: 0 | 1;
  fwd: Csr;
  rev: Csr;
  /** Present when the graph was checked on its touched ids: CSR node c is the 0-based id ids[c]. */
  ids?: Float64Array;
}

export interface CheckOutcome {
  files: FileReport[];
  manifestProblems: Array<{ path: string; problem: FileReport['problems'][number] }>;
  /** For every graph: its files (absolute). */
  graphs: Array<{ name: string; files: string[]; structureFile: string | null }>;
  /** Text files that are not edge lists (absolute): no report, and no diagnostics in the editor. */
  skipped: string[];
  /** The structure of every graph this check built, by its structure file (absolute). */
  structures: Array<{ file: string; structure: CheckedStructure }>;
}

/** Every path is absolute (or resolved against the worker's cwd). */
export interface PathParams { path: string }

/**
 * One entry of the table. `P` and `R` exist only as types (phantom fields); `cancellable` is the
 * one runtime fact: only cancellable requests honour a token or a supersede key (dropped while
 * queued, stopped while running). The others (settings, forgetting, writing a file) always run.
 */
export interface MethodSpec<P, R> {
  readonly cancellable: boolean;
  /** @internal type carriers, never set */
  readonly params?: P;
  readonly result?: R;
}
function method<P, R>(cancellable: boolean): MethodSpec<P, R> {
  return { cancellable };
}

export const WORKER_METHODS = {
  /** New settings; caches are dropped only when the check options or the size limit change. */
  configure: method<ConfigureParams, void>(false),
  /** The workspace walk: supported files and manifests under `paths`, exclusions applied. */
  walk: method<{ paths: string[] }, WalkResult>(true),
  /**
   * Checks files/folders; reports, graph structures and read files are kept in the store. With
   * `focus` (changed files), all `paths` are read so files group as usual, but only the graphs
   * holding a focus file are checked and reported (load.ts `LoadOptions.focus`).
   */
  check: method<{ paths: string[]; focus?: string[] }, CheckOutcome>(true),
  /** The last report of a file, if it was checked. */
  report: method<PathParams, FileReport | null>(false),
  /** Drops everything kept for a path (deleted file): read bytes, report, structure, analyses. */
  forget: method<PathParams, void>(false),
  /** Degree and neighbours of one node (hovers); checks the file first when it was not checked. */
  nodeInfo: method<PathParams & { node: number; maxNeighbours?: number }, NodeInfo | null>(true),
  /** Rows of one tensor (the viewer's table); reads the file again when it changed or was dropped. */
  tensorPage: method<PathParams & { tensor: string; rowStart: number; rowCount: number; maxCols?: number }, TensorPage | null>(true),
  tensorStats: method<PathParams & { tensor: string; maxCols?: number }, TensorStats | null>(true),
  /** The receptive-field panel's analyses. */
  fieldView: method<PathParams & Omit<FieldViewRequest.Params, 'uri'>, FieldViewPayload | AnalysisError>(true),
  /** What a model sees of a node pair (link prediction): the panel's pair mode. */
  pairField: method<PathParams & Omit<PairFieldRequest.Params, 'uri'>, PairFieldPayload | AnalysisError>(true),
  wlClasses: method<PathParams & { nodes: number[] }, WlClassesPayload | AnalysisError>(true),
  bottlenecks: method<PathParams & { edges: number[] }, BottlenecksPayload | AnalysisError>(true),
  smoothing: method<PathParams & { steps?: number }, SmoothingPayload | AnalysisError | null>(true),
  /** The viewer's table of graphs of a dataset of many graphs (dataset-views.ts); null when the file holds none. */
  datasetTable: method<PathParams, DatasetTable | AnalysisError | null>(true),
  /** The accuracy ceiling of message passing (ceiling-input.ts): a dataset's, or one graph's per layer count. */
  ceiling: method<CeilingParams, CeilingResult | AnalysisError>(true),
  /** What a corrected copy would change (nothing written). */
  fixedCopyPlan: method<PathParams, FixedCopyResult>(true),
  /** Writes the corrected copy to `target` (or the suggested name); never over an existing file. */
  writeFixedCopy: method<PathParams & { target?: string }, FixedCopyResult>(false),
} as const;

export type WorkerMethods = typeof WORKER_METHODS;
export type MethodName = keyof WorkerMethods;
export type ParamsOf<M extends MethodName> = WorkerMethods[M] extends MethodSpec<infer P, unknown> ? P : never;
export type ResultOf<M extends MethodName> = WorkerMethods[M] extends MethodSpec<unknown, infer R> ? R : never;

/** What implements the table (the graph store's handlers in the worker). `cancel` is set for cancellable requests. */
export type MethodHandlers = {
  [M in MethodName]: (params: ParamsOf<M>, cancel: { readonly isCancellationRequested: boolean }) => ResultOf<M>;
};

/** A cancellation source as the LSP and VS Code give it; only the two members used are named. */
export interface CancelToken {
  readonly isCancellationRequested: boolean;
  onCancellationRequested?(listener: () => void): { dispose(): void } | unknown;
}

export interface CallOptions {
  /** Cancels the request (queued: dropped; running: stopped between chunks). Cancellable methods only. */
  token?: CancelToken;
  /**
   * A newer call with the same key cancels the older one still queued or running (one panel's
   * field request after the slider moved again). Cancellable methods only.
   */
  supersedeKey?: string;
  /** 'high' requests (hovers, the panel) go before queued 'normal' ones (workspace checks). */
  priority?: 'high' | 'normal';
}

/** The client proxy: one async function per method. */
export type WorkerApi = {
  [M in MethodName]: (params: ParamsOf<M>, options?: CallOptions) => Promise<ResultOf<M>>;
};

/** Rejection of a call that was cancelled (by its token, or superseded by a newer call). */
export class WorkerCancelled extends Error {
  override readonly name = 'WorkerCancelled';
  constructor(readonly method: string, readonly superseded = false) {
    super(`${method} was ${superseded ? 'superseded by a newer request' : 'cancelled'}`);
  }
}

// ---- the wire (worker.ts ⇄ worker-client.ts) -----------------------------------------------------

/** Number of cancel slots in the shared flag array: at most this many cancellable requests in flight. */
export const CANCEL_SLOTS = 64;

/** Client → worker. `slot` is the request's cancel flag index (-1: not cancellable). */
export type WorkerInit = { kind: 'init'; flags: SharedArrayBuffer };
export interface WorkerRequest { kind: 'call'; id: number; method: MethodName; params: unknown; slot: number }
/** Worker → client. */
export type WorkerReply =
  | { id: number; outcome: 'ok'; result: unknown }
  | { id: number; outcome: 'error'; error: string }
  | { id: number; outcome: 'cancelled' };
