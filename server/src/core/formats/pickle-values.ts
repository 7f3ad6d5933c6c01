/**
 * The values a pickle stream describes, as plain data: what the opcode machine (pickle.ts) builds
 * and what the readers walk. Nothing here refers to live Python objects: a class or function is a
 * name (PyGlobal), an object of a class that is not on a call table is a record of its state.
 * The torch nodes (storage, tensor, sparse, layout) are made only by the PyTorch call table
 * (pt-allowed.ts).
 */
import type { DType } from './types';

/** Python tuple (kept apart from lists, which are plain arrays). */
export interface PyTuple { kind: 'tuple'; items: PyValue[] }
/** dict / OrderedDict. Keys keep insertion order; str and int keys compare by value. */
export interface PyDict {
  kind: 'dict';
  map: Map<PyValue, PyValue>;
  /** 'builtins.dict' or 'collections.OrderedDict'. */
  className: string;
  /** Instance attributes set by BUILD (e.g. a state_dict's `_metadata`). */
  attrs?: PyValue;
}
export interface PySet { kind: 'set'; items: PyValue[]; frozen: boolean }
/** An integer outside ±2^53: sign and magnitude in hex (exact), plus a float approximation. */
export interface PyBigInt { kind: 'bigint'; approx: number; hex: string }
/** A reference to a module attribute (class, function, dtype). Harmless: it is never resolved. */
export interface PyGlobal { kind: 'global'; module: string; name: string }
/**
 * An object of a class that is not on the allow-list, made without calling user code
 * (cls.__new__), or a small allow-listed object such as torch.device / slice.
 */
export interface PyRecord {
  kind: 'record';
  className: string;
  /** Arguments given to __new__ (or to the allow-listed constructor). */
  args: PyValue[];
  /** What BUILD set (usually a dict of attributes; may be a (dict, slots) tuple). */
  state?: PyValue;
  /** Items added by APPEND(S) (list subclasses). */
  listItems?: PyValue[];
  /** Items added by SETITEM(S) (dict subclasses). */
  dictItems?: Map<PyValue, PyValue>;
}
/** A storage named by a torch.save persistent id: `('storage', torch.XStorage, key, location, numel)`. */
export interface PyStorage {
  kind: 'storage';
  /** Member name under `<root>/data/`. */
  key: string;
  /** e.g. 'torch.FloatStorage'. */
  storageType: string;
  /** Element type, or undefined for element types Hopscope does not read (see `typeName`). */
  dtype: DType | undefined;
  /** torch's name of the element type, e.g. 'float32', 'complex64'. */
  typeName: string;
  /** True for torch.UntypedStorage: `numel` counts bytes. */
  untyped: boolean;
  location: string;
  numel: number;
}
/** `torch._utils._rebuild_tensor_v2(storage, offset, size, stride, …)` and relatives. */
export interface PyTensor {
  kind: 'tensor';
  storage: PyStorage;
  /** In elements. */
  offset: number;
  size: number[];
  /** In elements. */
  stride: number[];
  /** Element type when it differs from the storage's (untyped storages, _rebuild_tensor_v3). */
  dtype: DType | undefined;
  typeName: string;
  requiresGrad: boolean;
  /** Rebuilt through torch._utils._rebuild_parameter*. */
  parameter: boolean;
}
/** `torch._utils._rebuild_sparse_tensor(layout, data)` (and the 1.13 CSR variant). */
export interface PySparse {
  kind: 'sparse';
  /** 'sparse_coo', 'sparse_csr', 'sparse_csc', … */
  layout: string;
  /** coo: [indices, values]; csr: [crow_indices, col_indices, values]; csc: [ccol, row, values]. */
  parts: PyTensor[];
  size: number[];
}
/** A tensor layout object (torch.sparse_coo), from `torch.serialization._get_layout(name)`. */
export interface PyLayout { kind: 'layout'; name: string }

export type PyValue =
  | null | boolean | number | string
  | Uint8Array
  | PyValue[]
  | PyTuple | PyDict | PySet | PyBigInt | PyGlobal | PyRecord
  | PyStorage | PyTensor | PySparse | PyLayout;

type PyObject = Exclude<PyValue, null | boolean | number | string | Uint8Array | PyValue[]>;

export function isNode<K extends PyObject['kind']>(v: PyValue | undefined, kind: K): v is Extract<PyObject, { kind: K }> {
  return typeof v === 'object' && v !== null && !Array.isArray(v) && !(v instanceof Uint8Array) && v.kind === kind;
}

/** A table lookup that ignores inherited properties (a stream may name 'constructor' or '__proto__'). */
export function own<T>(table: Readonly<Record<string, T>>, key: string): T | undefined {
  return Object.prototype.hasOwnProperty.call(table, key) ? table[key] : undefined;
}

export function qualifiedName(g: PyGlobal): string {
  return `${g.module}.${g.name}`;
}

/** A short description of a value for messages ("a list", "the global os.system"). */
export function describe(v: PyValue | undefined): string {
  if (v === undefined) return 'nothing';
  if (v === null) return 'None';
  if (typeof v === 'boolean') return 'a bool';
  if (typeof v === 'number') return 'a number';
  if (typeof v === 'string') return 'a string';
  if (v instanceof Uint8Array) return 'bytes';
  if (Array.isArray(v)) return 'a list';
  switch (v.kind) {
    case 'global': return `the global ${qualifiedName(v)}`;
    case 'record': return `an object of ${v.className}`;
    case 'bigint': return 'a large integer';
    default: return `a ${v.kind}`;
  }
}

/** Items of a list, tuple or set, or undefined for anything else. */
export function itemsOf(v: PyValue | undefined): PyValue[] | undefined {
  if (Array.isArray(v)) return v;
  if (isNode(v, 'tuple') || isNode(v, 'set')) return v.items;
  return undefined;
}

export function newDict(className: string): PyDict {
  return { kind: 'dict', map: new Map(), className };
}

/**
 * `cls.__new__(cls, *args)` as data, for the builtin classes whose __new__ makes an empty container
 * (their items come by SETITEMS/APPENDS), else a record of the arguments. Never calls anything.
 */
export function newObjectOf(cls: PyGlobal, args: PyValue[]): PyValue {
  const name = qualifiedName(cls);
  if (name === 'collections.OrderedDict' || name === 'builtins.dict') return newDict(name);
  if (name === 'builtins.list') return [];
  if (name === 'builtins.set') return { kind: 'set', items: [], frozen: false };
  if (name === 'builtins.tuple') {
    const items = itemsOf(args[0]);
    return { kind: 'tuple', items: items ? items.slice() : [] };
  }
  return { kind: 'record', className: name, args };
}
