/**
 * Corrected copies of binary graph files (.npy, .npz, .safetensors edge indices). Hopscope never
 * writes over a user's file: the copy gets a new name and is written only if that name is free.
 *
 * What a copy changes, each only when the check reported it:
 * - an E x 2 edge index is stored 2 x E;
 * - 1-based ids become 0-based;
 * - entries with out-of-range or non-integer ids are dropped;
 * - repeated (u, v) entries are dropped (the first stays);
 * - self-loops are dropped when the graph forbids them;
 * - missing reverse edges are appended when the graph is (or looks) undirected (not when no edge
 *   has its reverse: that graph may be directed, and only a declaration says which).
 * Feature values (NaN, Inf) are not touched: how to fill them is a modelling choice.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { FileReport } from '../core/checks/check-set';
import { DEFAULT_LIMITS } from '../core/formats/types';
import { openZip } from '../core/formats/zip';
import { crc32 } from '../core/formats/crc32';
import { encodeZip, replaceSafetensor, type ZipMember } from '../core/formats/write';
import { encodeNpyInt64 } from '../core/formats/npy-write';
import { checkPaths, type LoadOptions } from './load';
import type { FixedCopyResult } from '../../../common/protocol';
import { isTypedCheck } from '../core/typed/check';

export function suggestedTarget(file: string): string {
  const dir = path.dirname(file);
  const base = path.basename(file);
  const dot = base.indexOf('.');
  const stem = dot > 0 ? base.slice(0, dot) : base;
  const ext = dot > 0 ? base.slice(dot) : '';
  for (let i = 0; ; i++) {
    const candidate = path.join(dir, `${stem}.fixed${i ? `-${i}` : ''}${ext}`);
    if (!fs.existsSync(candidate)) return candidate;
  }
}

interface Plan {
  changes: string[];
  tensor: string;
  values: number[] | Int32Array;
  e: number;
}

function plan(file: string, report: FileReport | undefined, load: LoadOptions): Plan | { changes: string[]; unsupported: string } {
  const codes = new Set(report?.problems.map((p) => p.code) ?? []);
  const oneBased = codes.has('one-based-index');
  const r = checkPaths([file], oneBased ? { indexBase: 1 } : {}, load);
  const unreadable = r.files[0]?.problems.find((p) => p.code === 'unreadable');
  if (unreadable) return { changes: [], unsupported: unreadable.message };
  const abs = path.resolve(file);
  const g = r.graphs.find((x) => x.check.structureFile && path.resolve(x.check.structureFile) === abs);
  const s = g?.check.structure;
  const structurePart = g?.check.parts.find((p) => p.tensor.name === g.check.structureTensor);
  if (!g || !s || !structurePart) return { changes: [], unsupported: 'no edge index found in this file' };
  if (isTypedCheck(g.check)) return { changes: [], unsupported: 'corrected copies are not written for typed graphs (each relation counts ids in its own node types); fix the relations named in the problems' };
  if (structurePart.guess.role !== 'edge-index') return { changes: [], unsupported: 'corrected copies are written for edge indices; this file holds an adjacency matrix' };
  const problems = r.files[0]?.problems ?? [];
  const has = (code: string) => problems.some((p) => p.code === code);
  const selfLoopsForbidden = problems.some((p) => p.code === 'self-loops' && p.severity !== 'info');
  const changes: string[] = [];
  const t = structurePart.tensor;
  const original = t.shape[0] === 2 ? t.shape[1]! : t.shape[0]!;
  if (t.shape[0] !== 2) changes.push(`store the edge index as 2 x E instead of ${t.shape.join(' x ')}`);
  if (oneBased) changes.push('shift ids from 1-based to 0-based');
  const dropped = original - s.src.length;
  if (dropped > 0) changes.push(`drop ${dropped} entr${dropped === 1 ? 'y' : 'ies'} with out-of-range or non-integer ids`);

  // Keep the first occurrence of each (u, v); drop forbidden self-loops.
  const seen = new Set<number>();
  const n = s.figures.nodes;
  const src: number[] = [], dst: number[] = [];
  let dups = 0, loops = 0;
  for (let k = 0; k < s.src.length; k++) {
    const u = s.src[k]!, v = s.dst[k]!;
    if (u === v && selfLoopsForbidden) { loops++; continue; }
    const key = u * n + v;
    if (seen.has(key)) { dups++; continue; }
    seen.add(key);
    src.push(u); dst.push(v);
  }
  if (dups) changes.push(`drop ${dups} repeated entr${dups === 1 ? 'y' : 'ies'}`);
  if (loops) changes.push(`drop ${loops} self-loop${loops === 1 ? '' : 's'} (the graph forbids them)`);
  // An info means no pair has its reverse: maybe a directed graph, so a copy does not guess.
  const oneWayOnly = problems.some((p) => p.code === 'asymmetric-adjacency' && p.severity === 'info');
  if (has('asymmetric-adjacency') && !oneWayOnly) {
    let added = 0;
    const m = src.length;
    for (let k = 0; k < m; k++) {
      const u = src[k]!, v = dst[k]!;
      if (u === v || seen.has(v * n + u)) continue;
      seen.add(v * n + u);
      src.push(v); dst.push(u);
      added++;
    }
    if (added) changes.push(`add ${added} missing reverse edge${added === 1 ? '' : 's'}`);
  }
  if (oneWayOnly) changes.push('(no edge has its reverse, so none are added: declare the graph undirected in hopscope.json to have them added)');
  if (has('non-finite-features')) changes.push('(NaN/Inf feature values are left as they are: choose how to fill them)');
  // A graph checked on its touched ids (sparse ids) holds compact nodes: write the ids back.
  const ids = s.ids;
  const out = ids ? [...src, ...dst].map((u) => ids[u]!) : [...src, ...dst];
  return { changes, tensor: t.name, values: out, e: src.length };
}

/** `load`: the graph store's cache, size limit and exclusions (the worker); the command line and tests pass nothing. */
export function describeFixedCopy(file: string, report: FileReport | undefined, load: LoadOptions = {}): FixedCopyResult {
  const p = plan(file, report, load);
  if ('unsupported' in p) return { changes: [p.unsupported], suggestedTarget: suggestedTarget(file) };
  return { changes: p.changes.length ? p.changes : ['nothing to change'], suggestedTarget: suggestedTarget(file) };
}

export function writeFixedCopy(file: string, target: string | undefined, report: FileReport | undefined, load: LoadOptions = {}): FixedCopyResult {
  const p = plan(file, report, load);
  const out = target ?? suggestedTarget(file);
  if ('unsupported' in p) throw new Error(p.unsupported);
  if (path.resolve(out) === path.resolve(file)) throw new Error('refusing to overwrite the original file');
  const lower = file.toLowerCase();
  let bytes: Uint8Array;
  if (lower.endsWith('.npy')) {
    bytes = encodeNpyInt64([2, p.e], p.values);
  } else if (lower.endsWith('.npz')) {
    const original = new Uint8Array(fs.readFileSync(file));
    const zip = openZip(original, DEFAULT_LIMITS);
    const members: ZipMember[] = zip.entries.map((e) => {
      if (e.name === `${p.tensor}.npy`) {
        const data = encodeNpyInt64([2, p.e], p.values);
        return { name: e.name, method: 0, data, crc32: crc32(data), uncompressedSize: data.length };
      }
      const start = zip.dataOffset(e);
      return { name: e.name, method: e.method, data: original.subarray(start, start + e.compressedSize), crc32: e.crc32, uncompressedSize: e.uncompressedSize };
    });
    bytes = encodeZip(members);
  } else if (lower.endsWith('.safetensors')) {
    bytes = replaceSafetensor(new Uint8Array(fs.readFileSync(file)), p.tensor, [2, p.e], p.values);
  } else {
    throw new Error('corrected copies are written for .npy, .npz and .safetensors files; edit text files with the quick fixes');
  }
  // 'wx': fail if the target exists — never an overwrite.
  fs.writeFileSync(out, bytes, { flag: 'wx' });
  return { changes: p.changes, suggestedTarget: out, written: out };
}
