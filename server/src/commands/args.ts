/**
 * The one argument parser of every `hopscope` command. Node's `util.parseArgs` splits the words
 * (long and short forms, `--flag=value`, `--` ending the options) and types the values; the token
 * pass below is as strict as parseArgs's own strict mode (unknown options, a missing value, a value
 * given to a switch) but says so in our words, and also refuses an option given twice. Every
 * mistake is a `UsageError`, which `guarded` turns into the command's usage text and exit code 2.
 */
import { parseArgs } from 'node:util';
import type { CliIo } from './types';
import { UsageError } from './types';
import { GraphLoadError } from '../node/graph-input';
import type { CheckSetOptions } from '../core/checks/check-set';

/** One option: a switch (`boolean`) or an option that takes a value (`string`). */
export interface OptionSpec {
  type: 'string' | 'boolean';
  short?: string;
}
export type OptionSpecs = Readonly<Record<string, OptionSpec>>;

/** Parsed values by long name: strings for value options, `true` for switches given. */
export type OptionValues<S extends OptionSpecs> = {
  [K in keyof S]?: S[K]['type'] extends 'string' ? string : boolean;
};

export interface ParsedCommandLine<S extends OptionSpecs> {
  values: OptionValues<S>;
  /** The words that are not options (files, paths), in order. */
  positionals: string[];
}

/** A value that reads as a negative number is a value, not an option (`--node -1` is then refused by its own check). */
const NEGATIVE_NUMBER = /^-\d/;

/**
 * Parses `argv` against `specs` (keys are long names without the dashes). Throws `UsageError`:
 * "unknown option --x", "--x needs a value", "--x takes no value", "--x given twice".
 */
export function parseCommandLine<S extends OptionSpecs>(argv: readonly string[], specs: S): ParsedCommandLine<S> {
  const options: Record<string, { type: 'string' | 'boolean'; short?: string }> = {};
  for (const [name, spec] of Object.entries(specs)) options[name] = spec.short ? { type: spec.type, short: spec.short } : { type: spec.type };
  // strict: false so that the checks below, not parseArgs, word every mistake.
  const { tokens } = parseArgs({ args: [...argv], options, strict: false, allowPositionals: true, tokens: true });
  const values: Record<string, string | boolean> = {};
  const positionals: string[] = [];
  for (const t of tokens) {
    if (t.kind === 'positional') { positionals.push(t.value); continue; }
    if (t.kind !== 'option') continue; // the `--` that ends the options
    const spec = Object.hasOwn(specs, t.name) ? specs[t.name] : undefined;
    const shown = t.rawName.startsWith('--') ? t.rawName : spec ? `${t.rawName} (--${t.name})` : t.rawName;
    if (!spec) throw new UsageError(`unknown option ${t.rawName}`);
    if (spec.type === 'boolean') {
      if (t.value !== undefined) throw new UsageError(`${shown} takes no value`);
      values[t.name] = true;
      continue;
    }
    const v = t.value;
    if (v === undefined || (!t.inlineValue && v.startsWith('-') && !NEGATIVE_NUMBER.test(v))) {
      throw new UsageError(`${shown} needs a value`);
    }
    if (values[t.name] !== undefined) throw new UsageError(`--${t.name} given twice`);
    values[t.name] = v;
  }
  return { values: values as OptionValues<S>, positionals };
}

/** `--num-nodes` and `--index-base`: understood by every command that reads a graph. */
export const GRAPH_OPTIONS = {
  'num-nodes': { type: 'string' },
  'index-base': { type: 'string' },
} as const satisfies OptionSpecs;

/** The graph declarations of the command line, checked. */
export function graphOptions(values: { 'num-nodes'?: string; 'index-base'?: string }): CheckSetOptions {
  const out: CheckSetOptions = {};
  if (values['num-nodes'] !== undefined) out.nodes = wholeNumber('--num-nodes', values['num-nodes']);
  const base = values['index-base'];
  if (base !== undefined) out.indexBase = oneOf('--index-base', base, ['0', '1'] as const) === '1' ? 1 : 0;
  return out;
}

/**
 * The analysis commands (field, wl, bottlenecks, spectrum, compare): the graph options plus
 * `--check`. Without it a graph is read through the bounds pass only (CheckSetOptions.lean) and
 * each analysis builds just the structures it uses; with it every check of `hopscope check` runs
 * first, as before. The analysis results are the same either way.
 */
export const ANALYSIS_OPTIONS = {
  ...GRAPH_OPTIONS,
  check: { type: 'boolean' },
} as const satisfies OptionSpecs;

/** Usage line of `--check` (the same in every analysis command). */
export const CHECK_USAGE = `  --check               run every check of hopscope check on the graph first (duplicates, symmetry,
                        components, ...; the error note then counts them all). Without it only ids
                        out of range and mismatched lengths are looked for: the results are the same`;

/** The graph declarations plus the reading `--check` asks for. */
export function analysisOptions(values: { 'num-nodes'?: string; 'index-base'?: string; check?: boolean }): CheckSetOptions {
  return { ...graphOptions(values), ...(values.check ? {} : { lean: true }) };
}

/** `v` when it is one of `allowed`, else a UsageError listing them ("must be a, b or c"). */
export function oneOf<T extends string>(flag: string, v: string, allowed: readonly T[]): T {
  if ((allowed as readonly string[]).includes(v)) return v as T;
  const list = allowed.length === 1 ? allowed[0] : `${allowed.slice(0, -1).join(', ')} or ${allowed[allowed.length - 1]}`;
  throw new UsageError(`${flag} must be ${list}, got "${v}"`);
}

export function wholeNumber(flag: string, v: string, min = 0, max = Number.MAX_SAFE_INTEGER): number {
  if (!/^\d+$/.test(v)) throw new UsageError(`${flag} must be a non-negative whole number, got "${v}"`);
  const x = Number(v);
  if (!Number.isSafeInteger(x) || x < min || x > max) {
    throw new UsageError(min === 0 ? `${flag} must be at most ${max}, got ${v}` : `${flag} must be between ${min} and ${max}, got ${v}`);
  }
  return x;
}

/** `wholeNumber` of an option that may be left out. */
export function optionalWhole(flag: string, v: string | undefined, min = 0, max?: number): number | undefined {
  return v === undefined ? undefined : wholeNumber(flag, v, min, max);
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
