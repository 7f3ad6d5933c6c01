/**
 * Shared bits of the analysis commands (`field`, `wl`, `compare`, `bottlenecks`, `spectrum`): argument parsing,
 * loading a graph into its undirected view, and exit-code handling.
 */
import type { CliIo } from './types';
import { UsageError } from './types';
import { GraphLoadError, loadGraph, type LoadedGraph } from '../node/graph-input';
import type { CheckSetOptions } from '../core/checks/check-set';
import { undirectedView, type UndirectedGraph } from '../core/graph/structure/undirected';

export interface ParsedArgs {
  files: string[];
  /** Values of flags that take one. */
  values: Map<string, string>;
  /** Flags without a value that were given. */
  switches: Set<string>;
  options: CheckSetOptions;
}

/**
 * Parses `argv` given the flags that take a value and the plain switches. `--num-nodes` and
 * `--index-base` are understood by every structure command (they go into `options`).
 */
export function parseArgs(argv: string[], valueFlags: readonly string[], switchFlags: readonly string[]): ParsedArgs {
  const out: ParsedArgs = { files: [], values: new Map(), switches: new Set(), options: {} };
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!;
    const eq = arg.startsWith('--') ? arg.indexOf('=') : -1;
    const flag = eq > 0 ? arg.slice(0, eq) : arg;
    const take = (): string => {
      if (eq > 0) return arg.slice(eq + 1);
      const v = argv[i + 1];
      if (v === undefined || (v.startsWith('-') && !/^-\d/.test(v))) throw new UsageError(`${flag} needs a value`);
      i++;
      return v;
    };
    if (flag === '--num-nodes') {
      out.options.nodes = wholeNumber('--num-nodes', take());
    } else if (flag === '--index-base') {
      const v = take();
      if (v !== '0' && v !== '1') throw new UsageError(`--index-base must be 0 or 1, got "${v}"`);
      out.options.indexBase = v === '1' ? 1 : 0;
    } else if (valueFlags.includes(flag)) {
      if (out.values.has(flag)) throw new UsageError(`${flag} given twice`);
      out.values.set(flag, take());
    } else if (switchFlags.includes(flag)) {
      if (eq > 0) throw new UsageError(`${flag} takes no value`);
      out.switches.add(flag);
    } else if (arg.startsWith('-') && arg !== '-') {
      throw new UsageError(`unknown option ${arg}`);
    } else {
      out.files.push(arg);
    }
  }
  return out;
}

export function wholeNumber(flag: string, v: string, min = 0, max = Number.MAX_SAFE_INTEGER): number {
  if (!/^\d+$/.test(v)) throw new UsageError(`${flag} must be a non-negative whole number, got "${v}"`);
  const x = Number(v);
  if (!Number.isSafeInteger(x) || x < min || x > max) {
    throw new UsageError(min === 0 ? `${flag} must be at most ${max}, got ${v}` : `${flag} must be between ${min} and ${max}, got ${v}`);
  }
  return x;
}

export function optionalWhole(args: ParsedArgs, flag: string, min = 0, max?: number): number | undefined {
  const v = args.values.get(flag);
  return v === undefined ? undefined : wholeNumber(flag, v, min, max);
}

export interface StructureInput {
  loaded: LoadedGraph;
  g: UndirectedGraph;
  /** Added to node ids in output, so they read as written in the file. */
  base: number;
}

export function loadUndirected(file: string, options: CheckSetOptions, command: string, io: CliIo): StructureInput {
  const loaded = loadGraph(file, options);
  const errors = loaded.problems.filter((p) => p.severity === 'error').length;
  if (errors) {
    io.err(`hopscope ${command}: note: ${file} has ${errors} error${errors === 1 ? '' : 's'} (see hopscope check); the analysis uses the edges that are in range\n`);
  }
  return { loaded, g: undirectedView(loaded.fwd, loaded.rev), base: loaded.figures.indexBase };
}

/** Runs a command body, turning usage and load errors into exit code 2 with a message. */
export function guarded(command: string, usage: string, io: CliIo, body: () => number): number {
  try {
    return body();
  } catch (e) {
    if (e instanceof UsageError) { io.err(`hopscope ${command}: ${e.message}\n\n${usage}\n`); return 2; }
    if (e instanceof GraphLoadError) { io.err(`hopscope ${command}: ${e.message}\n`); return 2; }
    throw e;
  }
}

/** ANSI styling when the terminal allows colour. */
export function styler(io: CliIo): (code: number, s: string) => string {
  return (code, s) => (io.color ? `\x1b[${code}m${s}\x1b[0m` : s);
}

export const plural = (k: number, word: string, many = `${word}s`): string => `${k} ${k === 1 ? word : many}`;
