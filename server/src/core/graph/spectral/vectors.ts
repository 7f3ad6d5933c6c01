/**
 * Small helpers over Float64Array vectors, shared by the Lanczos solver and the Laplacian spectrum.
 * Plain loops, no allocation.
 */

export function dot(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i]! * b[i]!;
  return s;
}

export function norm(a: Float64Array): number {
  return Math.sqrt(dot(a, a));
}

/** y ← y + alpha·x */
export function axpy(alpha: number, x: Float64Array, y: Float64Array): void {
  for (let i = 0; i < y.length; i++) y[i]! += alpha * x[i]!;
}

/** x ← alpha·x */
export function scale(alpha: number, x: Float64Array): void {
  for (let i = 0; i < x.length; i++) x[i]! *= alpha;
}

/**
 * One classical Gram–Schmidt sweep: c[i] += ⟨Q[i], x⟩ for every i, then x ← x − Σ ⟨Q[i], x⟩ Q[i].
 * Rows go in blocks so the block of x stays in cache while every Q[i] streams past once per phase.
 */
const SWEEP_ROWS = 2048;
export function gramSchmidtSweep(x: Float64Array, Q: Float64Array[], c: Float64Array | null): void {
  const q = Q.length;
  if (q === 0) return;
  const n = x.length;
  const d = new Float64Array(q);
  for (let i0 = 0; i0 < n; i0 += SWEEP_ROWS) {
    const i1 = Math.min(n, i0 + SWEEP_ROWS);
    for (let k = 0; k < q; k++) {
      const v = Q[k]!;
      let s = 0;
      for (let i = i0; i < i1; i++) s += v[i]! * x[i]!;
      d[k]! += s;
    }
  }
  for (let i0 = 0; i0 < n; i0 += SWEEP_ROWS) {
    const i1 = Math.min(n, i0 + SWEEP_ROWS);
    for (let k = 0; k < q; k++) {
      const v = Q[k]!;
      const h = d[k]!;
      for (let i = i0; i < i1; i++) x[i]! -= h * v[i]!;
    }
  }
  if (c) for (let k = 0; k < q; k++) c[k]! += d[k]!;
}

/** Sign convention: the first entry with magnitude ≥ 1e-3·max|x| is positive. */
export function fixSign(x: Float64Array): void {
  let mx = 0;
  for (let i = 0; i < x.length; i++) mx = Math.max(mx, Math.abs(x[i]!));
  for (let i = 0; i < x.length; i++) {
    if (Math.abs(x[i]!) >= 1e-3 * mx) {
      if (x[i]! < 0) scale(-1, x);
      return;
    }
  }
}
