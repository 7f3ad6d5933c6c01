/**
 * The panel's parts for typed graphs and for node labels: nodes coloured by node type (the palette
 * of panel-colours.ts typeColour, never the hop ramp), the field's members per hop and per type
 * (stacked bars and a table), and the accuracy ceiling of message passing by layer count (a line
 * over L = 0..max, marked at the chosen L). Drawn with d3 into SVG; every string goes in as text.
 */
import { scaleBand, scaleLinear } from 'd3-scale';
import type { FieldNodeTypes, FieldViewPayload } from '../../common/protocol';
import type { CeilingResult } from '../../common/ceiling';
import { chartSvg, el } from './dom';
import { isDarkBackground, typeColour, type Theme } from './panel-colours';
import { lineChart, swatch } from './panel-charts';
import { pct, plural } from './panel-numbers';

/** Fill of each drawn node by its type. */
export function typeFills(t: FieldNodeTypes, theme: Theme): string[] {
  const dark = isDarkBackground(theme);
  return t.typeOf.map((k) => typeColour(k, dark, theme.typeHues));
}

/** "paper 3" for a drawn node of a typed graph. */
export function typedName(t: FieldNodeTypes, i: number): string {
  return `${t.names[t.typeOf[i]!] ?? '?'} ${t.localIds[i]}`;
}

/** Legend items for the colouring by type: each type's colour, with its drawn nodes and its field members. */
export function typeLegend(v: FieldViewPayload, theme: Theme): HTMLElement[] {
  const t = v.nodeTypes;
  if (!t) return [];
  const dark = isDarkBackground(theme);
  const drawn = new Array<number>(t.names.length).fill(0);
  for (const k of t.typeOf) drawn[k]!++;
  const inField = t.names.map((_, k) => t.perHop.reduce((a, row) => a + (row[k] ?? 0), 0));
  return [
    el('span', { class: 'muted' }, 'Colour = node type; size = influence on the centre. '),
    ...t.names.map((name, k) => el('span', { class: 'item type-item', 'data-type': name }, swatch(typeColour(k, dark, theme.typeHues)), name,
      el('span', { class: 'muted' }, ` ${drawn[k]}${drawn[k] !== inField[k] ? `/${inField[k]}` : ''}`))),
  ];
}

/** Members per hop and per type: bars stacked by type (same colours as the drawing) and the table of counts. */
export function drawTypeHops(fig: HTMLElement, v: FieldViewPayload | undefined, theme: Theme): void {
  const t = v?.nodeTypes;
  fig.hidden = !t;
  if (!v || !t) { fig.replaceChildren(); return; }
  const dark = isDarkBackground(theme);
  fig.replaceChildren(el('figcaption', {}, 'Nodes at each hop distance, by node type'));
  const hops = t.perHop.length;
  const totals = t.perHop.map((row) => row.reduce((a, b) => a + b, 0));
  const w = 280, h = 150, left = 40, bottom = 22, top = 10;
  const x = scaleBand<number>().domain([...Array(hops).keys()]).range([left, w - 6]).padding(0.18);
  const y = scaleLinear().domain([0, Math.max(1, ...totals)]).nice().range([h - bottom, top]);
  const label = `Nodes per hop and type: ${t.perHop.map((row, k) => `hop ${k}: ${row.map((c, j) => `${t.names[j]} ${c}`).join(', ')}`).join('; ')}`;
  const svg = chartSvg(fig, w, h, label);
  for (let k = 0; k < hops; k++) {
    let base = 0;
    t.perHop[k]!.forEach((c, j) => {
      if (!c) return;
      svg.append('rect').attr('class', 'bar type').attr('x', x(k)!).attr('width', x.bandwidth())
        .attr('y', y(base + c)).attr('height', y(base) - y(base + c))
        .attr('fill', typeColour(j, dark, theme.typeHues)).attr('stroke', theme.outline).attr('stroke-width', theme.outlineWidth)
        .append('title').text(`hop ${k}: ${c} ${t.names[j]} node${c === 1 ? '' : 's'}`);
      base += c;
    });
    svg.append('text').attr('class', 'tick').attr('x', x(k)! + x.bandwidth() / 2).attr('y', h - 6).attr('text-anchor', 'middle').text(String(k));
  }
  for (const tick of y.ticks(4)) svg.append('text').attr('class', 'tick').attr('x', left - 5).attr('y', y(tick) + 3).attr('text-anchor', 'end').text(String(tick));
  const table = el('table', { class: 'type-hops', id: 'type-hops-table' });
  table.append(el('thead', {}, el('tr', {}, el('th', {}, 'hop'), ...t.names.map((name, j) => el('th', {}, swatch(typeColour(j, dark, theme.typeHues)), ` ${name}`)))));
  const body = el('tbody', {});
  t.perHop.forEach((row, k) => body.append(el('tr', {}, el('td', {}, String(k)), ...row.map((c) => el('td', { class: 'num' }, String(c))))));
  table.append(body);
  fig.append(table);
}

/**
 * The accuracy ceiling by layer count (node labels): the best share of labelled nodes any L-layer
 * message-passing model can classify correctly from the structure alone. Hidden without a
 * node-level ceiling; a note says why when there is one.
 */
export function drawCeiling(fig: HTMLElement, c: CeilingResult | null | undefined, note: string | undefined, layers: number): void {
  if (!c || c.task !== 'node' || !c.perLayer.length) {
    fig.hidden = !note;
    if (note) fig.replaceChildren(el('figcaption', {}, 'Accuracy ceiling by layers'), el('p', { class: 'muted small' }, `No ceiling: ${note}`));
    else fig.replaceChildren();
    return;
  }
  fig.hidden = false;
  const xs = c.perLayer.map((l) => l.layers);
  const ys = c.perLayer.map((l) => l.ceiling);
  lineChart(fig, {
    caption: `Accuracy ceiling by layers: the most of the ${c.labelled.toLocaleString('en-US')} labelled nodes an L-layer message-passing model can get right (1-WL)`,
    label: `Accuracy ceiling by layers: ${c.perLayer.map((l) => `${l.layers}: ${pct(l.ceiling)}`).join(', ')}`,
    xs, yMax: 1, marker: layers,
    series: [{ ys, cls: 'median ceiling', name: 'accuracy ceiling' }],
  });
  const at = c.perLayer.find((l) => l.layers === Math.min(layers, xs[xs.length - 1]!));
  const notes: string[] = [];
  if (at) {
    notes.push(`With ${plural(at.layers, 'layer')}: at most ${pct(at.ceiling)}` +
      (at.conflictingNodes ? `; ${plural(at.conflictingNodes, 'labelled node')} look${at.conflictingNodes === 1 ? 's' : ''} the same as a node of another class.` : '.'));
  }
  if (c.stableAfter !== null) notes.push(`More layers add nothing after ${plural(c.stableAfter, 'layer')} (the colours stop changing).`);
  notes.push('Node features that tell such nodes apart raise it.');
  fig.append(el('p', { class: 'muted small', id: 'ceiling-note' }, notes.join(' ')));
}
