/**
 * The viewer's tables for a typed graph (FileReport.typed): node types with their counts, and
 * relations (source type, name, target type, edge entries) with the problems that name them, shown
 * before the tensors. Also the dataset summary line and the accuracy ceiling above the table of
 * graphs. Text only as text.
 */
import { el } from './dom';
import type { DatasetSummary, Problem, TypedSummary } from '../../common/report';
import type { CeilingResult } from '../../common/ceiling';

const n = (x: number) => x.toLocaleString('en-US');

/** The relation key problems use: SRC__REL__DST. */
export const relationKey = (r: { source: string; name: string; target: string }) => `${r.source}__${r.name}__${r.target}`;

function problemCell(ps: Problem[]): HTMLElement {
  const td = el('td', { class: ps.length ? 'problems-cell' : 'problems-cell muted' });
  if (!ps.length) { td.textContent = '—'; return td; }
  ps.forEach((p, i) => {
    if (i) td.append(', ');
    td.append(el('span', { class: `sev-${p.severity} code`, title: p.message }, p.code));
  });
  return td;
}

export function typedTables(t: TypedSummary, problems: Problem[]): HTMLElement {
  const box = el('section', { class: 'typed', id: 'typed-tables' });
  const types = Object.entries(t.nodeTypes);
  box.append(el('h2', {}, `Node types (${types.length}) and relations (${t.relations.length})`));
  const receives = new Map<string, number>(), sends = new Map<string, number>();
  for (const r of t.relations) {
    sends.set(r.source, (sends.get(r.source) ?? 0) + 1);
    receives.set(r.target, (receives.get(r.target) ?? 0) + 1);
  }
  const tt = el('table', { class: 'typed-types', id: 'node-type-table' });
  tt.append(el('thead', {}, el('tr', {}, ...['type', 'nodes', 'relations in', 'relations out', 'problems'].map((h) => el('th', {}, h)))));
  const tb = el('tbody', {});
  for (const [name, count] of types) {
    tb.append(el('tr', {}, el('td', { class: 'type-name' }, name), el('td', { class: 'num' }, n(count)),
      el('td', { class: receives.get(name) ? 'num' : 'num warn' }, String(receives.get(name) ?? 0)),
      el('td', { class: 'num' }, String(sends.get(name) ?? 0)),
      problemCell(problems.filter((p) => p.nodeType === name))));
  }
  tt.append(tb);
  const rt = el('table', { class: 'typed-relations', id: 'relation-table' });
  rt.append(el('thead', {}, el('tr', {}, ...['source', 'relation', 'target', 'edge entries', 'problems'].map((h) => el('th', {}, h)))));
  const rb = el('tbody', {});
  for (const r of t.relations) {
    const key = relationKey(r);
    rb.append(el('tr', { 'data-relation': key }, el('td', { class: 'type-name' }, r.source), el('td', { class: 'rel-name' }, r.name), el('td', { class: 'type-name' }, r.target),
      el('td', { class: 'num' }, n(r.edges)), problemCell(problems.filter((p) => p.relation === key))));
  }
  rt.append(rb);
  box.append(tt, rt);
  return box;
}

/** The dataset's figures above its table of graphs. */
export function datasetFacts(d: DatasetSummary): HTMLElement {
  const spread = (s: DatasetSummary['nodes']) => `${n(s.min)}–${n(s.max)}, mean ${s.mean.toFixed(1)}, ${n(s.total)} in all`;
  const facts: Array<[string, string]> = [
    ['graphs', n(d.graphs)],
    ['nodes per graph', spread(d.nodes)],
    ['edge entries per graph', spread(d.edges)],
  ];
  if (d.graphLabels) facts.push(['label classes', d.graphLabels.classes.map((c, i) => `${c} (${n(d.graphLabels!.counts[i] ?? 0)})`).join(', ')]);
  if (d.splits) facts.push(['splits', `train ${n(d.splits.train)}, val ${n(d.splits.val)}, test ${n(d.splits.test)}`]);
  const box = el('div', { class: 'facts', id: 'dataset-facts' });
  for (const [k, v] of facts) box.append(el('span', { class: 'fact' }, el('b', {}, v), ` ${k}`));
  return box;
}

/**
 * The dataset's accuracy ceiling of message passing (graph-level): the figure, what it means, and
 * the groups of graphs 1-WL cannot tell apart that carry different labels, each graph a link that
 * chooses its row in the table.
 */
export function datasetCeiling(c: CeilingResult | null | undefined, note: string | undefined, reveal: (g: number) => void): HTMLElement {
  const box = el('div', { class: 'ceiling', id: 'dataset-ceiling' });
  if (c === undefined) { box.append(el('p', { class: 'muted' }, 'Computing the accuracy ceiling of message passing…')); return box; }
  if (c === null) { if (note) box.append(el('p', { class: 'muted' }, `No accuracy ceiling: ${note}`)); return box; }
  if (c.task === 'node') {
    // Node labels without graph labels: the ceiling per layer count over all graphs' nodes.
    if (c.perLayer.length) {
      box.append(el('p', {}, el('b', {}, 'Accuracy ceiling by layers'),
        ` (${n(c.labelled)} labelled nodes): ${c.perLayer.map((l) => `L=${l.layers}: ${pct(l.ceiling)}`).join(' · ')}`));
    }
    return box;
  }
  const groups = c.groups.filter((g) => (g.labels ? Object.keys(g.labels).length > 1 : (g.spread ?? 0) > 0));
  if (c.ceiling !== null) {
    box.append(el('p', {}, el('b', {}, `Accuracy ceiling ${pct(c.ceiling)}`),
      `: no message-passing model without extra node features can classify more of the ${n(c.labelled)} labelled graphs correctly` +
      (c.conflictingGroups ? ` — ${n(c.conflictingGroups)} group${c.conflictingGroups === 1 ? '' : 's'} of graphs 1-WL cannot tell apart carry different labels.` : '.')));
  } else {
    box.append(el('p', {}, el('b', {}, 'Numeric targets'), `: ${n(c.conflictingGroups)} group${c.conflictingGroups === 1 ? '' : 's'} of graphs 1-WL cannot tell apart hold different targets` +
      (c.errorFloor ? ` (lowest reachable mean squared error ${c.errorFloor.mse.toPrecision(3)}).` : '.')));
  }
  if (!groups.length) return box;
  const ul = el('ul', { class: 'ceiling-groups' });
  for (const g of groups.slice(0, 8)) {
    const what = g.labels ? Object.entries(g.labels).map(([k, v]) => `${k}: ${n(v)}`).join(', ') : `targets spread ${g.spread!.toPrecision(3)}`;
    const li = el('li', {}, `${n(g.size)} graphs (${what}): `);
    g.graphs.forEach((id, i) => {
      if (i) li.append(', ');
      const b = el('button', { type: 'button', class: 'code-link graph-link', 'data-graph': String(id), title: `Choose graph ${id} in the table` }, String(id));
      b.addEventListener('click', () => reveal(id));
      li.append(b);
    });
    if (g.size > g.graphs.length) li.append(', …');
    ul.append(li);
  }
  if (groups.length > 8) ul.append(el('li', { class: 'muted' }, `… ${groups.length - 8} more groups`));
  box.append(ul);
  return box;
}

const pct = (x: number) => `${(100 * x).toFixed(x >= 0.9995 || x === 0 ? 0 : 1)}%`;
