/**
 * The panel's controls: the centre node box and the "and node" box of pair mode, the layer slider, the message direction, the
 * self-loop and symmetrise toggles (one toolbar), and the colouring, find box, Fit and the two
 * export buttons (a second toolbar). They keep the saved state and call back into the panel.
 */
import '@vscode-elements/elements/dist/vscode-button/index.js';
import '@vscode-elements/elements/dist/vscode-checkbox/index.js';
import '@vscode-elements/elements/dist/vscode-radio/index.js';
import '@vscode-elements/elements/dist/vscode-radio-group/index.js';
import '@vscode-elements/elements/dist/vscode-textfield/index.js';
import type { SendingRow, ViewMode } from '../../common/panel-messages';
import { custom, el } from './dom';
import { viewMode, type PanelModel } from './panel-model';
import { plural } from './panel-numbers';

/** Most layers the slider offers. */
const MAX_LAYERS = 8;

/** What the controls ask the panel to do. */
export interface ControlActions {
  /** Ask again for the field with the saved query. */
  requestField(): void;
  /** Centre on the node id typed or clicked (NaN when the text is not an id). */
  centreOn(node: number): void;
  /** Pair mode with the node in the centre box (`other` set), or back to one node (undefined); NaN when the text is not an id. */
  pairWith(node: number, other: number | undefined): void;
  /** Select a node id in the drawing. */
  find(node: number): void;
  /** The colouring changed (saved already). */
  modeChanged(): void;
  fit(): void;
  exportSvg(): void;
  exportPng(): void;
}

export interface Controls {
  /** The field options toolbar and the drawing toolbar. */
  readonly toolbars: [HTMLElement, HTMLElement];
  /** Shows the saved state (and the file's own direction when none is chosen) in the controls. */
  sync(): void;
  /** Puts a node id in the centre node box. */
  showNode(node: number): void;
  /** Puts the pair's second end in the "and node" box (empty: one node). */
  showPair(other: number | undefined): void;
}

type Checkable = HTMLElement & { checked: boolean };

/** Value of the checked radio of a group (the change event may come from the group or a radio). */
function checkedValue(group: HTMLElement): string | undefined {
  for (const r of group.querySelectorAll('vscode-radio')) if ((r as Checkable).checked) return r.getAttribute('value') ?? undefined;
  return undefined;
}

/** A node id typed in a box, or NaN. */
const readNode = (s: string): number => (s.trim() === '' || !/^\d+$/.test(s.trim()) ? NaN : Number(s.trim()));

/**
 * A node typed in a box of a typed graph's panel: a plain id (the graph with types forgotten), or
 * "TYPE:ID" / "TYPE ID" with the id counted within that type (as the file writes it), turned into
 * the plain id by the types' offsets. NaN when it is neither.
 */
export function readTypedNode(s: string, types: { names: string[]; counts: number[]; offsets: number[] } | undefined): number {
  const plain = readNode(s);
  if (!Number.isNaN(plain) || !types) return plain;
  const m = /^\s*(.+?)\s*[: ]\s*(\d+)\s*$/.exec(s);
  if (!m) return NaN;
  const t = types.names.indexOf(m[1]!);
  const id = Number(m[2]);
  if (t < 0 || id >= types.counts[t]!) return NaN;
  return types.offsets[t]! + id;
}

const onEnter = (target: HTMLElement, fn: () => void) => target.addEventListener('keydown', (e) => {
  if ((e as KeyboardEvent).key === 'Enter') { e.preventDefault(); fn(); }
});

export function createControls(model: PanelModel, act: ControlActions): Controls {
  // Text, not a number box: a typed graph's node may be given as TYPE:ID.
  const nodeInput = custom('vscode-textfield', { id: 'node-input', type: 'text', inputmode: 'numeric', 'aria-label': 'Centre node id', size: '7' }) as HTMLElement & { value: string };
  const pairInput = custom('vscode-textfield', { id: 'pair-input', type: 'number', min: '0', placeholder: 'pair end', 'aria-label': 'Second node of a pair (link prediction); leave empty for one node', size: '7' }) as HTMLElement & { value: string };
  const goButton = custom('vscode-button', { id: 'go', secondary: '' }, 'Show');
  const layersInput = el('input', { id: 'layers', type: 'range', min: '0', max: String(MAX_LAYERS), step: '1', value: '2', 'aria-describedby': 'layers-out' });
  const layersOut = el('output', { id: 'layers-out', for: 'layers' }, '2');
  const sendingRowGroup = custom('vscode-radio-group', { id: 'sending-row', 'aria-label': 'Message direction' },
    custom('vscode-radio', { name: 'sendingRow', value: '0', label: 'row 0 sends' }, 'row 0 sends'),
    custom('vscode-radio', { name: 'sendingRow', value: '1', label: 'row 1 sends' }, 'row 1 sends'));
  const selfLoopsBox = custom('vscode-checkbox', { id: 'self-loops', label: 'Add self-loops', checked: '' }, 'Add self-loops') as Checkable;
  const symmetriseBox = custom('vscode-checkbox', { id: 'symmetrise', label: 'Symmetrise' }, 'Symmetrise') as Checkable;
  const modeGroup = custom('vscode-radio-group', { id: 'mode', 'aria-label': 'Colour by' },
    custom('vscode-radio', { name: 'mode', value: 'hops', label: 'Hop distance', checked: '' }, 'Hop distance'),
    custom('vscode-radio', { name: 'mode', value: 'wl', label: '1-WL classes' }, '1-WL classes'),
    custom('vscode-radio', { name: 'mode', value: 'bottlenecks', label: 'Bottlenecks' }, 'Bottlenecks'),
    // Typed graphs only (shown when the field has node types).
    custom('vscode-radio', { name: 'mode', value: 'types', label: 'Node types', id: 'mode-types', hidden: '' }, 'Node types'));
  const findInput = custom('vscode-textfield', { id: 'find', type: 'number', min: '0', placeholder: 'find id', 'aria-label': 'Find a node in the drawing', size: '7' }) as HTMLElement & { value: string };
  const fitButton = custom('vscode-button', { id: 'fit', secondary: '', title: 'Fit the drawing to the view (0)' }, 'Fit');
  const svgButton = custom('vscode-button', { id: 'export-svg', secondary: '' }, 'Save SVG…');
  const pngButton = custom('vscode-button', { id: 'export-png', secondary: '' }, 'Save PNG…');

  const toolbars: [HTMLElement, HTMLElement] = [
    el('div', { class: 'controls', role: 'toolbar', 'aria-label': 'Field options' },
      el('span', { class: 'group' }, el('label', { for: 'node-input' }, 'Node'), nodeInput,
        el('label', { for: 'pair-input', title: 'What the model sees of a node pair: both fields and the pair\'s own edge' }, 'and node'), pairInput, goButton),
      el('span', { class: 'group' }, el('label', { for: 'layers' }, 'Layers'), layersInput, layersOut),
      el('span', { class: 'group', title: 'Which end of an edge sends the message' }, sendingRowGroup),
      el('span', { class: 'group' }, selfLoopsBox, symmetriseBox),
    ),
    el('div', { class: 'controls', role: 'toolbar', 'aria-label': 'Drawing' },
      el('span', { class: 'group' }, el('span', { class: 'muted' }, 'Colour by'), modeGroup),
      el('span', { class: 'group' }, findInput, fitButton, svgButton, pngButton),
    ),
  ];

  // The slider asks again 90 ms after it stops moving, and at once when it is let go.
  let layerTimer: ReturnType<typeof setTimeout> | undefined;
  function setLayers(L: number, immediate = false): void {
    const v = Math.max(0, Math.min(MAX_LAYERS, Math.round(L)));
    model.save({ layers: v });
    layersOut.textContent = String(v);
    layersInput.setAttribute('aria-valuetext', plural(v, 'layer'));
    clearTimeout(layerTimer);
    if (immediate) act.requestField();
    else layerTimer = setTimeout(() => act.requestField(), 90);
  }

  // An empty "and node" box means one node; an id there means pair mode.
  const show = () => {
    const other = pairInput.value.trim() === '' ? undefined : readNode(pairInput.value);
    const node = readTypedNode(nodeInput.value, model.view?.nodeTypes);
    if (other === undefined && model.state.pair === undefined) act.centreOn(node);
    else act.pairWith(node, other);
  };
  onEnter(nodeInput, show);
  onEnter(pairInput, show);
  goButton.addEventListener('click', show);
  layersInput.addEventListener('input', () => setLayers(Number(layersInput.value)));
  layersInput.addEventListener('change', () => setLayers(Number(layersInput.value), true));
  sendingRowGroup.addEventListener('change', () => {
    const v = checkedValue(sendingRowGroup);
    const row: SendingRow | undefined = v === '0' ? 0 : v === '1' ? 1 : undefined;
    if (row !== undefined && row !== (model.state.sendingRow ?? model.view?.sendingRow)) { model.save({ sendingRow: row }); act.requestField(); }
  });
  selfLoopsBox.addEventListener('change', () => { model.save({ selfLoops: selfLoopsBox.checked }); act.requestField(); });
  symmetriseBox.addEventListener('change', () => { model.save({ symmetrise: symmetriseBox.checked }); act.requestField(); });
  modeGroup.addEventListener('change', () => {
    const v = checkedValue(modeGroup) as ViewMode | undefined;
    if ((v === 'hops' || v === 'wl' || v === 'bottlenecks' || v === 'types') && v !== viewMode(model)) { model.save({ mode: v }); act.modeChanged(); }
  });
  onEnter(findInput, () => act.find(readNode(findInput.value)));
  fitButton.addEventListener('click', () => act.fit());
  svgButton.addEventListener('click', () => act.exportSvg());
  pngButton.addEventListener('click', () => act.exportPng());
  // vscode-button turns Enter and Space into a click itself.

  return {
    toolbars,
    sync(): void {
      const state = model.state;
      nodeInput.value = String(state.node ?? 0);
      pairInput.value = state.pair === undefined ? '' : String(state.pair);
      layersInput.value = String(state.layers ?? 2);
      layersOut.textContent = String(state.layers ?? 2);
      layersInput.setAttribute('aria-valuetext', plural(state.layers ?? 2, 'layer'));
      selfLoopsBox.checked = state.selfLoops !== false;
      symmetriseBox.checked = state.symmetrise === true;
      const mode = viewMode(model);
      const typed = model.view?.nodeTypes !== undefined;
      const typesRadio = modeGroup.querySelector('#mode-types') as HTMLElement | null;
      if (typesRadio) typesRadio.hidden = !typed;
      nodeInput.setAttribute('inputmode', typed ? 'text' : 'numeric');
      nodeInput.setAttribute('aria-label', typed ? 'Centre node: an id, or a node type and an id within it (paper:3)' : 'Centre node id');
      nodeInput.title = typed ? `An id, or TYPE:ID (${model.view!.nodeTypes!.names.join(', ')})` : '';
      for (const r of modeGroup.querySelectorAll('vscode-radio')) (r as Checkable).checked = r.getAttribute('value') === mode;
      const row = state.sendingRow ?? model.view?.sendingRow;
      for (const r of sendingRowGroup.querySelectorAll('vscode-radio')) (r as Checkable).checked = r.getAttribute('value') === String(row);
    },
    showNode(node: number): void {
      nodeInput.value = String(node);
    },
    showPair(other: number | undefined): void {
      pairInput.value = other === undefined ? '' : String(other);
    },
  };
}
