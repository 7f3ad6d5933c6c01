/**
 * What the receptive-field panel knows: its saved state and the data the host last sent. One object,
 * made by panel.ts and shared by reference with the stage, the controls and the side charts; only
 * panel.ts (the message handler) replaces the data, the parts read it when they draw.
 */
import type { BottlenecksPayload, FieldViewPayload, PairFieldPayload, SmoothingPayload, WlClassesPayload } from '../../common/protocol';
import type { PanelState, ViewMode } from '../../common/panel-messages';
import type { Theme } from './panel-colours';
import type { CeilingResult } from '../../common/ceiling';

export interface PanelModel {
  /** Kept across reloads of the webview; change it only through save(). */
  state: PanelState;
  save(patch: Partial<PanelState>): void;
  /** `graph`: a graph of a dataset of many graphs (0-based). */
  file: { uri: string; name: string; graph?: number } | undefined;
  /** Number of the latest field request; answers to older ones are dropped. */
  seq: number;
  /** What the stage draws: the field, or in pair mode the pair's union (panel-pair.ts pairAsView). */
  view: FieldViewPayload | undefined;
  /** Pair mode: the server's answer the view was made from; undefined for a single node's field. */
  pair: PairFieldPayload | undefined;
  wl: WlClassesPayload | undefined;
  bottlenecks: BottlenecksPayload | undefined;
  /** null: no smoothing curve for this file (smoothingNote may say why). */
  smoothing: SmoothingPayload | null | undefined;
  smoothingNote: string | undefined;
  /** The accuracy ceiling by layers (node labels); null: none for this graph (ceilingNote may say why). */
  ceiling: CeilingResult | null | undefined;
  ceilingNote: string | undefined;
  theme: Theme;
}

/**
 * The colouring chosen in the panel: hop distance unless changed; a typed graph's nodes are coloured
 * by type until another colouring is chosen. Node types need a field that has them.
 */
export const viewMode = (m: PanelModel): ViewMode => {
  const typed = m.view?.nodeTypes !== undefined;
  const mode = m.state.mode ?? (typed ? 'types' : 'hops');
  return mode === 'types' && !typed ? 'hops' : mode;
};
