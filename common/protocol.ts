/**
 * Custom messages between the extension (client) and the Hopscope language server. Both sides
 * import this file (esbuild bundles it into each), so method names and payload types exist once.
 * Payloads are plain JSON: summaries, pages and histograms, never whole tensors.
 *
 * Each message is a `RequestType`/`NotificationType` object (`X.type`) and is sent and handled by
 * that object — `client.sendRequest(FileSummaryRequest.type, params, token)`,
 * `connection.onRequest(FileSummaryRequest.type, handler)` — so params and results are checked
 * on both sides. Requests that compute (the panel's analyses, summaries, pages, statistics) stop
 * when the caller cancels them (`$/cancelRequest`, sent by the client library for a cancelled token).
 */
import { NotificationType, RequestType, RequestType0 } from 'vscode-languageserver-protocol';
import type { FileReport, SendingRow } from './report';
import type { CeilingResult } from './ceiling';
/** The accuracy ceiling's result types (defined in common/ceiling.ts, shared with the worker and the CLI). */
export type {
  CeilingGroup, CeilingParams, CeilingResult, ErrorFloor, GraphCeilingAugmented, GraphCeilingResult,
  NodeCeilingAugmented, NodeCeilingLayer, NodeCeilingResult,
} from './ceiling';

/** Request, client → server: everything known about one graph file (from the cache when fresh). */
export namespace FileSummaryRequest {
  export const method = 'hopscope/fileSummary';
  export const type = new RequestType<Params, FileSummary, void>(method);
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
  export const type = new RequestType<Params, TensorPage | null, void>(method);
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
  /** Why there are no values to show (a tensor summarised while it was read). */
  note?: string;
}

/** Request, client → server: column statistics and histograms for the viewer. */
export namespace TensorStatsRequest {
  export const method = 'hopscope/tensorStats';
  export const type = new RequestType<Params, TensorStats | null, void>(method);
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
  export const type = new RequestType<Params, NodeInfo | null, void>(method);
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
  export const type = new RequestType<Params, FixedCopyResult, void>(method);
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
  export const type = new NotificationType<StatusParams>(method);
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
  export const type = new RequestType0<null, void>(method);
}

/**
 * Requests of the receptive-field panel (extension/src/panel.ts). Node ids are as written in the
 * file (a 1-based file keeps its 1-based ids); every figure is computed by the server.
 */

/** Request, client → server: the receptive field of one node, with the nodes and edges to draw. */
/** How a field is walked and drawn: the options the node and the pair requests share. */
export interface FieldOptions {
  /** Message-passing layers, 0..64 (the panel offers 0..8). */
  layers: number;
  /** Which row of the edge index sends. Default: the manifest's `sendingRow`, else the `hopscope.sendingRow` setting. */
  sendingRow?: SendingRow;
  /** Messages travel both ways along every edge. */
  symmetrise?: boolean;
  /** Every layer keeps the node's own state (default true): the field is every node within L hops. */
  selfLoops?: boolean;
  /** Most nodes to draw (`hopscope.panel.maxDrawnNodes`); the server keeps it within 10..20000. */
  maxNodes?: number;
  /**
   * In a dataset of many graphs: the graph (0-based) to walk, taken as a standalone graph with its
   * local ids (node ids in the request and the answer are then that graph's own).
   */
  graph?: number;
}

/** What every field answer says about how it was computed. */
export interface FieldHeader {
  file: string;
  layers: number;
  sendingRow: SendingRow;
  symmetrised: boolean;
  selfLoops: boolean;
  graphNodes: number;
  indexBase: 0 | 1;
}

/** The edges among the drawn nodes of a field answer. */
export interface DrawnEdges {
  /** Index pairs (a < b) into `ids`, flattened. */
  edges: number[];
  /** Per edge: 1 = messages ids[a] → ids[b] only, 2 = ids[b] → ids[a] only, 3 = both ways. */
  edgeDirs: number[];
  /** Edges among the drawn nodes; above 30,000 only those nearest the centre are in `edges`. */
  edgesTotal: number;
  /** Error-level problems of the file: the analyses use the edges that are in range. */
  fileErrors: number;
}

export namespace FieldViewRequest {
  export const method = 'hopscope/field';
  export const type = new RequestType<Params, FieldViewPayload, void>(method);
  export interface Params extends FieldOptions {
    uri: string;
    /** As written in the file; in a typed graph with `nodeType`, the id within that node type. */
    node: number;
    /** In a typed graph: the node type `node` counts in (without it, `node` is an id of the types-forgotten graph). */
    nodeType?: string;
  }
}

/**
 * The node types of a typed graph (server/src/core/typed), for the field panel. The types-forgotten
 * graph numbers type t's nodes offsets[t] .. offsets[t + 1] - 1 (in `names` order), so `ids` of the
 * payload are ids of that graph; `typeOf` and `localIds` give each drawn node's type and its id
 * within the type (as written in the file).
 */
export interface FieldNodeTypes {
  /** Node type names, in id-space order. */
  names: string[];
  /** Nodes per type in the whole graph. */
  counts: number[];
  /** names.length + 1 offsets into the types-forgotten id space. */
  offsets: number[];
  /** Per drawn node: index into `names`. */
  typeOf: number[];
  /** Per drawn node: its id within its type. */
  localIds: number[];
  /** perHop[k][t] = field members at hop distance k of type names[t] (row k sums to the payload's perHop[k]). */
  perHop: number[][];
  /** The centre's type and id within it. */
  centre: { type: string; id: number };
}

export interface FieldViewPayload extends FieldHeader, DrawnEdges {
  node: number;
  /** Field members per shortest hop distance 0..layers. */
  perHop: number[];
  total: number;
  coverage: number;
  centreInField: boolean;
  /** Drawn nodes: the centre first, then by hop distance, then by id. */
  ids: number[];
  hops: number[];
  /** Influence of each drawn node on the centre: row `node` of Â^L (GCN), or of (D^-1/2 A D^-1/2)^L without self-loops. */
  weights: number[];
  /** Per drawn node, the value of the label tensor when the graph has one (in a typed graph, of the node's own type's labels; null for types without). */
  labels?: Array<string | number | null>;
  /** When the request named a graph of a dataset: that graph (0-based) and how many the dataset holds. */
  graph?: { index: number; of: number };
  /** Drawn field members ("showing shown of total"). */
  shown: number;
  shownPerHop: number[];
  sampled: boolean;
  /** Median and 90th-percentile coverage for L = 1..8 over `sampled` nodes. */
  coverageCurve: { layers: number[]; median: number[]; p90: number[]; sampled: number; allNodes: boolean };
  hasFeatures: boolean;
  /** In a typed graph: the node types, each drawn node's type and the per-hop counts per type. */
  nodeTypes?: FieldNodeTypes;
}

/**
 * Request, client → server: what a model sees of a node pair (link prediction): both ends' fields,
 * their union and overlap per hop, the pair's own edge in the message-passing graph, and the
 * distance between the ends without that edge (server/src/core/graph/propagation/pair-field.ts).
 */
export namespace PairFieldRequest {
  export const method = 'hopscope/pairField';
  export const type = new RequestType<Params, PairFieldPayload, void>(method);
  export interface Params extends FieldOptions {
    uri: string;
    /** The two ends, as written in the file; they must differ. */
    u: number;
    v: number;
  }
}
/** `edges`: the pair's own edge is the pair (0, 1) when stored. */
export interface PairFieldPayload extends FieldHeader, DrawnEdges {
  u: number;
  v: number;
  /** Per hop 0..layers: each end's field, the union (by the nearer end's distance) and the overlap (by the farther end's). */
  perHop: { u: number[]; v: number[]; union: number[]; overlap: number[] };
  total: { u: number; v: number; union: number; overlap: number };
  /** total.union / graphNodes. */
  coverage: number;
  /** Stored columns u → v (row 0 = u) and v → u; whether v hears u / u hears v along them. */
  pairEdge: { uToV: boolean; vToU: boolean; vHearsU: boolean; uHearsV: boolean };
  /** Undirected hops between the ends with every edge between them removed; null when none is left. */
  distanceWithoutPairEdge: number | null;
  /** Drawn union members: u, v first, then by the nearer end's distance, then id (the nearest `maxNodes`). */
  ids: number[];
  /** Distance of each drawn node to u / to v inside that end's field, -1 when outside it. */
  hopsU: number[];
  hopsV: number[];
  /** Drawn union members ("showing shown of total.union"). */
  shown: number;
  sampled: boolean;
}

/** Request, client → server: 1-WL colours of the drawn nodes and the groups that share one. */
export namespace WlClassesRequest {
  export const method = 'hopscope/wlClasses';
  export const type = new RequestType<Params, WlClassesPayload, void>(method);
  export interface Params { uri: string; nodes: number[]; graph?: number }
}
export interface WlClassesPayload {
  classesPerRound: number[];
  stableAfter: number | null;
  /** Final colour per requested node, -1 for an id outside the graph. */
  colours: number[];
  /** Size of each requested node's class in the whole graph. */
  classSizes: number[];
  /** Requested nodes sharing a colour (two or more), largest group first. */
  groups: Array<{ colour: number; nodes: number[]; inGraph: number }>;
  sharedInGraph: number;
  graphNodes: number;
}

/** Request, client → server: curvature and bridge flag of the drawn edges. */
export namespace BottlenecksRequest {
  export const method = 'hopscope/bottlenecks';
  export const type = new RequestType<Params, BottlenecksPayload, void>(method);
  /** `edges`: node id pairs, flattened. */
  export interface Params { uri: string; edges: number[]; graph?: number }
}
export interface BottlenecksPayload {
  /** Per requested pair; null where the pair is not an edge (or balanced Forman was skipped). */
  forman: Array<number | null>;
  formanTriangles: Array<number | null>;
  balancedForman: Array<number | null>;
  triangles: number[];
  bridge: boolean[];
  balancedComputed: boolean;
  bridgesInGraph: number;
  undirectedEdges: number;
}

/** Request, client → server: Dirichlet energy of the features over 0..steps GCN steps. Null without features. */
export namespace SmoothingRequest {
  export const method = 'hopscope/smoothing';
  export const type = new RequestType<Params, SmoothingPayload | null, void>(method);
  export interface Params { uri: string; steps?: number; graph?: number }
}
export interface SmoothingPayload {
  /** Degree-normalised energy (Cai & Wang 2020) after k = 0..steps steps of Â. */
  caiWang: number[];
  /** tr(XᵀLX), for reference only: it does not decay on irregular graphs. */
  unnormalised: number[];
  steps: number;
  featureTensor: string;
  cols: number;
  /** The first colsUsed columns when the whole matrix would take too long. */
  colsUsed: number;
  nonFinite: number;
}

/**
 * A column of numbers packed as the little-endian bytes of a typed array, base64-encoded: one
 * string per column instead of a JSON array of 100,000 numbers (common/columns.ts packs and unpacks).
 */
export interface PackedColumn {
  dtype: 'int32' | 'float64';
  length: number;
  base64: string;
}

/** Request, client → server: the viewer's table of graphs for a dataset of many graphs (null when the file is none). */
export namespace DatasetTableRequest {
  export const method = 'hopscope/datasetTable';
  export const type = new RequestType<Params, DatasetTable | null, void>(method);
  export interface Params { uri: string }
}
/** One row per graph, as columns (graph g is row g). */
export interface DatasetTable {
  file: string;
  graphs: number;
  layout: string;
  /** int32: nodes and edge entries of each graph. */
  nodes: PackedColumn;
  edges: PackedColumn;
  /** Graph labels: class codes (int32 into `classes`, -1 none) or numeric targets (float64, NaN none); null without. */
  label: { kind: 'class'; classes: string[]; codes: PackedColumn } | { kind: 'value'; values: PackedColumn } | null;
  /** int32 per graph: 0 none, 1 train, 2 val, 3 test; null without splits. */
  split: PackedColumn | null;
  /** int32 per graph: how many of the file's problems name this graph (among their listed places). */
  problems: PackedColumn;
  /** Problem codes with their counts of affected graphs, for the table's header. */
  problemCodes: Array<{ code: string; graphs: number }>;
}

/**
 * Request, client → server: the accuracy ceiling of message passing for a file (common/ceiling.ts):
 * graph-level for a dataset with graph labels, per layer count for one graph with node labels.
 * Null when the file has neither; a request error carries the sentence saying why not.
 */
export namespace CeilingRequest {
  export const method = 'hopscope/ceiling';
  export const type = new RequestType<Params, CeilingResult | null, void>(method);
  export interface Params { uri: string; layers?: number }
}

/** Initialization options the client sends: the `hopscope.*` settings the server uses (common/settings.ts). */
export { DEFAULT_SETTINGS, type ServerSettings } from './settings';
