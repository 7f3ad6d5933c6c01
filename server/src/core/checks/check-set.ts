/**
 * Checks a set of already-read files: forms graphs (manifest graphs, containers, sibling files in
 * one folder), runs the graph checks, and returns one report per file. Pure: paths are plain
 * strings, reading happens in server/src/node.
 */
import type { Format, Problem, ProblemCode, ReadResult, Severity, Tensor } from '../formats/types';
import { CODES } from '../../../../common/problem-codes';
import { checkGraph, type GraphCheck, type GraphOptions, type GraphPart } from './graph-check';
import type { Manifest, SeverityOverrides } from './manifest';
import { crossSplitProblems } from './cross-splits';
import { baseOf, dirOf } from '../paths';
import { guessRole, type RoleGuess } from './roles';
import { tensorStats } from './stats';
import { timed } from '../timing';
import type { CheckLimits } from './graph-check-types';
import { checkTypedGraph, isTypedCheck, typedGraphParts, typedRoles } from '../typed/check';
import { typedGraphsIn } from '../typed/recognise';
import { checkDatasetsIn, type CheckedDataset } from '../datasets/in-check-set';

export interface LoadedFile {
  path: string;
  format: Format;
  result?: ReadResult;
  /** Why the file could not be read. */
  error?: { message: string; line?: number; offset?: number };
}

export interface LoadedManifest {
  path: string;
  manifest?: Manifest;
  error?: string;
}

export type { TensorReport, FileReport } from '../../../../common/report';
import type { FileReport } from '../../../../common/report';

export interface CheckSetResult {
  files: FileReport[];
  /** Every graph checked, with the files it was made of (for hovers, panels and analyses). */
  graphs: Array<{ name: string; files: string[]; check: GraphCheck }>;
  /** Problems in manifests themselves (shown on the manifest file). */
  manifestProblems: Array<{ path: string; problem: Problem }>;
  /** Datasets of many graphs found and checked per graph (core/datasets). */
  datasets?: CheckedDataset[];
}

export interface CheckSetOptions extends GraphOptions {
  severity?: SeverityOverrides;
  /** Defaults below manifests (editor settings); the GraphOptions fields above override manifests (CLI flags). */
  defaults?: GraphOptions;
  /** The largest file read at all: bounds per-node memory too (CheckLimits). */
  maxFileBytes?: number;
  /**
   * The analysis commands' reading (CheckLimits.lean): plain graphs are checked only up to the bounds
   * pass and tensors get no value statistics. Typed graphs and datasets are checked in full.
   */
  lean?: boolean;
}


/** Joins a manifest-relative path to the manifest's folder, normalising `.` and `..`. */
export function resolveRelative(dir: string, rel: string): string {
  if (rel.startsWith('/') || /^[A-Za-z]:[\\/]/.test(rel)) return normalise(rel);
  return normalise(`${dir}/${rel}`);
}

export function normalise(p: string): string {
  const abs = p.startsWith('/');
  const out: string[] = [];
  for (const seg of p.replace(/\\/g, '/').split('/')) {
    if (seg === '' || seg === '.') continue;
    if (seg === '..' && out.length && out[out.length - 1] !== '..') out.pop();
    else out.push(seg);
  }
  const s = out.join('/');
  return abs ? `/${s}` : s || '.';
}

function isUnder(path: string, dir: string): boolean {
  const d = normalise(dir);
  return d === '.' ? !path.startsWith('/') && !path.startsWith('..') : normalise(path).startsWith(d.endsWith('/') ? d : d + '/');
}

/** Stem used to group sibling files: `docks_edge_index.npy` and `docks_x.npy` share `docks_`. */
function stemPrefix(file: string, tensorName: string): string {
  const stem = baseOf(file).replace(/\.[^.]*(\.gz)?$/, '').toLowerCase();
  const seg = tensorName.toLowerCase();
  return stem.endsWith(seg) ? stem.slice(0, stem.length - seg.length) : '';
}

/**
 * `focus`, when given, narrows the work to what a change can affect: files still group as they
 * would without it (every file is looked at), but only the graphs holding a file it accepts are
 * checked, and only those graphs' files and the accepted ones are reported. An editor re-checking
 * one changed file passes its folder's files and focuses on the change.
 */
export function checkSet(files: LoadedFile[], manifests: LoadedManifest[], cli: CheckSetOptions = {}, focus?: (path: string) => boolean): CheckSetResult {
  /** With a focus: the files of the graphs that were checked (normalised). */
  const inChecked = new Set<string>();
  const byPath = new Map(files.map((f) => [normalise(f.path), f]));
  const reports = new Map<string, FileReport>();
  const guesses = new Map<Tensor, RoleGuess>();
  const fileOf = new Map<Tensor, string>();
  for (const f of files) for (const t of f.result?.tensors ?? []) fileOf.set(t, f.path);
  const guess = (t: Tensor) => {
    let g = guesses.get(t);
    if (!g) { g = guessRole(t, fileOf.get(t) ?? ''); guesses.set(t, g); }
    return g;
  };

  for (const f of files) {
    const r: FileReport = { path: f.path, format: f.result?.format ?? f.format, tensors: [], graph: null, problems: [] };
    if (f.error) {
      r.problems.push({
        code: 'unreadable', severity: 'error', count: 1,
        message: `Cannot read ${baseOf(f.path)}: ${f.error.message}`,
        ...(f.error.line !== undefined ? { line: f.error.line, column: 1 } : {}),
      });
    }
    reports.set(normalise(f.path), r);
  }

  const manifestProblems: CheckSetResult['manifestProblems'] = [];
  const claimed = new Set<string>();
  const graphs: CheckSetResult['graphs'] = [];
  const roleOverride = new Map<Tensor, RoleGuess>();

  // Manifests closer to a file win: sort by depth, deepest first, when looking up defaults.
  const goodManifests = manifests
    .filter((m): m is LoadedManifest & { manifest: Manifest } => {
      if (m.error) {
        manifestProblems.push({ path: m.path, problem: { code: 'unreadable', severity: 'error', count: 1, message: m.error } });
        return false;
      }
      return m.manifest !== undefined;
    })
    .sort((a, b) => normalise(b.path).split('/').length - normalise(a.path).split('/').length);
  for (const m of goodManifests) {
    const sev = { ...m.manifest.severity, ...(cli.severity ?? {}) };
    for (const message of m.manifest.renamed) {
      const p = applySeverity({ code: 'renamed-key', severity: CODES['renamed-key'].severity, count: 1, message }, sev);
      if (p) manifestProblems.push({ path: m.path, problem: p });
    }
  }
  const defaultsFor = (path: string): { options: GraphOptions; severity: SeverityOverrides } => {
    const options: GraphOptions = {};
    const severity: SeverityOverrides = {};
    for (const m of [...goodManifests].reverse()) { // shallow first, deeper ones override
      if (isUnder(path, dirOf(m.path))) {
        Object.assign(options, m.manifest.defaults);
        Object.assign(severity, m.manifest.severity);
      }
    }
    return { options, severity };
  };

  const run = (name: string, parts: GraphPart[], options: GraphOptions, severity: SeverityOverrides,
    checker: (o: GraphOptions, l: CheckLimits) => GraphCheck = (o, l) => checkGraph(parts, o, cli.lean ? { ...l, lean: true } : l)) => {
    if (focus) {
      if (!parts.some((p) => focus(p.file))) return;
      for (const p of parts) inChecked.add(normalise(p.file));
    }
    const merged: GraphOptions = { ...definedOnly(cli.defaults ?? {}), ...options, ...definedOnly(cli) };
    const check = timed('checks', () => checker(merged, cli.maxFileBytes !== undefined ? { maxFileBytes: cli.maxFileBytes } : {}));
    const fileSet = [...new Set(parts.map((p) => p.file))];
    graphs.push({ name, files: fileSet, check });
    const sev = { ...severity, ...(cli.severity ?? {}) };
    for (const { file, problem } of check.problems) {
      const r = reports.get(normalise(file));
      const p = applySeverity(problem, sev);
      if (r && p) r.problems.push(p);
    }
    if (check.structureFile && check.figures) {
      const r = reports.get(normalise(check.structureFile));
      if (r && !r.graph) r.graph = check.figures;
      if (r && check.edgeSplits && !r.edgeSplits) r.edgeSplits = check.edgeSplits;
      if (r && isTypedCheck(check) && !r.typed) r.typed = check.typed.summary;
    }
  };

  // 1. Graphs declared in manifests.
  for (const m of goodManifests) {
    const dir = dirOf(m.path);
    for (const g of m.manifest.graphs) {
      const parts: GraphPart[] = [];
      let missing = false;
      for (const ref of g.parts) {
        const path = resolveRelative(dir, ref.file);
        const f = byPath.get(path);
        if (!f) {
          manifestProblems.push({ path: m.path, problem: { code: 'unreadable', severity: 'error', count: 1,
            message: `Graph "${g.name}": ${ref.file} was not found or is not a supported graph file.` } });
          missing = true;
          continue;
        }
        if (!f.result) { missing = true; continue; }
        const tensors = ref.tensor === undefined ? f.result.tensors : f.result.tensors.filter((t) => t.name === ref.tensor);
        if (ref.tensor !== undefined && tensors.length === 0) {
          manifestProblems.push({ path: m.path, problem: { code: 'unreadable', severity: 'error', count: 1,
            message: `Graph "${g.name}": ${ref.file} has no tensor "${ref.tensor}" (it has ${f.result.tensors.map((t) => t.name).join(', ') || 'none'}).` } });
          missing = true;
          continue;
        }
        // With a whole container referenced for one role, pick the tensor that fits that role.
        const pick = tensors.length === 1 ? tensors : tensors.filter((t) => guess(t).role === ref.role).slice(0, 1);
        for (const t of pick.length ? pick : tensors.slice(0, 1)) {
          const gs: RoleGuess = {
            ...guess(t), role: ref.role, reason: 'declared', ...(ref.split ? { split: ref.split } : {}), ...(ref.pair ? { pair: ref.pair } : {}),
          };
          if (!ref.pair) delete gs.pair;
          roleOverride.set(t, gs);
          parts.push({ file: f.path, tensor: t, guess: gs, ...(f.result.hints ? { hints: f.result.hints } : {}) });
        }
        claimed.add(path);
      }
      if (parts.length && !(missing && !parts.some((p) => p.guess.role === 'edge-index' || p.guess.role === 'adjacency'))) {
        const d = defaultsFor(m.path);
        run(g.name, parts, { ...d.options, ...g.options }, d.severity);
      }
    }
  }

  // 1b. Typed graphs (core/typed): manifest "nodeTypes"/"relations", SRC__REL__DST names, typed objects.
  const typedLookup = (m: string, f: string) => byPath.get(resolveRelative(dirOf(m), f));
  for (const tg of typedGraphsIn(files.filter((f) => !claimed.has(normalise(f.path))), goodManifests, typedLookup, manifestProblems)) {
    for (const p of tg.files) claimed.add(normalise(p));
    for (const [t, g] of typedRoles(tg)) roleOverride.set(t, g);
    const d = defaultsFor(tg.structureFile);
    run(tg.name, typedGraphParts(tg), d.options, d.severity, (o, l) => checkTypedGraph(tg, o, l));
  }

  // 1c. Datasets of many graphs (core/datasets): their files are claimed and checked per graph.
  const datasets = timed('datasets', () => checkDatasetsIn(files.filter((f) => f.result && !claimed.has(normalise(f.path))),
    (p) => ({ ...definedOnly(cli.defaults ?? {}), ...defaultsFor(p).options, ...definedOnly(cli), ...(cli.lean ? { isomorphism: false } : {}) }), focus,
    { manifests: goodManifests, lookup: typedLookup, problems: manifestProblems }));
  for (const d of datasets) {
    for (const p of d.files) { claimed.add(normalise(p)); if (d.checked && focus) inChecked.add(normalise(p)); }
    for (const { file, problem } of d.problems) {
      const r = reports.get(normalise(file));
      const q = applySeverity(problem, { ...defaultsFor(file).severity, ...(cli.severity ?? {}) });
      if (r && q) r.problems.push(q);
    }
    if (d.summary) { const r = reports.get(normalise(d.summary.file)); if (r) r.dataset = d.summary.summary; }
    // Tensor tables: the dataset's roles; offsets, counts and graph ids are no node tensors.
    for (const p of d.files) {
      for (const t of byPath.get(normalise(p))?.result?.tensors ?? []) {
        const role = d.roles.find((x) => normalise(x.file) === normalise(p) && x.tensor === t.name)?.role ?? 'unknown';
        roleOverride.set(t, { role, reason: 'declared' });
      }
    }
  }

  // 2. Everything else: containers and sibling groups, folder by folder.
  const byDir = new Map<string, LoadedFile[]>();
  for (const f of files) {
    if (!f.result || claimed.has(normalise(f.path))) continue;
    const d = dirOf(normalise(f.path));
    if (!byDir.has(d)) byDir.set(d, []);
    byDir.get(d)!.push(f);
  }
  const partsOf = (f: LoadedFile): GraphPart[] =>
    f.result!.tensors.map((t) => ({ file: f.path, tensor: t, guess: guess(t), ...(f.result!.hints ? { hints: f.result!.hints } : {}) }));
  const isStructure = (p: GraphPart) => p.guess.role === 'edge-index' || p.guess.role === 'adjacency';

  for (const [, dirFiles] of [...byDir].sort(([a], [b]) => (a < b ? -1 : 1))) {
    dirFiles.sort((a, b) => (a.path < b.path ? -1 : 1));
    const structureFiles = dirFiles.filter((f) => partsOf(f).some(isStructure));
    const loose = dirFiles.filter((f) => !structureFiles.includes(f));
    const used = new Set<LoadedFile>();
    // Loose per-node/per-edge files join a structure file when they share its name prefix
    // (`docks_x.npy` with `docks_edge_index.npy`), or when the folder holds a single structure file.
    for (const sf of structureFiles) {
      const sParts = partsOf(sf);
      const structure = sParts.find(isStructure)!;
      const prefix = stemPrefix(sf.path, structure.tensor.name);
      const joined = loose.filter((lf) => {
        if (used.has(lf)) return false;
        const lp = partsOf(lf);
        if (lp.every((p) => p.guess.role === 'unknown')) return false;
        if (structureFiles.length === 1) return true;
        return prefix !== '' && lp.some((p) => stemPrefix(lf.path, p.tensor.name) === prefix);
      });
      joined.forEach((f) => used.add(f));
      const parts = [...sParts, ...joined.flatMap(partsOf)];
      const d = defaultsFor(sf.path);
      run(baseOf(sf.path), parts, d.options, d.severity);
    }
    for (const lf of loose) {
      if (used.has(lf)) continue;
      const d = defaultsFor(lf.path);
      run(baseOf(lf.path), partsOf(lf), d.options, d.severity);
    }
  }

  // Link-prediction splits saved one file per split: compared across the files of a folder.
  for (const { file, problem } of crossSplitProblems(graphs.map((g) => g.check))) {
    const r = reports.get(normalise(file));
    const p = applySeverity(problem, { ...defaultsFor(file).severity, ...(cli.severity ?? {}) });
    if (r && p) r.problems.push(p);
  }

  // 3. Tensor tables.
  const reported = focus ? files.filter((f) => focus(f.path) || inChecked.has(normalise(f.path))) : files;
  for (const f of reported) {
    const r = reports.get(normalise(f.path))!;
    for (const t of f.result?.tensors ?? []) {
      const g = roleOverride.get(t) ?? guess(t);
      r.tensors.push({ name: t.name, dtype: t.dtype, shape: [...t.shape], role: g.role, ...(cli.lean ? NO_STATS : tensorStats(t)) });
    }
    // Reader problems (e.g. a non-integer id on one line) honour overrides too.
    const sev = { ...defaultsFor(f.path).severity, ...(cli.severity ?? {}) };
    for (const p of f.result?.problems ?? []) {
      const q = applySeverity(p, sev);
      if (q) r.problems.push(q);
    }
    r.problems.sort(byImportance);
  }

  return { files: reported.map((f) => reports.get(normalise(f.path))!), graphs, manifestProblems, ...(datasets.length ? { datasets } : {}) };
}

/** A lean reading's tensor table entries: no values looked at. */
const NO_STATS = { min: null, max: null, sum: null, nonFinite: 0 };

function applySeverity(p: Problem, overrides: SeverityOverrides): Problem | undefined {
  const o = overrides[p.code];
  if (o === 'off') return undefined;
  return o ? { ...p, severity: o } : p;
}

const RANK: Record<Severity, number> = { error: 0, warning: 1, info: 2 };
const CODE_ORDER = Object.keys(CODES) as ProblemCode[];

function byImportance(a: Problem, b: Problem): number {
  return RANK[a.severity] - RANK[b.severity] || CODE_ORDER.indexOf(a.code) - CODE_ORDER.indexOf(b.code);
}

function definedOnly(o: CheckSetOptions): GraphOptions {
  const out: GraphOptions = {};
  if (o.directed !== undefined) out.directed = o.directed;
  if (o.nodes !== undefined) out.nodes = o.nodes;
  if (o.indexBase !== undefined) out.indexBase = o.indexBase;
  if (o.selfLoops !== undefined) out.selfLoops = o.selfLoops;
  if (o.sendingRow !== undefined) out.sendingRow = o.sendingRow;
  return out;
}
