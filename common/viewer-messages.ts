/**
 * Messages between the tensor viewer webview and the extension host. Imported by both sides, so
 * the compiler checks that each message is sent and handled with the same shape.
 */
import type { DatasetTable, FileSummary, TensorPage, TensorStats } from './protocol';
import type { CeilingResult } from './ceiling';

/** Webview → extension host. */
export type ViewerRequest =
  | { type: 'ready' }
  | { type: 'page'; tensor: string; rowStart: number; rowCount: number }
  | { type: 'stats'; tensor: string }
  | { type: 'openProblemTable'; code: string }
  | { type: 'writeFixedCopy' }
  | { type: 'reopenAsText' }
  | { type: 'openFieldPanel' }
  /** A dataset of many graphs: its table of graphs (one answer: 'datasetTable'). */
  | { type: 'datasetTable' }
  /** Open the receptive-field panel on graph `graph` (0-based) of the dataset. */
  | { type: 'openGraph'; graph: number }
  /** The dataset's accuracy ceiling (one answer: 'ceiling'). */
  | { type: 'ceiling' };

/** Extension host → webview. */
export type ViewerMessage =
  | { type: 'summary'; summary: FileSummary; fileName: string }
  | { type: 'page'; page: TensorPage }
  | { type: 'stats'; stats: TensorStats }
  /** The table of graphs (null: the server found no dataset in the file). */
  | { type: 'datasetTable'; table: DatasetTable | null; note?: string }
  /** null: no ceiling for this file (`note` may say why). */
  | { type: 'ceiling'; data: CeilingResult | null; note?: string }
  | { type: 'error'; message: string }
  | { type: 'changed' };

/** What the webview keeps across hide/show and reloads (vscode.setState). */
export interface ViewerState {
  selected?: string;
  scrollTop?: number;
  view?: 'values' | 'columns' | 'charts';
  /** The table of graphs: sort column and direction, scroll offset, chosen graph. */
  graphSort?: { key: GraphColumn; descending: boolean };
  graphScroll?: number;
  graphSelected?: number;
}

/** Sortable columns of the viewer's table of graphs. */
export type GraphColumn = 'index' | 'nodes' | 'edges' | 'label' | 'split' | 'problems';
