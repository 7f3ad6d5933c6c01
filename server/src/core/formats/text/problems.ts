/** Problems found while reading, collected by kind: every occurrence counted, the first located. */
import { MAX_LOCATIONS, type Problem, type ProblemCode, type ProblemLocation, type Severity } from '../types';

interface ProblemEntry {
  code: ProblemCode;
  severity: Severity;
  tensor: string | undefined;
  summary: (count: number, first: ProblemLocation | undefined) => string;
  count: number;
  locations: ProblemLocation[];
}

/**
 * Collects problems of a few kinds, counting every occurrence and keeping the first locations.
 * Callers ask `wants(key)` before building a location, so hot loops allocate nothing once the
 * location list of a kind is full.
 */
export class ProblemCollector {
  private readonly entries = new Map<string, ProblemEntry>();

  wants(key: string): boolean {
    const e = this.entries.get(key);
    return !e || e.locations.length < MAX_LOCATIONS;
  }

  /** Registers a kind of problem (once) and records occurrences (one by default). */
  add(
    key: string,
    code: ProblemCode,
    severity: Severity,
    tensor: string | undefined,
    summary: (count: number, first: ProblemLocation | undefined) => string,
    location?: ProblemLocation,
    occurrences = 1,
  ): void {
    let entry = this.entries.get(key);
    if (!entry) {
      entry = { code, severity, tensor, summary, count: 0, locations: [] };
      this.entries.set(key, entry);
    }
    entry.count += occurrences;
    if (location && entry.locations.length < MAX_LOCATIONS) entry.locations.push(location);
  }

  get size(): number {
    return this.entries.size;
  }

  problems(): Problem[] {
    const out: Problem[] = [];
    for (const e of this.entries.values()) {
      const first = e.locations[0];
      const p: Problem = {
        code: e.code,
        severity: e.severity,
        message: e.summary(e.count, first),
        count: e.count,
      };
      if (e.tensor !== undefined) p.tensor = e.tensor;
      if (first?.line !== undefined) p.line = first.line;
      if (first?.column !== undefined) p.column = first.column;
      if (e.locations.length > 0) p.locations = e.locations;
      out.push(p);
    }
    return out;
  }
}

export const plural = (n: number, one: string, many = one + 's'): string => `${n} ${n === 1 ? one : many}`;
