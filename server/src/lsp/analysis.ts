/**
 * The receptive-field panel's requests (common/protocol.ts: FieldViewRequest, PairFieldRequest,
 * WlClassesRequest, BottlenecksRequest, SmoothingRequest). The work runs in the graph worker; a message for the
 * user (unknown node, unreadable file) comes back as a RequestFailed error carrying that message.
 *
 * Each request's cancellation token goes to the worker, so `$/cancelRequest` (the panel moved its
 * slider again, or closed) stops the analysis between chunks of work; the request then fails
 * with RequestCancelled. A newer request of the same kind for the same file also supersedes the
 * older one in the worker, for clients that do not cancel.
 */
import { LSPErrorCodes, ResponseError, type CancellationToken, type Connection } from 'vscode-languageserver/node';
import { URI } from 'vscode-uri';
import {
  BottlenecksRequest, CeilingRequest, DatasetTableRequest, FieldViewRequest, PairFieldRequest, SmoothingRequest, WlClassesRequest,
} from '../../../common/protocol';
import { WorkerCancelled, type AnalysisError, type CallOptions, type WorkerApi } from '../node/worker-methods';
import { graphKey } from '../node/graph-key';

/** Longest id list a request may carry (the panel draws at most 20,000 nodes). */
const MAX_IDS = 200_000;

async function unwrap<T>(work: Promise<T | AnalysisError>): Promise<T> {
  let r: T | AnalysisError;
  try {
    r = await work;
  } catch (e) {
    if (e instanceof WorkerCancelled) throw new ResponseError(LSPErrorCodes.RequestCancelled, e.message);
    throw e;
  }
  if (r && typeof r === 'object' && 'error' in r) throw new ResponseError(LSPErrorCodes.RequestFailed, r.error);
  return r as T;
}

function ids(xs: unknown, what: string): number[] {
  if (!Array.isArray(xs) || xs.length > MAX_IDS || !xs.every((x) => typeof x === 'number')) {
    throw new ResponseError(LSPErrorCodes.RequestFailed, `${what} must be a list of at most ${MAX_IDS} numbers`);
  }
  return xs as number[];
}

/** A graph index as a request may give it: absent, or a whole number from 0. */
function graphOf(g: unknown): number | undefined {
  if (g === undefined || g === null) return undefined;
  if (typeof g !== 'number' || !Number.isInteger(g) || g < 0) throw new ResponseError(LSPErrorCodes.RequestFailed, `graph must be a whole number from 0, got ${String(g)}`);
  return g;
}

export function registerAnalysisRequests(connection: Connection, api: Pick<WorkerApi, 'fieldView' | 'pairField' | 'wlClasses' | 'bottlenecks' | 'smoothing' | 'datasetTable' | 'ceiling'>): void {
  /** The analysed graph's key: the file, or graph g of the dataset in it (node/dataset-views.ts). */
  const file = (uri: string, graph?: unknown) => graphKey(URI.parse(uri).fsPath, graphOf(graph));
  /** The token, ahead of queued workspace checks, superseding the last request of this kind for the file. */
  const options = (kind: string, path: string, token: CancellationToken): CallOptions => ({ token, priority: 'high', supersedeKey: `${kind}:${path}` });
  connection.onRequest(FieldViewRequest.type, (p, token) => {
    const { uri, graph, ...rest } = p;
    const path = file(uri, graph);
    return unwrap(api.fieldView({ path, ...rest }, options('field', path, token)));
  });
  connection.onRequest(PairFieldRequest.type, (p, token) => {
    const { uri, graph, ...rest } = p;
    const path = file(uri, graph);
    // The same supersede key as the single-node field: the panel shows one or the other.
    return unwrap(api.pairField({ path, ...rest }, options('field', path, token)));
  });
  connection.onRequest(WlClassesRequest.type, (p, token) => {
    const path = file(p.uri, p.graph);
    return unwrap(api.wlClasses({ path, nodes: ids(p.nodes, 'nodes') }, options('wl', path, token)));
  });
  connection.onRequest(BottlenecksRequest.type, (p, token) => {
    const path = file(p.uri, p.graph);
    return unwrap(api.bottlenecks({ path, edges: ids(p.edges, 'edges') }, options('bottlenecks', path, token)));
  });
  connection.onRequest(SmoothingRequest.type, (p, token) => {
    const path = file(p.uri, p.graph);
    return unwrap(api.smoothing({ path, ...(p.steps !== undefined ? { steps: p.steps } : {}) }, options('smoothing', path, token)));
  });
  connection.onRequest(CeilingRequest.type, (p, token) => {
    const path = file(p.uri);
    const layers = p.layers === undefined ? undefined : Math.max(0, Math.min(16, Math.floor(Number(p.layers)) || 0));
    return unwrap(api.ceiling({ path, ...(layers !== undefined ? { layers } : {}) }, options('ceiling', path, token)));
  });
  connection.onRequest(DatasetTableRequest.type, (p, token) => {
    const path = file(p.uri);
    return unwrap(api.datasetTable({ path }, options('datasetTable', path, token)));
  });
}
