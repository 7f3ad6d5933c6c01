/**
 * Role inference: which tensor is the edge index, the adjacency, the features, … — from its name
 * first (the conventions graph libraries and data loaders use), then from dtype and shape.
 */
import type { DType, Role, Tensor } from '../formats/types';
import { pairRoleOf, type PairRole } from '../splits/edge-splits';

export type Split = 'train' | 'val' | 'test';

export interface RoleGuess {
  role: Role;
  /** For masks and split index lists. */
  split?: Split;
  /** True when a mask is given as a list of node ids rather than a boolean vector. */
  indexList?: boolean;
  /** For link-prediction pairs and their labels (roles edge-pairs / edge-labels). */
  pair?: PairRole;
  /** How the role was decided, for hovers and messages. */
  reason: 'declared' | 'name' | 'shape' | 'none';
}

const INTEGER_DTYPES: ReadonlySet<DType> = new Set([
  'int8', 'int16', 'int32', 'int64', 'uint8', 'uint16', 'uint32', 'uint64',
]);
const FLOAT_DTYPES: ReadonlySet<DType> = new Set(['float16', 'bfloat16', 'float32', 'float64']);

export const isIntegerDType = (d: DType): boolean => INTEGER_DTYPES.has(d);
export const isFloatDType = (d: DType): boolean => FLOAT_DTYPES.has(d);

/** Name patterns, matched against the last segment of a tensor name, lower-cased. */
const NAME_RULES: ReadonlyArray<[RegExp, Role]> = [
  [/^(.*[_-])?(edge_?index|edge_?indices|edge_?list|edgelist|edges|ei)$/, 'edge-index'],
  [/^(.*[_-])?(adj|adjacency|adj_?matrix|adj_?t)$|^a$/, 'adjacency'],
  [/^(.*[_-])?(edge_?attrs?|edge_?features?|edge_?feats?|edge_?embeddings?)$/, 'edge-features'],
  [/^(.*[_-])?(edge_?weights?|edge_?w)$|^(weights?|w)$/, 'edge-weight'],
  [/^(.*[_-])?(features|feats|node_?feat(ure)?s?|node_?attrs?|node_?embeddings?)$|^(x|feat|h|attr)$/, 'features'],
  [/^(.*[_-])?(labels|node_?labels?|targets|classes)$|^(y|label|target|class)$/, 'labels'],
  [/^(.*[_-])?mask$|^(train|val|valid|validation|dev|test)$/, 'mask'],
  [/^(.*[_-])?(train|val|valid|validation|dev|test)_?(idx|index|indices|ids|nodes)$/, 'mask'],
];

export function splitOf(name: string): Split | undefined {
  const n = lastSegment(name);
  if (/(^|[_-])train/.test(n)) return 'train';
  if (/(^|[_-])(val|valid|validation|dev)(?![a-z])/.test(n)) return 'val';
  if (/(^|[_-])test/.test(n)) return 'test';
  return undefined;
}

/** The part of a tensor name that carries its meaning: `masks.train` → `train`, `data/x` → `x`. */
export function lastSegment(name: string): string {
  const parts = name.toLowerCase().split(/[./\\]/).filter((p) => p.length > 0);
  return parts[parts.length - 1] ?? '';
}

export function roleFromName(name: string): Role | undefined {
  const seg = lastSegment(name);
  for (const [re, role] of NAME_RULES) if (re.test(seg)) return role;
  // Nested containers: `masks.train` names a mask through its parent.
  const lower = name.toLowerCase();
  if (/(^|[./])masks?[./]/.test(lower)) return 'mask';
  if (/(^|[./])splits?[./]/.test(lower)) return 'mask';
  return undefined;
}

export function guessRole(t: Tensor, file = ''): RoleGuess {
  if (!t.declaredRole) {
    // Link-prediction pairs first: `val_pos_edge_index` and `valid.edge` are not the structure.
    const pair = pairRoleOf(t.name, file);
    if (pair) return { role: pair.kind === 'labels' ? 'edge-labels' : 'edge-pairs', pair, reason: 'name' };
  }
  if (t.declaredRole) return withSplit(t, { role: t.declaredRole, reason: 'declared' });
  if (t.kind === 'sparse') return { role: 'adjacency', reason: 'shape' };
  const byName = roleFromName(t.name);
  if (byName && fitsRole(t, byName)) return withSplit(t, { role: byName, reason: 'name' });
  return withSplit(t, guessFromShape(t));
}

/**
 * Whether a tensor's rank fits a role its name suggests. Bare names such as `weight` or `w` are
 * common in model checkpoints (a layer's weight matrix): as an edge weight they must be a vector.
 */
function fitsRole(t: Tensor, role: Role): boolean {
  const rank = t.shape.length;
  const seg = lastSegment(t.name);
  switch (role) {
    case 'edge-weight':
      return rank === 1 || (rank === 2 && t.shape[1] === 1) || !/^(weights?|w)$/.test(seg);
    case 'mask':
      return rank === 1 || (rank === 2 && t.shape[1] === 1) || /mask/.test(seg);
    default:
      return true;
  }
}

function withSplit(t: Tensor, g: RoleGuess): RoleGuess {
  if (g.role !== 'mask') return g;
  const split = splitOf(t.name);
  const indexList = t.kind === 'dense' && t.dtype !== 'bool' && isIntegerDType(t.dtype) && !isZeroOne(t);
  return { ...g, ...(split ? { split } : {}), indexList };
}

function guessFromShape(t: Tensor): RoleGuess {
  if (t.kind !== 'dense' || t.strings) return { role: 'unknown', reason: 'none' };
  const s = t.shape;
  if (s.length === 2 && isIntegerDType(t.dtype)) {
    if (s[0] === 2 && s[1] !== 2) return { role: 'edge-index', reason: 'shape' };
    if (s[1] === 2 && s[0] !== 2) return { role: 'edge-index', reason: 'shape' };
  }
  if (s.length === 2 && s[0] === s[1] && s[0]! > 2 && (t.dtype === 'bool' || isZeroOne(t))) {
    return { role: 'adjacency', reason: 'shape' };
  }
  if (s.length === 1 && t.dtype === 'bool') return { role: 'mask', reason: 'shape' };
  return { role: 'unknown', reason: 'none' };
}

/** Whether every value is 0 or 1 (scans the data; used only for unnamed tensors and masks). */
function isZeroOne(t: Tensor): boolean {
  if (t.kind !== 'dense') return false;
  const d = t.data;
  for (let i = 0; i < d.length; i++) {
    const v = d[i]!;
    if (v !== 0 && v !== 1) return false;
  }
  return d.length > 0;
}
