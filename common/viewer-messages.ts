/**
 * Messages between the tensor viewer webview and the extension host. Imported by both sides, so
 * the compiler checks that each message is sent and handled with the same shape.
 */
import type { FileSummary, TensorPage, TensorStats } from './protocol';

/** Webview → extension host. */
export type ViewerRequest =
  | { type: 'ready' }
  | { type: 'page'; tensor: string; rowStart: number; rowCount: number }
  | { type: 'stats'; tensor: string }
  | { type: 'openProblemTable'; code: string }
  | { type: 'writeFixedCopy' }
  | { type: 'reopenAsText' }
  | { type: 'openFieldPanel' };

/** Extension host → webview. */
export type ViewerMessage =
  | { type: 'summary'; summary: FileSummary; fileName: string }
  | { type: 'page'; page: TensorPage }
  | { type: 'stats'; stats: TensorStats }
  | { type: 'error'; message: string }
  | { type: 'changed' };

/** What the webview keeps across hide/show and reloads (vscode.setState). */
export interface ViewerState {
  selected?: string;
  scrollTop?: number;
  view?: 'values' | 'columns' | 'charts';
}
