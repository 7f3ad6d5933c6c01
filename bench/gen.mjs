// Deterministic random directed graphs for `npm run bench`.
//
// A graph of E edge entries over N = floor(E / 10) nodes is written twice with the same edges in
// the same order:
//   <stem>.npy  int64, shape (2, E), little-endian, C order, NumPy format v1.0
//   <stem>.txt  text edge list, one "u v\n" per edge, 0-based ids
//
// Shape of the graph (so every check has real work to do):
//   - N * ISOLATED_FRACTION nodes are never used (isolated nodes),
//   - small "islands" of 2..6 nodes, each a chain plus sometimes one extra edge, give extra weak
//     components,
//   - every other node belongs to one big component whose edges are mostly random pairs, a quarter
//     of the endpoints drawn with a skew towards a few hub nodes, with ~1% self-loops, ~2% exact
//     repeats of an earlier edge and ~10% reversals of an earlier edge (reciprocal pairs);
//   - node ids go through a random permutation and the edge order is shuffled, so none of the
//     above sits in one block of ids or of lines.
//
// Files are reused when <stem>.meta.json says they were made with the same parameters and the
// files on disk still have the sizes recorded there.
//
// Standalone use (for checking the writer against NumPy):
//   node bench/gen.mjs --edges 1000 --out /tmp/g [--seed 7]

import { closeSync, existsSync, mkdirSync, openSync, readFileSync, renameSync, statSync, writeFileSync, writeSync } from 'node:fs';
import { dirname } from 'node:path';
import { endianness } from 'node:os';

/** Bump when the generated edges change for the same (E, seed). */
export const GENERATOR_VERSION = 1;
export const DEFAULT_SEED = 0x5eed1234;

const ISOLATED_FRACTION = 0.002;
const ISLAND_FRACTION = 0.001; // islands per node
const P_SELF_LOOP = 0.01;
const P_DUPLICATE = 0.02;
const P_RECIPROCAL = 0.10;
const P_HUB_ENDPOINT = 0.25;

/** xorshift128 (Marsaglia 2003) on four 32-bit words; returns uint32. */
export function makeRng(seed) {
  let x = seed >>> 0 || 1;
  let y = 362436069;
  let z = 521288629;
  let w = 88675123;
  const next = () => {
    const t = x ^ (x << 11);
    x = y;
    y = z;
    z = w;
    w = (w ^ (w >>> 19) ^ (t ^ (t >>> 8))) >>> 0;
    return w;
  };
  for (let i = 0; i < 32; i++) next(); // mix the seed in
  return {
    next,
    /** Uniform float in [0, 1). */
    float: () => next() / 4294967296,
    /** Integer in [0, n), n <= 2^31 (bias below 2^-10 for the sizes used here). */
    int: (n) => Math.floor((next() / 4294967296) * n),
  };
}

/** Builds the edge arrays in memory (2 x Int32Array of length E: 8 bytes per edge). */
export function generateEdges(E, seed = DEFAULT_SEED) {
  if (!Number.isInteger(E) || E < 100) throw new Error(`edge count must be an integer >= 100, got ${E}`);
  const N = Math.floor(E / 10);
  const rng = makeRng(seed);

  // Random labels: perm[k] is the id of the k-th node slot.
  const perm = new Int32Array(N);
  for (let i = 0; i < N; i++) perm[i] = i;
  for (let i = N - 1; i > 0; i--) {
    const j = rng.int(i + 1);
    const t = perm[i];
    perm[i] = perm[j];
    perm[j] = t;
  }

  const isolated = Math.max(1, Math.round(N * ISOLATED_FRACTION));
  const islandCount = Math.max(1, Math.round(N * ISLAND_FRACTION));
  // Slots: [0, M) main component, then islands, then isolated nodes at the end.
  const islandSizes = new Int32Array(islandCount);
  let islandNodes = 0;
  let islandEdges = 0;
  const islandExtra = new Uint8Array(islandCount);
  for (let k = 0; k < islandCount; k++) {
    islandSizes[k] = 2 + rng.int(5);
    islandExtra[k] = islandSizes[k] >= 3 && rng.float() < 0.5 ? 1 : 0;
    islandNodes += islandSizes[k];
    islandEdges += islandSizes[k] - 1 + islandExtra[k];
  }
  const M = N - islandNodes - isolated;
  if (M < 10) throw new Error(`graph too small for its islands (E=${E})`);

  const u = new Int32Array(E);
  const v = new Int32Array(E);
  let e = 0;

  // Islands: a chain over the island's slots, plus sometimes a closing edge (a cycle).
  let slot = M;
  for (let k = 0; k < islandCount; k++) {
    const s = islandSizes[k];
    for (let i = 0; i + 1 < s; i++) {
      // Random direction per edge: weak connectivity only.
      if (rng.float() < 0.5) { u[e] = perm[slot + i]; v[e] = perm[slot + i + 1]; }
      else { u[e] = perm[slot + i + 1]; v[e] = perm[slot + i]; }
      e++;
    }
    if (islandExtra[k]) { u[e] = perm[slot + s - 1]; v[e] = perm[slot]; e++; }
    slot += s;
  }
  const mainStart = e;

  const pick = () => {
    if (rng.float() < P_HUB_ENDPOINT) {
      const x = rng.float();
      return perm[Math.floor(M * x * x * x)];
    }
    return perm[rng.int(M)];
  };

  // A spanning chain first, so the main block is one weak component whatever the draws give.
  for (let i = 0; i + 1 < M && e < E; i++) {
    u[e] = perm[i];
    v[e] = perm[i + 1];
    e++;
  }

  const pSelf = P_SELF_LOOP;
  const pDup = pSelf + P_DUPLICATE;
  const pRec = pDup + P_RECIPROCAL;
  while (e < E) {
    const r = rng.float();
    if (r < pSelf) {
      const a = pick();
      u[e] = a;
      v[e] = a;
    } else if (r < pDup) {
      const j = mainStart + rng.int(e - mainStart);
      u[e] = u[j];
      v[e] = v[j];
    } else if (r < pRec) {
      const j = mainStart + rng.int(e - mainStart);
      u[e] = v[j];
      v[e] = u[j];
    } else {
      u[e] = pick();
      v[e] = pick();
    }
    e++;
  }

  // Shuffle the edge order (Fisher-Yates on both rows together).
  for (let i = E - 1; i > 0; i--) {
    const j = rng.int(i + 1);
    let t = u[i]; u[i] = u[j]; u[j] = t;
    t = v[i]; v[i] = v[j]; v[j] = t;
  }

  return { E, N, u, v, islands: islandCount, isolatedByConstruction: isolated };
}

/** NumPy format v1.0 header for a C-order little-endian int64 array of shape (2, E). */
export function npyHeader(E) {
  let dict = `{'descr': '<i8', 'fortran_order': False, 'shape': (2, ${E}), }`;
  // magic(6) + version(2) + header length(2) + dict + padding + '\n' is a multiple of 64.
  const unpadded = 10 + dict.length + 1;
  const pad = (64 - (unpadded % 64)) % 64;
  dict = dict + ' '.repeat(pad) + '\n';
  if (dict.length > 0xffff) throw new Error('npy header too long for format v1.0');
  const header = Buffer.alloc(10 + dict.length);
  header.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0], 0); // \x93NUMPY, v1.0
  header.writeUInt16LE(dict.length, 8);
  header.write(dict, 10, 'latin1');
  return header;
}

const CHUNK = 1 << 20; // edges per write

function writeNpy(path, u, v) {
  if (endianness() !== 'LE') throw new Error('the .npy writer assumes a little-endian host');
  const E = u.length;
  const fd = openSync(path, 'w');
  try {
    writeSync(fd, npyHeader(E));
    // Ids are >= 0 and < 2^31: the int64 is (low word = id, high word = 0).
    const words = new Uint32Array(2 * Math.min(CHUNK, E));
    for (const row of [u, v]) {
      for (let off = 0; off < E; off += CHUNK) {
        const n = Math.min(CHUNK, E - off);
        for (let i = 0; i < n; i++) words[2 * i] = row[off + i]; // high words stay 0
        writeSync(fd, new Uint8Array(words.buffer, 0, 8 * n));
      }
    }
  } finally {
    closeSync(fd);
  }
}

/** Writes the decimal digits of x (a non-negative int32) at buf[pos], returns the new pos. */
function putUint(buf, pos, x) {
  if (x < 10) { buf[pos] = 48 + x; return pos + 1; }
  let len = 0;
  for (let t = x; t > 0; t = (t / 10) | 0) len++;
  let p = pos + len;
  while (x > 0) {
    const q = (x / 10) | 0;
    buf[--p] = 48 + (x - q * 10);
    x = q;
  }
  return pos + len;
}

function writeText(path, u, v) {
  const E = u.length;
  const buf = Buffer.allocUnsafe(CHUNK * 24); // two int32 ids, a space and a newline fit in 24
  const fd = openSync(path, 'w');
  try {
    for (let off = 0; off < E; off += CHUNK) {
      const n = Math.min(CHUNK, E - off);
      let p = 0;
      for (let i = off; i < off + n; i++) {
        p = putUint(buf, p, u[i]);
        buf[p++] = 32;
        p = putUint(buf, p, v[i]);
        buf[p++] = 10;
      }
      writeSync(fd, buf, 0, p);
    }
  } finally {
    closeSync(fd);
  }
}

function sizeOr(path) {
  try { return statSync(path).size; } catch { return -1; }
}

/**
 * Makes (or reuses) <stem>.npy and <stem>.txt for E edges. Returns
 * { E, N, npy, txt, npyBytes, txtBytes, reused, genMs }.
 */
export function ensureGraph(stem, E, seed = DEFAULT_SEED, { force = false, log = () => {} } = {}) {
  const npy = `${stem}.npy`;
  const txt = `${stem}.txt`;
  const metaPath = `${stem}.meta.json`;
  const params = { generatorVersion: GENERATOR_VERSION, E, N: Math.floor(E / 10), seed };
  if (!force && existsSync(metaPath)) {
    try {
      const meta = JSON.parse(readFileSync(metaPath, 'utf8'));
      const same = Object.entries(params).every(([k, val]) => meta[k] === val);
      if (same && sizeOr(npy) === meta.npyBytes && sizeOr(txt) === meta.txtBytes) {
        return { ...params, npy, txt, npyBytes: meta.npyBytes, txtBytes: meta.txtBytes, islands: meta.islands, reused: true, genMs: 0 };
      }
    } catch { /* regenerate */ }
  }
  mkdirSync(dirname(stem), { recursive: true });
  log(`generating ${E.toLocaleString('en-US')} edges -> ${npy}, ${txt}`);
  const t0 = performance.now();
  const g = generateEdges(E, seed);
  // Write under temporary names so an interrupted run never leaves a half file that looks done.
  writeNpy(`${npy}.part`, g.u, g.v);
  writeText(`${txt}.part`, g.u, g.v);
  renameSync(`${npy}.part`, npy);
  renameSync(`${txt}.part`, txt);
  const meta = { ...params, npyBytes: sizeOr(npy), txtBytes: sizeOr(txt), islands: g.islands, isolatedByConstruction: g.isolatedByConstruction };
  writeFileSync(metaPath, JSON.stringify(meta, null, 2) + '\n');
  const genMs = performance.now() - t0;
  return { ...params, npy, txt, npyBytes: meta.npyBytes, txtBytes: meta.txtBytes, islands: g.islands, reused: false, genMs };
}

// Standalone: node bench/gen.mjs --edges 1000 --out /tmp/g [--seed 7] [--force]
if (import.meta.url === `file://${process.argv[1]}`) {
  const args = process.argv.slice(2);
  const get = (name, dflt) => {
    const i = args.indexOf(name);
    return i >= 0 ? args[i + 1] : dflt;
  };
  const E = Number(get('--edges', '1000'));
  const stem = get('--out', 'bench/out/sample');
  const seed = Number(get('--seed', String(DEFAULT_SEED)));
  const r = ensureGraph(stem, E, seed, { force: args.includes('--force'), log: console.error });
  console.log(JSON.stringify(r));
}
