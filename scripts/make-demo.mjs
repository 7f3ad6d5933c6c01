// Writes the demo workspace demo/: the (fictional) Larkhaven bike-dock network, with files that are
// broken on purpose so that every Hopscope problem code shows up. Deterministic; run it with
// `node scripts/make-demo.mjs` and commit the output. All data here is invented.
import { mkdirSync, readdirSync, writeFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { deflateRawSync } from 'node:zlib';
import { writeTypedDemo } from './make-demo-typed.mjs';
import { writeDatasetDemo } from './make-demo-datasets.mjs';

const root = new URL('../demo/', import.meta.url).pathname;

// --- tiny deterministic generator -------------------------------------------------------------
let state = 20261202;
const rand = () => ((state = (Math.imul(state, 1664525) + 1013904223) >>> 0) / 2 ** 32);
const randint = (n) => Math.floor(rand() * n);

// --- .npy writer (NumPy format 1.0, 64-byte aligned header) -----------------------------------
function npy(descr, shape, data, fortran = false) {
  const shp = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
  let header = `{'descr': '${descr}', 'fortran_order': ${fortran ? 'True' : 'False'}, 'shape': ${shp}, }`;
  const total = Math.ceil((10 + header.length + 1) / 64) * 64;
  header = header.padEnd(total - 10 - 1, ' ') + '\n';
  const head = Buffer.alloc(10);
  head.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0]);
  head.writeUInt16LE(header.length, 8);
  return Buffer.concat([head, Buffer.from(header, 'latin1'), Buffer.from(data.buffer, data.byteOffset, data.byteLength)]);
}
const i64 = (arr) => { const b = new BigInt64Array(arr.length); arr.forEach((v, i) => (b[i] = BigInt(v))); return b; };
const bool = (arr) => Uint8Array.from(arr, (v) => (v ? 1 : 0));

// --- .npz writer (stored ZIP members) ---------------------------------------------------------
const crcTable = Array.from({ length: 256 }, (_, n) => { let c = n; for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1; return c >>> 0; });
const crc32 = (buf) => { let c = 0xffffffff; for (const b of buf) c = crcTable[(c ^ b) & 0xff] ^ (c >>> 8); return (c ^ 0xffffffff) >>> 0; };
function npz(members, compress = false) {
  const locals = [], centrals = [];
  let offset = 0;
  for (const [name, body] of Object.entries(members)) {
    const fname = Buffer.from(name + '.npy');
    const data = compress ? deflateRawSync(body) : body;
    const crc = crc32(body);
    const lh = Buffer.alloc(30);
    lh.writeUInt32LE(0x04034b50, 0); lh.writeUInt16LE(20, 4); lh.writeUInt16LE(compress ? 8 : 0, 8);
    lh.writeUInt32LE(crc, 14); lh.writeUInt32LE(data.length, 18); lh.writeUInt32LE(body.length, 22); lh.writeUInt16LE(fname.length, 26);
    const ch = Buffer.alloc(46);
    ch.writeUInt32LE(0x02014b50, 0); ch.writeUInt16LE(20, 4); ch.writeUInt16LE(20, 6); ch.writeUInt16LE(compress ? 8 : 0, 10);
    ch.writeUInt32LE(crc, 16); ch.writeUInt32LE(data.length, 20); ch.writeUInt32LE(body.length, 24); ch.writeUInt16LE(fname.length, 28);
    ch.writeUInt32LE(offset, 42);
    locals.push(lh, fname, data);
    centrals.push(ch, fname);
    offset += 30 + fname.length + data.length;
  }
  const cd = Buffer.concat(centrals);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0); end.writeUInt16LE(Object.keys(members).length, 8); end.writeUInt16LE(Object.keys(members).length, 10);
  end.writeUInt32LE(cd.length, 12); end.writeUInt32LE(offset, 16);
  return Buffer.concat([...locals, cd, end]);
}

const write = (rel, content) => { mkdirSync(join(root, rel, '..'), { recursive: true }); writeFileSync(join(root, rel), content); };

// demo/checkpoints/ is written by scripts/make_demo_pt.py (it needs PyTorch) and demo/README.md by hand: keep them.
mkdirSync(root, { recursive: true });
for (const entry of readdirSync(root)) if (entry !== 'checkpoints' && entry !== 'README.md') rmSync(join(root, entry), { recursive: true, force: true });

// --- the lane network: 48 docks, lanes between nearby docks ------------------------------------
const N = 48;
const pos = Array.from({ length: N }, () => [rand() * 10, rand() * 6]);
const lanes = [];
for (let u = 0; u < N; u++) {
  const near = [...Array(N).keys()].filter((v) => v !== u)
    .sort((a, b) => Math.hypot(pos[a][0] - pos[u][0], pos[a][1] - pos[u][1]) - Math.hypot(pos[b][0] - pos[u][0], pos[b][1] - pos[u][1]))
    .slice(0, 3);
  for (const v of near) if (u < v || !lanes.some(([a, b]) => a === v && b === u)) lanes.push([Math.min(u, v), Math.max(u, v)]);
}
const uniq = [...new Map(lanes.map(([a, b]) => [`${a},${b}`, [a, b]])).values()];

// lanes/lanes.csv: both directions of every lane, with weekly trips; then the planted mistakes.
const rows = ['dock_from,dock_to,weekly_trips'];
const lineOf = [];
for (const [a, b] of uniq) {
  const t = 20 + randint(180);
  rows.push(`${a},${b},${t}`);
  rows.push(`${b},${a},${t}`);
}
// Planted: a lane typed one way only (its reverse line was deleted).
const oneWay = rows.splice(9, 1);
// Planted: a self-loop (a dock "connected" to itself by a data-entry slip), a duplicated line,
// a dock id past the 48 docks, an id with a decimal point, and a line cut short.
rows.splice(14, 0, '17,17,35');
rows.splice(22, 0, rows[21]);
rows.splice(30, 0, '5,48,61');
rows.splice(37, 0, '12.5,30,44');
rows.splice(41, 0, '26');
write('lanes/lanes.csv', '# Larkhaven bike-dock lanes: one line per direction\n' + rows.join('\n') + '\n');
void oneWay; void lineOf;

// lanes/dock_features.npy: capacity, elevation (m), slope, transit nearby, weekday share, weekend share
const feats = new Float32Array(N * 6);
for (let i = 0; i < N; i++) {
  feats.set([10 + randint(30), 20 + rand() * 80, rand() * 0.08, randint(2), 0.5 + rand() * 0.4, 0.1 + rand() * 0.4], i * 6);
}
feats[7 * 6 + 1] = NaN;     // planted: a dock whose elevation survey failed
feats[31 * 6 + 2] = Infinity; // planted: a division by a zero-length lane
write('lanes/dock_features.npy', npy('<f4', [N, 6], feats));
// lanes/demand.npy: demand class per dock (0 quiet, 1 steady, 2 busy) — one dock short, one stray -3.
const demand = Array.from({ length: N - 1 }, () => randint(3));
demand[40] = -3;
write('lanes/demand.npy', npy('<i8', [N - 1], i64(demand)));
// lanes/splits.npz: train/val/test masks; val is too short and test overlaps train.
const order = [...Array(N).keys()].sort(() => rand() - 0.5);
const train = Array(N).fill(false), val = Array(40).fill(false), test = Array(N).fill(false);
order.slice(0, 30).forEach((i) => (train[i] = true));
order.slice(30, 38).forEach((i) => { if (i < 40) val[i] = true; });
order.slice(38).forEach((i) => (test[i] = true));
order.slice(0, 3).forEach((i) => (test[i] = true)); // planted leak
write('lanes/splits.npz', npz({ train: npy('|b1', [N], bool(train)), val: npy('|b1', [40], bool(val)), test: npy('|b1', [N], bool(test)) }, true));

// --- depots/: service depots as sibling files (edge_index.npy + x.npy + …) ----------------------
const D = 12;
const dEdges = [];
for (let u = 0; u < D; u++) { const v = (u + 1) % D; dEdges.push([u, v], [v, u]); }
dEdges.push([0, 6], [6, 0]);
const E = dEdges.length;
// Planted: stored E x 2 instead of 2 x E.
write('depots/edge_index.npy', npy('<i8', [E, 2], i64(dEdges.flat())));
// Planted: the feature matrix lost its last row (labels and masks still describe 12 depots).
write('depots/x.npy', npy('<f8', [D - 1, 3], Float64Array.from({ length: (D - 1) * 3 }, () => rand())));
write('depots/y.npy', npy('<i8', [D], i64(Array.from({ length: D }, (_, i) => i % 3))));
write('depots/train_mask.npy', npy('|b1', [D], bool(Array.from({ length: D }, (_, i) => i < 8))));
write('depots/test_mask.npy', npy('|b1', [D], bool(Array.from({ length: D }, (_, i) => i >= 8))));
// Planted: one edge feature row missing.
write('depots/edge_attr.npy', npy('<f4', [E - 1, 2], Float32Array.from({ length: (E - 1) * 2 }, () => rand())));

// --- weekend/riders.edges: who rode with whom, exported with 1-based ids -------------------------
const riders = ['# weekend group rides, rider ids from the membership export'];
for (let i = 0; i < 40; i++) { const a = 1 + randint(25), b = 1 + randint(25); if (a !== b) riders.push(`${a}\t${b}`, `${b}\t${a}`); }
riders.push('1\t25', '25\t1');
write('weekend/riders.edges', riders.join('\n') + '\n');

// --- zones/: a zone adjacency with a stray extra column ----------------------------------------
const Z = 9;
const zone = new Uint8Array(Z * (Z + 1));
for (let i = 0; i < Z; i++) for (let j = 0; j < Z; j++) if (i !== j && Math.abs(i - j) <= 2) zone[i * (Z + 1) + j] = 1;
write('zones/zone_adjacency.npy', npy('|u1', [Z, Z + 1], zone));

// --- archive/: older exports ------------------------------------------------------------------
// A clean symmetric Matrix Market file of the 2019 network, 30 docks, with 3 docks not yet wired.
const mm = ['%%MatrixMarket matrix coordinate pattern symmetric', '% Larkhaven lanes, 2019 survey'];
const mEntries = [];
for (let u = 1; u < 27; u++) mEntries.push(`${u + 1} ${u}`);
mEntries.push('27 1');
mm.push(`30 30 ${mEntries.length}`, ...mEntries);
write('archive/lanes_2019.mtx', mm.join('\n') + '\n');
// An edge list of docks closed for winter: the export produced no rows.
write('archive/closed_docks.el', '# dock_from dock_to\n# (no rows exported)\n');
// A snapshot whose upload was cut off half-way.
const snap = npz({ edge_index: npy('<i8', [2, 6], i64([0, 1, 1, 2, 2, 0, 1, 0, 2, 1, 0, 2])) });
write('archive/snapshot_2024.npz', snap.subarray(0, Math.floor(snap.length * 0.6)));
// A tensor saved with an extra row of dock ids: neither 2 x E nor E x 2.
write('archive/bad_export/edge_index.npy', npy('<i8', [3, 5], i64([0, 1, 2, 3, 4, 1, 2, 3, 4, 0, 9, 9, 9, 9, 9])));
// The 2018 lane list: each lane written once (a → b only), as lane surveys list them.
const lanes2018 = ['# Larkhaven lanes, 2018 survey: one line per lane'];
for (let u = 0; u < 20; u++) lanes2018.push(`${u} ${(u + 1) % 20}`, ...(u % 4 === 0 ? [`${u} ${(u + 7) % 20}`] : []));
write('archive/lanes_2018.el', lanes2018.join('\n') + '\n');
// Net rides between docks (rides a → b minus rides b → a): skew-symmetric, lower triangle stored.
// The export also wrote each dock's own ride total on the diagonal, which a skew-symmetric matrix cannot hold.
const netRides = ['%%MatrixMarket matrix coordinate integer skew-symmetric', '% Larkhaven net rides between docks, March'];
const fEntries = [];
for (let u = 2; u <= 8; u++) fEntries.push(`${u} ${u - 1} ${randint(40) - 20 || 3}`);
fEntries.push('5 5 112', '6 6 87');
netRides.push(`8 8 ${fEntries.length}`, ...fEntries);
write('archive/net_flow.mtx', netRides.join('\n') + '\n');
// A map tool's export: docks and paths, but not in any graph layout that is read.
write('archive/dock_map.json', JSON.stringify({
  nodes: Array.from({ length: 4 }, (_, i) => ({ dock: `D${i + 1}`, lat: 51.5 + i / 100, lon: -0.1 - i / 100 })),
  paths: [{ from: 'D1', to: 'D2' }, { from: 'D2', to: 'D3' }, { from: 'D3', to: 'D4' }],
}, null, 2) + '\n');

// --- weekend/member_rides.edges: group rides keyed by membership number ---------------------------
// Membership numbers are ids in the tens of millions for a handful of members: a sparse numbering.
const members = [40213377, 40213391, 41870502, 41870518, 43005126, 45211964, 47330081, 48990215];
const memberRides = ['# member_from member_to: group rides, keyed by membership number'];
members.forEach((a, k) => { const b = members[(k + 1) % members.length]; memberRides.push(`${a} ${b}`, `${b} ${a}`); });
write('weekend/member_rides.edges', memberRides.join('\n') + '\n');

// --- rides/: link prediction, which dock pairs will get a direct ride next month ----------------
// 30 docks; dock 29 opened this month and has no rides yet. Undirected rides (both directions in
// edge_index, the message-passing graph); pairs per split as 2 x K tensors, one pair per column.
const ridePairs = [];
for (let i = 0; i < 28; i++) ridePairs.push([i, i + 1]);
for (let i = 0; i <= 20; i += 4) ridePairs.push([i, i + 5]);
const rideKey = ([a, b]) => `${Math.min(a, b)},${Math.max(a, b)}`;
const rideVal = [[6, 7], [18, 19], [24, 25]];
// Planted: 18 – 19 is both a validation and a test positive; 3 – 29 touches the new dock 29.
const rideTest = [[2, 3], [10, 11], [18, 19], [3, 29]];
const heldOut = new Set([...rideVal, ...rideTest].map(rideKey));
const rideTrain = ridePairs.filter((p) => !heldOut.has(rideKey(p)));
// Planted: the test ride 10 – 11 was left in the message-passing edges (a leak).
const rideMessage = [...rideTrain, [10, 11]];
const cols = (pairs) => i64([...pairs.map((p) => p[0]), ...pairs.map((p) => p[1])]);
const undirected = (pairs) => cols([...pairs, ...pairs.map(([a, b]) => [b, a])]);
write('rides/rides.npz', npz({
  edge_index: npy('<i8', [2, 2 * rideMessage.length], undirected(rideMessage)),
  x: npy('<f4', [30, 4], Float32Array.from({ length: 120 }, (_, i) => (i % 7) / 7)),
  train_pos_edge_index: npy('<i8', [2, rideTrain.length], cols(rideTrain)),
  val_pos_edge_index: npy('<i8', [2, rideVal.length], cols(rideVal)),
  // Planted: 8 – 9 is a lane with rides (not a negative); 12 – 12 pairs a dock with itself.
  val_neg_edge_index: npy('<i8', [2, 4], cols([[0, 14], [5, 20], [8, 9], [12, 12]])),
  test_pos_edge_index: npy('<i8', [2, rideTest.length], cols(rideTest)),
  test_neg_edge_index: npy('<i8', [2, 3], cols([[1, 16], [7, 22], [11, 26]])),
}));
// rides/monthly/val_data.npz: one split saved as its own object (edge_label_index + edge_label).
// Planted: four pairs but only three labels.
const monthly = [[0, 1], [1, 2], [2, 3], [3, 4], [4, 5], [5, 0]];
write('rides/monthly/val_data.npz', npz({
  edge_index: npy('<i8', [2, 12], undirected(monthly)),
  edge_label_index: npy('<i8', [2, 4], cols([[0, 3], [1, 4], [2, 5], [0, 2]])),
  edge_label: npy('<f4', [3], Float32Array.from([1, 0, 0])),
}));

// --- the typed graph: citywide/citywide.npz (scripts/make-demo-typed.mjs) -------------------------
writeTypedDemo({ write, npy, npz, i64, bool });

// --- datasets of many graphs: patterns/ (scripts/make-demo-datasets.mjs) --------------------------
writeDatasetDemo({ write, npy, npz, i64 });

// --- the manifest --------------------------------------------------------------------------------
write('hopscope.json', JSON.stringify({
  $schema: '../schemas/hopscope.schema.json',
  graphs: [{
    name: 'larkhaven-lanes',
    edges: 'lanes/lanes.csv',
    features: 'lanes/dock_features.npy',
    labels: 'lanes/demand.npy',
    splits: { train: 'lanes/splits.npz#train', val: 'lanes/splits.npz#val', test: 'lanes/splits.npz#test' },
    directed: false,
    selfLoops: 'forbidden',
  }],
}, null, 2) + '\n');

// The archive's own manifest, written for Hopscope 0.1.0: it still uses the old name of
// "sendingRow", which is read for one more release with a `renamed-key` info.
write('archive/hopscope.json', JSON.stringify({
  $schema: '../../schemas/hopscope.schema.json',
  flow: 'source-to-target',
}, null, 2) + '\n');

// A training script that names the files (hovers on these paths show their shapes in the editor).
write('train_docks.py', `"""Predicts dock demand in the Larkhaven bike network (demo)."""
import numpy as np
import torch

edges = np.loadtxt("lanes/lanes.csv", delimiter=",", skiprows=2, usecols=(0, 1), dtype=np.int64)
x = np.load("lanes/dock_features.npy")
y = np.load("lanes/demand.npy")
splits = np.load("lanes/splits.npz")
depot_edges = np.load("depots/edge_index.npy")
checkpoint = torch.load("checkpoints/dock_graph.pt")
`);
console.log('demo written to', root);
