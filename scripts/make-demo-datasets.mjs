// The demo's datasets of many graphs (called by scripts/make-demo.mjs): Larkhaven's daily
// ride-pattern graphs, one small graph per dock cluster and day (nodes = the cluster's docks, one
// feature per dock kind; edges = docks with rides between them that day, both directions), each
// labelled 1 for a commuter day or 0 for a leisure day. All data here is invented.
//
// - patterns/patterns.npz: 24 graphs batched with global ids (edge_index, x, batch, y) and graph
//   splits train_idx / val_idx / test_idx. Planted: test graph 21 is graph 3 (a training graph)
//   with its docks renumbered (isomorphic-across-splits); graph 14 is graph 9 renumbered but
//   labelled the other way (isomorphic-label-conflict); one ride joins the last dock of graph 5 to
//   the first of graph 6 (cross-graph-edges); cluster 17 was closed that day: no rides (empty-graphs).
// - patterns/weekly/WEEK_*.txt: the graph-kernel text layout of 6 weekly graphs (1-based ids); the
//   graph indicator lists one node of week 2 after week 3's (unsorted-batch) and the labels file
//   has 5 lines for 6 weeks (graph-labels-mismatch).
// - patterns/monthly.npz: edge_index, x and ptr of 4 monthly graphs; ptr goes down from 9 to 7
//   (bad-graph-offsets).

/** Writes the dataset demo with the generator's writers; a local deterministic generator. */
export function writeDatasetDemo({ write, npy, npz, i64 }) {
  let state = 20261204;
  const rand = () => ((state = (Math.imul(state, 1664525) + 1013904223) >>> 0) / 2 ** 32);
  const randint = (n) => Math.floor(rand() * n);
  const KINDS = 3;

  /** One cluster-day: n docks in a ring of rides plus a few chords, local ids. */
  const pattern = () => {
    const n = 5 + randint(4);
    const pairs = new Set();
    for (let u = 0; u < n; u++) pairs.add(`${Math.min(u, (u + 1) % n)},${Math.max(u, (u + 1) % n)}`);
    for (let k = randint(3); k > 0; k--) {
      const u = randint(n), v = randint(n);
      if (u !== v) pairs.add(`${Math.min(u, v)},${Math.max(u, v)}`);
    }
    const edges = [...pairs].map((p) => p.split(',').map(Number));
    return { n, edges, kinds: Array.from({ length: n }, () => randint(KINDS)) };
  };
  /** The same pattern with its docks renumbered. */
  const renumbered = (g) => {
    const perm = Array.from({ length: g.n }, (_, i) => i);
    for (let i = g.n - 1; i > 0; i--) { const j = randint(i + 1); [perm[i], perm[j]] = [perm[j], perm[i]]; }
    const kinds = new Array(g.n);
    g.kinds.forEach((k, u) => (kinds[perm[u]] = k));
    return { n: g.n, edges: g.edges.map(([u, v]) => [perm[u], perm[v]]), kinds };
  };

  const graphs = [];
  const labels = [];
  for (let i = 0; i < 24; i++) { graphs.push(pattern()); labels.push(randint(2)); }
  graphs[14] = renumbered(graphs[9]);
  labels[14] = 1 - labels[9];
  graphs[21] = renumbered(graphs[3]);
  labels[21] = labels[3];
  graphs[17] = { ...graphs[17], edges: [] };

  const batched = (list) => {
    const src = [], dst = [], batch = [], x = [];
    let base = 0;
    list.forEach((g, gi) => {
      for (const [u, v] of g.edges) { src.push(base + u, base + v); dst.push(base + v, base + u); }
      for (let u = 0; u < g.n; u++) {
        batch.push(gi);
        for (let k = 0; k < KINDS; k++) x.push(g.kinds[u] === k ? 1 : 0);
      }
      base += g.n;
    });
    return { src, dst, batch, x, nodes: base };
  };
  const b = batched(graphs);
  // One ride from the last dock of graph 5 to the first dock of graph 6.
  const offsets = [0];
  graphs.forEach((g) => offsets.push(offsets[offsets.length - 1] + g.n));
  b.src.push(offsets[6] - 1);
  b.dst.push(offsets[6]);
  const split = { train: [], val: [], test: [] };
  for (let i = 0; i < 24; i++) {
    if (i === 21 || i === 22 || i === 23) split.test.push(i);
    else if (i === 18 || i === 19 || i === 20) split.val.push(i);
    else split.train.push(i);
  }
  write('patterns/patterns.npz', npz({
    edge_index: npy('<i8', [2, b.src.length], i64([...b.src, ...b.dst])),
    x: npy('<f4', [b.nodes, KINDS], Float32Array.from(b.x)),
    batch: npy('<i8', [b.nodes], i64(b.batch)),
    y: npy('<i8', [24], i64(labels)),
    train_idx: npy('<i8', [split.train.length], i64(split.train)),
    val_idx: npy('<i8', [split.val.length], i64(split.val)),
    test_idx: npy('<i8', [split.test.length], i64(split.test)),
  }));

  // Weekly patterns, graph-kernel text layout (1-based ids, both directions).
  const weeks = Array.from({ length: 6 }, pattern);
  const w = batched(weeks);
  const aLines = [];
  for (let k = 0; k < w.src.length; k++) aLines.push(`${w.src[k] + 1}, ${w.dst[k] + 1}`);
  const indicator = w.batch.map((g) => g + 1);
  // One node of week 2 written after week 3's nodes: swap the last node of week 2 with the first of week 3
  // (the edges follow the nodes, so each week's graph is unchanged).
  const weekStart = [0];
  weeks.forEach((g) => weekStart.push(weekStart[weekStart.length - 1] + g.n));
  const a = weekStart[2] - 1, c = weekStart[2];
  [indicator[a], indicator[c]] = [indicator[c], indicator[a]];
  const swap = (id) => (id === a + 1 ? c + 1 : id === c + 1 ? a + 1 : id);
  const aSwapped = aLines.map((line) => line.split(', ').map(Number).map(swap).join(', '));
  write('patterns/weekly/WEEK_A.txt', aSwapped.join('\n') + '\n');
  write('patterns/weekly/WEEK_graph_indicator.txt', indicator.join('\n') + '\n');
  write('patterns/weekly/WEEK_graph_labels.txt', [1, 0, 1, 1, 0].join('\n') + '\n');

  // Monthly patterns with a ptr that goes down.
  const months = Array.from({ length: 4 }, pattern);
  const m = batched(months);
  const ptr = [0];
  months.forEach((g) => ptr.push(ptr[ptr.length - 1] + g.n));
  ptr[2] = ptr[1] - 2;
  write('patterns/monthly.npz', npz({
    edge_index: npy('<i8', [2, m.src.length], i64([...m.src, ...m.dst])),
    x: npy('<f4', [m.nodes, KINDS], Float32Array.from(m.x)),
    ptr: npy('<i8', [5], i64(ptr)),
  }));
}
