/**
 * Messages between the receptive-field panel webview (webview/src/panel.ts) and the extension host
 * (extension/src/panel.ts). Both import this file, so each message is checked on both sides.
 * The host relays requests to the language server; the webview draws what comes back.
 */
import type { BottlenecksPayload, FieldViewPayload, PairFieldPayload, SmoothingPayload, WlClassesPayload } from './protocol';
import type { CeilingResult } from './ceiling';
import type { SendingRow } from './report';

export type { SendingRow } from './report';
export type ViewMode = 'hops' | 'wl' | 'bottlenecks' | 'types';

/** What the webview asks the server for (through the host). */
export interface FieldQuery {
  node: number;
  layers: number;
  /** Which row of the edge index sends. Omitted: the file's own (manifest or setting). */
  sendingRow?: SendingRow;
  symmetrise: boolean;
  selfLoops: boolean;
  /** Pair mode: the second end of the pair (node is the first); the host asks hopscope/pairField. */
  pair?: number;
}

/** Webview → extension host. `seq` ties an answer to its question; older answers are dropped. */
export type PanelRequest =
  | { type: 'ready' }
  | { type: 'field'; seq: number; query: FieldQuery }
  | { type: 'wl'; seq: number; nodes: number[] }
  | { type: 'bottlenecks'; seq: number; edges: number[] }
  | { type: 'smoothing' }
  /** The accuracy ceiling by layer count 0..layers (node labels); answered once per file. */
  | { type: 'ceiling'; layers: number }
  | { type: 'exportSvg'; text: string; name: string }
  | { type: 'exportPng'; bytes: Uint8Array; name: string };

/** Extension host → webview. */
export type PanelMessage =
  /** `file.graph`: the panel shows a graph of a dataset of many graphs (0-based). */
  | { type: 'init'; file: { uri: string; name: string; graph?: number }; node?: number; maxNodes: number }
  | { type: 'field'; seq: number; view: FieldViewPayload }
  /** The answer to a pair-mode field question. */
  | { type: 'pair'; seq: number; data: PairFieldPayload }
  | { type: 'wl'; seq: number; data: WlClassesPayload }
  | { type: 'bottlenecks'; seq: number; data: BottlenecksPayload }
  /** `note`: why there is no curve (e.g. the feature matrix does not fit the graph). */
  | { type: 'smoothing'; data: SmoothingPayload | null; note?: string }
  /** null: no ceiling for this graph (no node labels; `note` may say why). */
  | { type: 'ceiling'; data: CeilingResult | null; note?: string }
  | { type: 'error'; seq?: number; message: string }
  /** The file changed on disk: ask again. */
  | { type: 'changed' }
  | { type: 'exported'; path: string };

/** What survives hiding and reloading the panel (vscode.setState; the serializer gets it back). */
export interface PanelState {
  uri?: string;
  name?: string;
  /** A graph of a dataset of many graphs (0-based): the panel is about that graph alone. */
  graph?: number;
  node?: number;
  /** Second end of the pair in pair mode (link prediction), else absent. */
  pair?: number;
  layers?: number;
  sendingRow?: SendingRow;
  symmetrise?: boolean;
  selfLoops?: boolean;
  mode?: ViewMode;
  /** d3-zoom transform of the drawing. */
  zoom?: { k: number; x: number; y: number };
  /** Node id selected in the drawing. */
  selected?: number;
}

export const PANEL_VIEW_TYPE = 'hopscope.fieldPanel';
