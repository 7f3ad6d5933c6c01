/**
 * The receptive-field panel's requests (protocol.ts: hopscope/field, hopscope/wlClasses,
 * hopscope/bottlenecks, hopscope/smoothing). The work runs in the graph worker; a message for the
 * user (unknown node, unreadable file) comes back as a RequestFailed error carrying that message.
 */
import { LSPErrorCodes, ResponseError, type Connection } from 'vscode-languageserver/node';
import { URI } from 'vscode-uri';
import {
  BottlenecksRequest, FieldViewRequest, SmoothingRequest, WlClassesRequest,
  type BottlenecksPayload, type FieldViewPayload, type SmoothingPayload, type WlClassesPayload,
} from '../../../common/protocol';
import type { AnalysisError } from '../node/analysis-service';

/** The worker calls these requests need (WorkerService.api has them). */
export interface AnalysisApi {
  fieldView(file: string, p: Omit<FieldViewRequest.Params, 'uri'>): Promise<FieldViewPayload | AnalysisError>;
  wlClasses(file: string, nodes: number[]): Promise<WlClassesPayload | AnalysisError>;
  bottlenecks(file: string, edges: number[]): Promise<BottlenecksPayload | AnalysisError>;
  smoothing(file: string, steps?: number): Promise<SmoothingPayload | AnalysisError | null>;
}

/** Longest id list a request may carry (the panel draws at most 20,000 nodes). */
const MAX_IDS = 200_000;

function unwrap<T>(r: T | AnalysisError): T {
  if (r && typeof r === 'object' && 'error' in r) throw new ResponseError(LSPErrorCodes.RequestFailed, r.error);
  return r as T;
}

function ids(xs: unknown, what: string): number[] {
  if (!Array.isArray(xs) || xs.length > MAX_IDS || !xs.every((x) => typeof x === 'number')) {
    throw new ResponseError(LSPErrorCodes.RequestFailed, `${what} must be a list of at most ${MAX_IDS} numbers`);
  }
  return xs as number[];
}

export function registerAnalysisRequests(connection: Connection, api: AnalysisApi): void {
  const file = (uri: string) => URI.parse(uri).fsPath;
  connection.onRequest(FieldViewRequest.method, async (p: FieldViewRequest.Params) => {
    const { uri, ...rest } = p;
    return unwrap(await api.fieldView(file(uri), rest));
  });
  connection.onRequest(WlClassesRequest.method, async (p: WlClassesRequest.Params) =>
    unwrap(await api.wlClasses(file(p.uri), ids(p.nodes, 'nodes'))));
  connection.onRequest(BottlenecksRequest.method, async (p: BottlenecksRequest.Params) =>
    unwrap(await api.bottlenecks(file(p.uri), ids(p.edges, 'edges'))));
  connection.onRequest(SmoothingRequest.method, async (p: SmoothingRequest.Params) =>
    unwrap(await api.smoothing(file(p.uri), p.steps)));
}
