// The demo's typed graph (called by scripts/make-demo.mjs): demo/citywide/citywide.npz, the whole
// Larkhaven network with typed nodes and relations, read by Hopscope as a typed graph because its
// tensors are named TYPE__key and SRC__REL__DST. All data here is invented.
//
// Node types: rider (30), dock (12), district (4), depot (3, planned service depots not linked yet).
// Relations: rider__rides_from__dock (and its reverse dock__serves__rider),
// dock__near__dock (docks within walking distance, both directions), dock__located_in__district.
// Planted:
// - rider__rides_from__dock row 1 holds 21 once: a rider id (riders run 0..29) written where a dock
//   id belongs (docks run 0..11): index-out-of-range, which a bound over all 49 nodes would pass;
// - dock__located_in__district has no relation back from district to dock: one-way-relation, and
//   district sends nothing (type-never-sends);
// - depot has labels but no relation at all: type-never-receives (a warning, since it carries
//   labels), type-never-sends, and its 3 depots are isolated.

/** Writes the typed demo with the generator's writers. `rand` is a local deterministic generator. */
export function writeTypedDemo({ write, npy, npz, i64, bool }) {
  let state = 20261203;
  const rand = () => ((state = (Math.imul(state, 1664525) + 1013904223) >>> 0) / 2 ** 32);
  const RIDERS = 30, DOCKS = 12, DISTRICTS = 4, DEPOTS = 3;

  // Each rider starts rides from two or three docks.
  const rides = [];
  for (let r = 0; r < RIDERS; r++) {
    const k = 2 + Math.floor(rand() * 2);
    const seen = new Set();
    while (seen.size < k) seen.add(Math.floor(rand() * DOCKS));
    for (const d of [...seen].sort((a, b) => a - b)) rides.push([r, d]);
  }
  const reverse = rides.map(([r, d]) => [d, r]);
  // Planted: one ride's dock written as a rider id (21: a valid rider, not a dock).
  const planted = rides.map((e) => [...e]);
  planted[17][1] = 21;

  // Docks on a ring, each near the next two (both directions).
  const near = [];
  for (let d = 0; d < DOCKS; d++) for (const s of [1, 2]) { const e = (d + s) % DOCKS; near.push([d, e], [e, d]); }
  const locatedIn = Array.from({ length: DOCKS }, (_, d) => [d, Math.floor(d / 3)]);

  const cols = (pairs) => { const a = new Array(2 * pairs.length); pairs.forEach(([u, v], k) => { a[k] = u; a[pairs.length + k] = v; }); return i64(a); };
  const f32 = (rows, c) => Float32Array.from({ length: rows * c }, () => Math.round(rand() * 100) / 100);
  const rel = (pairs) => npy('<i8', [2, pairs.length], cols(pairs));

  write('citywide/citywide.npz', npz({
    rider__rides_from__dock: rel(planted),
    dock__serves__rider: rel(reverse),
    dock__near__dock: rel(near),
    dock__located_in__district: rel(locatedIn),
    rider__x: npy('<f4', [RIDERS, 3], f32(RIDERS, 3)),
    dock__x: npy('<f4', [DOCKS, 4], f32(DOCKS, 4)),
    dock__y: npy('<i8', [DOCKS], i64(Array.from({ length: DOCKS }, (_, d) => d % 3))),
    dock__train_mask: npy('|b1', [DOCKS], bool(Array.from({ length: DOCKS }, (_, d) => d < 8))),
    district__x: npy('<f4', [DISTRICTS, 2], f32(DISTRICTS, 2)),
    district__num_nodes: npy('<i8', [], i64([DISTRICTS])),
    depot__x: npy('<f4', [DEPOTS, 2], f32(DEPOTS, 2)),
    depot__y: npy('<i8', [DEPOTS], i64([0, 1, 1])),
  }));
}
