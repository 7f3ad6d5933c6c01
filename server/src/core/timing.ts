/**
 * Phase timers for the benchmark (HOPSCOPE_TIMINGS=1). Accumulates wall time per phase name;
 * costs one performance.now() pair per call, never per element.
 */
const totals = new Map<string, number>();

export function timed<T>(phase: string, fn: () => T): T {
  const t0 = performance.now();
  try {
    return fn();
  } finally {
    totals.set(phase, (totals.get(phase) ?? 0) + performance.now() - t0);
  }
}

export function phaseTotals(): Record<string, number> {
  return Object.fromEntries(totals);
}
