/**
 * Custom messages between the extension (client) and the Hopscope language server. Both sides
 * import this file (esbuild bundles it into each), so method names and payload types exist once.
 * Payloads are plain JSON: summaries, pages and histograms, never whole tensors.
 */
import type { FileReport } from './core/checks/check-set';

/** Request, client → server: everything known about one graph file (from the cache when fresh). */
export namespace FileSummaryRequest {
  export const method = 'hopscope/fileSummary';
  export interface Params {
    uri: string;
    /** When false, answer at once with status 'checking' instead of waiting for a check. */
    wait?: boolean;
  }
}
export interface FileSummary {
  uri: string;
  status: 'ok' | 'checking' | 'unsupported' | 'missing';
  report?: FileReport;
  /** Files that form one graph with this one (sibling bundle or manifest graph). */
  graphFiles?: string[];
  /** Bytes on disk. */
  size?: number;
}

/** Request, client → server: a window of rows of one tensor, for the viewer's virtualised table. */
export namespace TensorPageRequest {
  export const method = 'hopscope/tensorPage';
  export interface Params {
    uri: string;
    tensor: string;
    rowStart: number;
    rowCount: number;
    /** Columns beyond this many are cut (the viewer says so). Default 64. */
    maxCols?: number;
  }
}
export interface TensorPage {
  tensor: string;
  shape: number[];
  /** Rows × columns of the tensor viewed as a matrix (rank > 2 flattened after the first axis). */
  totalRows: number;
  totalCols: number;
  rowStart: number;
  /** Values as numbers, null for NaN/±Inf (with `text` giving "NaN", "Infinity"), or strings. */
  rows: Array<Array<number | string | null>>;
  colsShown: number;
}

/** Request, client → server: column statistics and histograms for the viewer. */
export namespace TensorStatsRequest {
  export const method = 'hopscope/tensorStats';
  export interface Params {
    uri: string;
    tensor: string;
    /** At most this many columns get statistics (default 256). */
    maxCols?: number;
  }
}
export interface ColumnStats {
  min: number | null;
  max: number | null;
  mean: number | null;
  std: number | null;
  nan: number;
  inf: number;
}
export interface TensorStats {
  tensor: string;
  role: string;
  columns: ColumnStats[];
  /** Columns with statistics (a wide matrix is cut at maxCols). */
  colsShown: number;
  totalCols: number;
  /** For labels: count per class value (value → count), sorted by value. */
  labelHistogram?: Array<{ value: number; count: number }>;
  /** For an edge index or adjacency: how many nodes have each total degree (in + out). */
  degreeHistogram?: Array<{ degree: number; count: number }>;
}

/** Request, client → server: degree and neighbours of one node of a graph file (hovers). */
export namespace NodeInfoRequest {
  export const method = 'hopscope/nodeInfo';
  export interface Params { uri: string; node: number; maxNeighbours?: number }
}
export interface NodeInfo {
  node: number;
  inDegree: number;
  outDegree: number;
  outNeighbours: number[];
  inNeighbours: number[];
  nodes: number;
}

/** Request, client → server: what a corrected copy of a file would change, and writing it. */
export namespace FixedCopyRequest {
  export const method = 'hopscope/fixedCopy';
  export interface Params {
    uri: string;
    /** Without `write`, only describe the changes. */
    write?: boolean;
    /** Target path for the copy; must not exist (never an overwrite). */
    target?: string;
  }
}
export interface FixedCopyResult {
  /** Human-readable list of what the copy changes. */
  changes: string[];
  /** Suggested target (same folder, `.fixed` before the extension). */
  suggestedTarget: string;
  /** Set when written. */
  written?: string;
}

/** Notification, server → client: progress of the workspace check, for the status bar. */
export namespace StatusNotification {
  export const method = 'hopscope/status';
}
export interface StatusParams {
  filesChecked: number;
  errors: number;
  warnings: number;
  infos: number;
  busy: boolean;
}

/** Request, client → server: check the whole workspace again. */
export namespace RecheckRequest {
  export const method = 'hopscope/recheck';
}

/** Initialization options the client sends (mirrors the `hopscope.*` settings). */
export interface ServerSettings {
  /** Declared directedness when nothing else says: 'auto' (infer), 'directed', 'undirected'. */
  defaultDirectedness: 'auto' | 'directed' | 'undirected';
  flow: 'source-to-target' | 'target-to-source';
  /** Files above this many MiB are not read. */
  maxFileSizeMB: number;
  /** Glob patterns (workspace-relative) never checked, in addition to files.exclude. */
  exclude: string[];
  /** Severity per problem code: 'error' | 'warning' | 'info' | 'off'. */
  severity: Record<string, 'error' | 'warning' | 'info' | 'off'>;
}

export const DEFAULT_SETTINGS: ServerSettings = {
  defaultDirectedness: 'auto',
  flow: 'source-to-target',
  maxFileSizeMB: 1024,
  exclude: [],
  severity: {},
};
