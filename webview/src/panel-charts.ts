/**
 * The panel's side column: nodes per hop (bars), the share of the graph within reach by layer count
 * (coverage curve), feature smoothness by propagation step (the over-smoothing curve), and under them
 * the list that goes with the structure view (1-WL look-alike groups, the most negative edges).
 * Drawn with d3 into SVG; every string goes in as text.
 */
import { scaleBand, scaleLinear, scaleLog } from 'd3-scale';
import { line as d3line } from 'd3-shape';
import type { FieldViewPayload, SmoothingPayload } from '../../common/protocol';
import { chartSvg, el } from './dom';
import { groupColour, hopColour, isDarkBackground, type Theme } from './panel-colours';
import { viewMode, type PanelModel } from './panel-model';
import { num, pct, plural } from './panel-numbers';

/** A small colour key (the colour goes in a custom property, read by the stylesheet). */
export function swatch(colour: string, dashed = false): HTMLElement {
  const s = el('span', { class: dashed ? 'swatch line dashed' : 'swatch' });
  s.style.setProperty('--swatch', colour);
  return s;
}

/** Bars of the nodes at each hop distance, coloured as in the drawing. */
export function drawHopBars(hopChart: HTMLElement, v: FieldViewPayload | undefined, theme: Theme): void {
  if (!v) return;
  const dark = isDarkBackground(theme);
  hopChart.replaceChildren(el('figcaption', {}, 'Nodes at each hop distance'));
  const w = 280, h = 150, left = 40, bottom = 22, top = 14;
  const x = scaleBand<number>().domain(v.perHop.map((_, k) => k)).range([left, w - 6]).padding(0.18);
  const y = scaleLinear().domain([0, Math.max(1, ...v.perHop)]).nice().range([h - bottom, top]);
  const svgSel = chartSvg(hopChart, w, h, `Nodes per hop: ${v.perHop.map((c, k) => `hop ${k}: ${c}`).join(', ')}`);
  svgSel.selectAll('rect.total').data(v.perHop).join('rect').attr('class', 'bar total')
    .attr('x', (_, k) => x(k)!).attr('width', x.bandwidth())
    .attr('y', (c) => y(c)).attr('height', (c) => y(0) - y(c))
    .attr('fill', (_, k) => hopColour(k, Math.max(1, v.layers), dark))
    .attr('stroke', theme.outline).attr('stroke-width', theme.outlineWidth)
    .append('title').text((c, k) => `hop ${k}: ${c} node${c === 1 ? '' : 's'}${v.sampled ? `, ${v.shownPerHop[k]} drawn` : ''}`);
  svgSel.selectAll('text.count').data(v.perHop).join('text').attr('class', 'count')
    .attr('x', (_, k) => x(k)! + x.bandwidth() / 2).attr('y', (c) => y(c) - 3).attr('text-anchor', 'middle').text((c) => String(c));
  svgSel.selectAll('text.tick').data(v.perHop).join('text').attr('class', 'tick')
    .attr('x', (_, k) => x(k)! + x.bandwidth() / 2).attr('y', h - 6).attr('text-anchor', 'middle').text((_, k) => String(k));
  hopChart.append(el('p', { class: 'muted small' }, `Total ${v.total.toLocaleString('en-US')} (${pct(v.coverage)} of the graph)${v.sampled ? `; ${v.shown.toLocaleString('en-US')} drawn` : ''}.`));
}

export function lineChart(fig: HTMLElement, opts: {
  caption: string; label: string; xs: number[]; series: Array<{ ys: number[]; cls: string; name: string }>;
  yLog?: boolean; yMax?: number; marker?: number; point?: { x: number; y: number; name: string };
}): void {
  fig.replaceChildren(el('figcaption', {}, opts.caption));
  const w = 280, h = 150, left = 44, bottom = 22, top = 10, right = 8;
  const x = scaleLinear().domain([Math.min(...opts.xs), Math.max(...opts.xs)]).range([left, w - right]);
  const all = opts.series.flatMap((s) => s.ys).filter((y) => Number.isFinite(y));
  const positive = all.filter((y) => y > 0);
  const useLog = opts.yLog === true && positive.length === all.length && positive.length > 0;
  const y = useLog
    ? scaleLog().domain([Math.min(...positive), Math.max(...positive)]).nice().range([h - bottom, top])
    : scaleLinear().domain([0, opts.yMax ?? Math.max(1e-12, ...all)]).nice().range([h - bottom, top]);
  const s = chartSvg(fig, w, h, opts.label);
  if (opts.marker !== undefined && opts.marker >= x.domain()[0]! && opts.marker <= x.domain()[1]!) {
    s.append('line').attr('class', 'marker').attr('x1', x(opts.marker)).attr('x2', x(opts.marker)).attr('y1', top).attr('y2', h - bottom);
  }
  for (const series of opts.series) {
    const pts = opts.xs.map((xv, i) => [x(xv), y(series.ys[i]!)] as [number, number]).filter((p) => Number.isFinite(p[1]));
    s.append('path').attr('class', `line ${series.cls}`).attr('d', d3line()(pts) ?? '').append('title').text(series.name);
    s.append('g').selectAll('circle').data(pts).join('circle').attr('class', `dot ${series.cls}`).attr('cx', (p) => p[0]).attr('cy', (p) => p[1]).attr('r', 2.5);
  }
  if (opts.point && Number.isFinite(opts.point.y) && (!useLog || opts.point.y > 0)) {
    s.append('circle').attr('class', 'dot this').attr('cx', x(opts.point.x)).attr('cy', y(opts.point.y)).attr('r', 4.5).append('title').text(opts.point.name);
  }
  for (const xv of opts.xs) s.append('text').attr('class', 'tick').attr('x', x(xv)).attr('y', h - 6).attr('text-anchor', 'middle').text(String(xv));
  const ticks = useLog ? (y as ReturnType<typeof scaleLog>).ticks(3) : y.ticks(4);
  const fmtTick = (t: number) => (useLog ? t.toExponential(0) : opts.yMax === 1 ? `${Math.round(t * 100)}%` : String(+t.toPrecision(3)));
  for (const t of ticks.slice(0, 6)) s.append('text').attr('class', 'tick').attr('x', left - 5).attr('y', y(t) + 3).attr('text-anchor', 'end').text(fmtTick(t));
}

/** Median and 90th-percentile coverage by layer count, with this node's own coverage as a dot. */
export function drawCoverage(coverageChart: HTMLElement, view: FieldViewPayload | undefined): void {
  if (!view) return;
  const c = view.coverageCurve;
  lineChart(coverageChart, {
    caption: `Share of the graph within reach, by layer count (${c.allNodes ? 'all' : plural(c.sampled, 'sampled node')}${c.allNodes ? ' nodes' : ''})`,
    label: `Coverage by layers. Median: ${c.median.map((m, i) => `${c.layers[i]}: ${pct(m)}`).join(', ')}. 90th percentile: ${c.p90.map((m) => pct(m)).join(', ')}.`,
    xs: c.layers, yMax: 1, marker: view.layers,
    series: [{ ys: c.median, cls: 'median', name: 'median' }, { ys: c.p90, cls: 'p90', name: '90th percentile' }],
    ...(view.layers >= 1 ? { point: { x: view.layers, y: view.coverage, name: `node ${view.node}: ${pct(view.coverage)}` } } : {}),
  });
  coverageChart.append(el('p', { class: 'muted small' }, el('span', { class: 'key median' }, '—'), ' median  ', el('span', { class: 'key p90' }, '- -'), ' 90th percentile  ', el('span', { class: 'key this' }, '●'), ` node ${view.node}`));
}

/**
 * Dirichlet energy of the features after k propagation steps (log scale), marked at the chosen
 * layer count; hidden when there is no curve and no note saying why.
 */
export function drawSmoothing(smoothingChart: HTMLElement, smoothing: SmoothingPayload | null | undefined, note: string | undefined, layers: number): void {
  if (!smoothing) {
    smoothingChart.hidden = !note;
    if (note) smoothingChart.replaceChildren(el('figcaption', {}, 'Feature smoothness'), el('p', { class: 'muted small' }, `No curve: ${note}`));
    return;
  }
  const s = smoothing;
  smoothingChart.hidden = false;
  const L = Math.min(layers, s.steps);
  const ratio = s.caiWang[0]! > 0 ? s.caiWang[L]! / s.caiWang[0]! : NaN;
  lineChart(smoothingChart, {
    caption: `Feature smoothness after k propagation steps (Dirichlet energy of ${s.featureTensor}, Cai & Wang 2020)`,
    label: `Energy by step: ${s.caiWang.map((e, k) => `${k}: ${num(e)}`).join(', ')}`,
    xs: s.caiWang.map((_, k) => k), yLog: true, marker: L,
    series: [{ ys: s.caiWang, cls: 'median', name: 'degree-normalised Dirichlet energy' }],
  });
  const notes: string[] = [];
  if (Number.isFinite(ratio)) notes.push(`After ${plural(L, 'layer')} the energy is ${pct(ratio)} of the start: ${ratio < 0.05 ? 'features are nearly washed out (over-smoothing).' : ratio < 0.3 ? 'a strong pull towards the same values.' : 'features still differ across edges.'}`);
  if (s.colsUsed < s.cols) notes.push(`First ${s.colsUsed} of ${s.cols} feature columns.`);
  if (s.nonFinite) notes.push(`${plural(s.nonFinite, 'non-finite value')} counted as 0.`);
  smoothingChart.append(el('p', { class: 'muted small' }, notes.join(' ')));
}

/**
 * The list for the structure view: 1-WL look-alike groups, or the bridges and most negatively
 * curved drawn edges. Clicking an entry asks `highlight` to emphasise those nodes (indices into
 * the drawn field at the time of the click).
 */
export function drawModeInfo(modeInfo: HTMLElement, model: PanelModel, highlight: (nodes: Set<number>) => void): void {
  const mode = viewMode(model);
  const { view, wl, bottlenecks } = model;
  modeInfo.replaceChildren();
  if (!view) return;
  if (mode === 'wl') {
    if (!wl) { modeInfo.append(el('p', { class: 'muted' }, 'Computing 1-WL classes…')); return; }
    const rounds = wl.classesPerRound.join(' → ');
    modeInfo.append(el('h2', {}, '1-WL classes'),
      el('p', {}, `Colour refinement over the whole graph: ${rounds} classes${wl.stableAfter !== null ? `, stable after round ${wl.stableAfter}` : ''}. ${plural(wl.sharedInGraph, 'node')} of ${wl.graphNodes.toLocaleString('en-US')} share their colour with another node.`));
    if (!wl.groups.length) { modeInfo.append(el('p', { class: 'muted' }, 'Every drawn node has a colour of its own.')); return; }
    const ul = el('ul', { class: 'groups' });
    wl.groups.slice(0, 30).forEach((g, i) => {
      const b = el('button', { class: 'link', type: 'button' }, swatch(groupColour(i, isDarkBackground(model.theme))), `${g.nodes.length} look alike: ${g.nodes.slice(0, 10).join(', ')}${g.nodes.length > 10 ? ', …' : ''}`, el('span', { class: 'muted' }, ` (${g.inGraph} in the graph)`));
      b.addEventListener('click', () => {
        const members = new Set(g.nodes);
        highlight(new Set(model.view!.ids.map((id, j) => (members.has(id) ? j : -1)).filter((j) => j >= 0)));
      });
      ul.append(el('li', {}, b));
    });
    if (wl.groups.length > 30) ul.append(el('li', { class: 'muted' }, `… ${wl.groups.length - 30} more groups`));
    modeInfo.append(ul);
  } else if (mode === 'bottlenecks') {
    if (!bottlenecks) { modeInfo.append(el('p', { class: 'muted' }, 'Computing curvature…')); return; }
    const b = bottlenecks;
    const drawnBridges = b.bridge.filter(Boolean).length;
    modeInfo.append(el('h2', {}, 'Bottlenecks'),
      el('p', {}, `Balanced Forman curvature (Topping et al. 2022) of each drawn edge; the most negative edges are where over-squashing happens. ${plural(drawnBridges, 'bridge')} drawn, ${b.bridgesInGraph.toLocaleString('en-US')} in the graph.${b.balancedComputed ? '' : ' The drawing\'s neighbourhood is very large: only Forman curvature was computed.'}`));
    // Bridges first (every message between their sides crosses them), then the most negative curvature.
    const order = b.balancedForman.map((_, e) => e).filter((e) => b.forman[e] !== null)
      .sort((p, q) => Number(b.bridge[q]) - Number(b.bridge[p]) || (b.balancedForman[p] ?? b.forman[p]!) - (b.balancedForman[q] ?? b.forman[q]!));
    const ul = el('ul', { class: 'groups' });
    for (const e of order.slice(0, 12)) {
      const a = view.edges[2 * e]!, c = view.edges[2 * e + 1]!;
      const bf = b.balancedForman[e];
      const text = `${view.ids[a]} — ${view.ids[c]}: ${bf !== null ? `balanced ${num(bf!)}, ` : ''}Forman ${b.forman[e]}${b.bridge[e] ? ', bridge' : ''}`;
      const btn = el('button', { class: 'link', type: 'button' }, text);
      btn.addEventListener('click', () => highlight(new Set([a, c])));
      ul.append(el('li', {}, btn));
    }
    modeInfo.append(ul);
  }
}
