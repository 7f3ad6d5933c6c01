/**
 * The PyTorch table of allowed calls: the only Python callables a `torch.save` pickle may "call"
 * when Hopscope parses it (pickle.ts never runs anything; a call on this table builds a plain value,
 * any other call is refused with its name). Each entry is a constructor of data from data: tensor
 * and storage rebuilds, torch.Size / torch.device, OrderedDict and the builtin containers, and the
 * copyreg helpers that stand for `cls.__new__` (a record, never the class called). Also the reader
 * of torch.save's persistent ids (storages).
 *
 * The torch rebuild signatures and storage classes per docs/references.md §1.6.
 */
import { UnreadableError, type DType } from './types';
import { CallArgumentError, type AllowedCall, type AllowedCalls } from './pickle';
import {
  describe, isNode, itemsOf, newDict, newObjectOf, own, qualifiedName,
  type PyDict, type PyGlobal, type PySparse, type PyStorage, type PyTensor, type PyValue,
} from './pickle-values';


/** torch storage class → [element type, torch's type name] (docs/references.md §1.6); undefined: known, not read. */
const STORAGE_TYPES: Record<string, [DType | undefined, string]> = {
  FloatStorage: ['float32', 'float32'],
  DoubleStorage: ['float64', 'float64'],
  HalfStorage: ['float16', 'float16'],
  BFloat16Storage: ['bfloat16', 'bfloat16'],
  LongStorage: ['int64', 'int64'],
  IntStorage: ['int32', 'int32'],
  ShortStorage: ['int16', 'int16'],
  CharStorage: ['int8', 'int8'],
  ByteStorage: ['uint8', 'uint8'],
  BoolStorage: ['bool', 'bool'],
  UntypedStorage: ['uint8', 'uint8'],
  ComplexFloatStorage: [undefined, 'complex64'],
  ComplexDoubleStorage: [undefined, 'complex128'],
  ComplexHalfStorage: [undefined, 'complex32'],
  QInt8Storage: [undefined, 'qint8'],
  QUInt8Storage: [undefined, 'quint8'],
  QInt32Storage: [undefined, 'qint32'],
  QUInt4x2Storage: [undefined, 'quint4x2'],
  QUInt2x4Storage: [undefined, 'quint2x4'],
};

/** `torch.<attr>` dtype objects → element type. */
const TORCH_DTYPES: Record<string, [DType | undefined, string]> = {
  float32: ['float32', 'float32'], float: ['float32', 'float32'],
  float64: ['float64', 'float64'], double: ['float64', 'float64'],
  float16: ['float16', 'float16'], half: ['float16', 'float16'],
  bfloat16: ['bfloat16', 'bfloat16'],
  int64: ['int64', 'int64'], long: ['int64', 'int64'],
  int32: ['int32', 'int32'], int: ['int32', 'int32'],
  int16: ['int16', 'int16'], short: ['int16', 'int16'],
  int8: ['int8', 'int8'], uint8: ['uint8', 'uint8'], bool: ['bool', 'bool'],
  uint16: ['uint16', 'uint16'], uint32: ['uint32', 'uint32'], uint64: ['uint64', 'uint64'],
  complex64: [undefined, 'complex64'], cfloat: [undefined, 'complex64'],
  complex128: [undefined, 'complex128'], cdouble: [undefined, 'complex128'],
  complex32: [undefined, 'complex32'], chalf: [undefined, 'complex32'],
};

// ---------------------------------------------------------------------------------------------
// Argument checks (a failed check refuses the stream, naming the call)

function argFail(message: string): never {
  throw new CallArgumentError(message);
}

function intArg(v: PyValue | undefined, what: string): number {
  if (typeof v === 'boolean') return v ? 1 : 0;
  if (typeof v !== 'number' || !Number.isSafeInteger(v)) argFail(`${what} is ${describe(v)}, not an integer`);
  return v;
}

function intTuple(v: PyValue | undefined, what: string): number[] {
  const items = itemsOf(v);
  if (!items || Array.isArray(v)) argFail(`${what} is ${describe(v)}, not a tuple of integers`);
  if (items.length > 64) argFail(`${what} has ${items.length} dimensions`);
  return items.map((x, i) => intArg(x, `${what}[${i}]`));
}

function storageArg(v: PyValue | undefined): PyStorage {
  if (!isNode(v, 'storage')) argFail(`the storage argument is ${describe(v)}, not a storage`);
  return v;
}

function dtypeOfGlobal(v: PyValue | undefined): [DType | undefined, string] | undefined {
  if (!isNode(v, 'global') || v.module !== 'torch') return undefined;
  return own(TORCH_DTYPES, v.name);
}

function rebuildTensor(args: PyValue[], withDtype: boolean): PyTensor {
  if (args.length < 4) argFail(`expects at least 4 arguments, got ${args.length}`);
  const storage = storageArg(args[0]);
  const offset = intArg(args[1], 'the storage offset');
  const size = intTuple(args[2], 'the size');
  const stride = intTuple(args[3], 'the stride');
  if (stride.length !== size.length) argFail(`the size has ${size.length} dimensions but the stride has ${stride.length}`);
  let dtype = storage.dtype;
  let typeName = storage.typeName;
  if (withDtype) {
    const d = dtypeOfGlobal(args[6]);
    if (!d) argFail(`the dtype argument is ${describe(args[6])}, not a torch dtype`);
    [dtype, typeName] = d;
  }
  return {
    kind: 'tensor', storage, offset, size, stride, dtype, typeName,
    requiresGrad: args[4] === true, parameter: false,
  };
}

function rebuildParameter(args: PyValue[]): PyTensor {
  const data = args[0];
  if (!isNode(data, 'tensor')) argFail(`the data argument is ${describe(data)}, not a tensor`);
  return { ...data, requiresGrad: args[1] === true, parameter: true };
}

function layoutName(v: PyValue | undefined): string {
  if (isNode(v, 'layout')) return v.name.replace(/^torch\./, '');
  if (isNode(v, 'global') && v.module === 'torch') return v.name;
  argFail(`the layout argument is ${describe(v)}, not a tensor layout`);
}

function rebuildSparse(args: PyValue[]): PySparse {
  const layout = layoutName(args[0]);
  const data = itemsOf(args[1]);
  if (!data) argFail(`the data argument is ${describe(args[1])}, not a tuple`);
  const tensorAt = (i: number, what: string): PyTensor => {
    const t = data[i];
    if (!isNode(t, 'tensor')) argFail(`${what} is ${describe(t)}, not a tensor`);
    return t;
  };
  if (layout === 'sparse_coo') {
    if (data.length < 3) argFail('sparse COO data needs (indices, values, size)');
    return { kind: 'sparse', layout, parts: [tensorAt(0, 'indices'), tensorAt(1, 'values')], size: intTuple(data[2], 'the size') };
  }
  if (layout === 'sparse_csr' || layout === 'sparse_csc' || layout === 'sparse_bsr' || layout === 'sparse_bsc') {
    if (data.length < 4) argFail(`${layout} data needs (compressed indices, plain indices, values, size)`);
    return {
      kind: 'sparse', layout,
      parts: [tensorAt(0, 'the compressed indices'), tensorAt(1, 'the plain indices'), tensorAt(2, 'values')],
      size: intTuple(data[3], 'the size'),
    };
  }
  argFail(`sparse layout ${layout} is not read`);
}

function dictFrom(className: string, args: PyValue[]): PyDict {
  const d = newDict(className);
  const src = args[0];
  if (src === undefined) return d;
  if (isNode(src, 'dict')) {
    for (const [k, v] of src.map) d.map.set(k, v);
    return d;
  }
  const pairs = itemsOf(src);
  if (!pairs) argFail(`cannot make a dict from ${describe(src)}`);
  for (const p of pairs) {
    const kv = itemsOf(p);
    if (!kv || kv.length !== 2) argFail(`a dict item is ${describe(p)}, not a pair`);
    d.map.set(kv[0]!, kv[1]!);
  }
  return d;
}

function itemsArg(args: PyValue[], what: string): PyValue[] {
  if (args.length === 0) return [];
  const items = itemsOf(args[0]);
  if (items) return items.slice();
  if (isNode(args[0], 'dict')) return [...args[0].map.keys()];
  argFail(`cannot make a ${what} from ${describe(args[0])}`);
}

function latin1Bytes(s: string, what: string): Uint8Array {
  const out = new Uint8Array(s.length);
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    if (c > 0xff) argFail(`${what}: character ${c} is outside latin-1`);
    out[i] = c;
  }
  return out;
}

function bytesFromText(args: PyValue[], what: string): Uint8Array {
  const s = args[0];
  if (s === undefined) return new Uint8Array(0);
  if (s instanceof Uint8Array) return s.slice();
  if (typeof s !== 'string') argFail(`${what} of ${describe(s)}`);
  const enc = typeof args[1] === 'string' ? args[1].toLowerCase().replace(/[-_]/g, '') : 'utf8';
  if (enc === 'latin1' || enc === 'iso88591') return latin1Bytes(s, what);
  if (enc === 'utf8') return new TextEncoder().encode(s);
  if (enc === 'ascii') return latin1Bytes(s, what);
  argFail(`${what} with the encoding ${String(args[1])}`);
}

const SAFE_CALLS: Record<string, AllowedCall> = {
  'torch._utils._rebuild_tensor': (a) => rebuildTensor(a, false),
  'torch._utils._rebuild_tensor_v2': (a) => rebuildTensor(a, false),
  'torch._utils._rebuild_tensor_v3': (a) => rebuildTensor(a, true),
  'torch._utils._rebuild_parameter': rebuildParameter,
  'torch._utils._rebuild_parameter_with_state': rebuildParameter,
  'torch._utils._rebuild_sparse_tensor': rebuildSparse,
  'torch._utils._rebuild_sparse_csr_tensor': rebuildSparse,
  /** Tensor subclasses: `_rebuild_from_type_v2(func, new_type, args, state)`; the subclass is not made. */
  'torch._tensor._rebuild_from_type_v2': (a) => {
    const fn = a[0];
    const inner = itemsOf(a[2]);
    if (!isNode(fn, 'global')) argFail(`the rebuild function is ${describe(fn)}`);
    const name = qualifiedName(fn);
    const ctor = name.startsWith('torch._utils._rebuild_') ? own(SAFE_CALLS, name) : undefined;
    if (!ctor) argFail(`refused to load ${name}: it is not one of the tensor rebuilds Hopscope reads`);
    if (!inner) argFail(`the arguments are ${describe(a[2])}, not a tuple`);
    return ctor(inner);
  },
  'torch.serialization._get_layout': (a) => {
    if (typeof a[0] !== 'string') argFail(`the layout name is ${describe(a[0])}`);
    return { kind: 'layout', name: a[0] };
  },
  'torch.Size': (a) => ({ kind: 'tuple', items: itemsArg(a, 'torch.Size') }),
  'torch.device': (a) => {
    if (!a.every((x) => typeof x === 'string' || typeof x === 'number')) argFail('arguments are not a device name');
    return { kind: 'record', className: 'torch.device', args: a.slice() };
  },
  'collections.OrderedDict': (a) => dictFrom('collections.OrderedDict', a),
  'builtins.dict': (a) => dictFrom('builtins.dict', a),
  'builtins.list': (a) => itemsArg(a, 'list'),
  'builtins.tuple': (a) => ({ kind: 'tuple', items: itemsArg(a, 'tuple') }),
  'builtins.set': (a) => ({ kind: 'set', items: itemsArg(a, 'set'), frozen: false }),
  'builtins.frozenset': (a) => ({ kind: 'set', items: itemsArg(a, 'frozenset'), frozen: true }),
  'builtins.slice': (a) => {
    if (a.length < 1 || a.length > 3 || !a.every((x) => x === null || typeof x === 'number')) argFail('arguments are not slice bounds');
    return { kind: 'record', className: 'builtins.slice', args: a.slice() };
  },
  'builtins.bytearray': (a) => bytesFromText(a, 'bytearray'),
  'builtins.bytes': (a) => bytesFromText(a, 'bytes'),
  '_codecs.encode': (a) => bytesFromText(a, '_codecs.encode'),
  /** copyreg.__newobj__(cls, *args) is cls.__new__(cls, *args): a record, never a call. */
  'copyreg.__newobj__': (a) => {
    const cls = a[0];
    if (!isNode(cls, 'global')) argFail(`the class is ${describe(cls)}`);
    return newTorchObject(cls, a.slice(1));
  },
  'copyreg.__newobj_ex__': (a) => {
    const cls = a[0];
    if (!isNode(cls, 'global')) argFail(`the class is ${describe(cls)}`);
    const args = itemsOf(a[1]) ?? [];
    return newTorchObject(cls, args.slice());
  },
  /** copyreg._reconstructor(cls, base, state): base.__new__(cls[, state]). Never calls the class. */
  'copyreg._reconstructor': (a) => {
    const cls = a[0];
    if (!isNode(cls, 'global')) argFail(`the class is ${describe(cls)}`);
    const base = a[1];
    if (isNode(base, 'global') && qualifiedName(base) !== 'builtins.object') {
      return { kind: 'record', className: qualifiedName(cls), args: [a[2] ?? null] };
    }
    return { kind: 'record', className: qualifiedName(cls), args: [] };
  },
};

/** `cls.__new__(cls, *args)` as data: torch.Size is a tuple, the rest as newObjectOf. */
function newTorchObject(cls: PyGlobal, args: PyValue[]): PyValue {
  if (qualifiedName(cls) === 'torch.Size') {
    const items = itemsOf(args[0]);
    return { kind: 'tuple', items: items ? items.slice() : [] };
  }
  return newObjectOf(cls, args);
}

/** The table the PyTorch reader parses data.pkl with. */
export const PT_ALLOWED_CALLS: AllowedCalls = {
  calls: SAFE_CALLS,
  description: 'the PyTorch tensor/storage rebuilds or plain containers Hopscope reads',
  newObject: newTorchObject,
};

/** Whether a global may be called by a stream (for tests and messages). */
export function isAllowedCall(qualified: string): boolean {
  return own(SAFE_CALLS, qualified) !== undefined;
}

// ---------------------------------------------------------------------------------------------
// Persistent ids

/**
 * Persistent-id reader for torch.save: `('storage', torch.XStorage, key, location, numel)`
 * (docs/references.md §1.6). The same key always yields the same storage node, so tensors sharing a
 * storage share one node (and the reader decodes the member once).
 */
export function torchPersistentLoad(): (pid: PyValue, offset: number) => PyStorage {
  const seen = new Map<string, PyStorage>();
  return (pid, offset) => {
    const bad: (why: string) => never = (why) => {
      throw new UnreadableError(`a persistent id ${why} (pickle byte ${offset})`, offset);
    };
    const items = isNode(pid, 'tuple') ? pid.items : undefined;
    if (!items) bad(`is ${describe(pid)}, not a tuple`);
    if (items[0] !== 'storage') {
      bad(`of type ${typeof items[0] === 'string' ? JSON.stringify(items[0].slice(0, 40)) : describe(items[0])} is not a storage`);
    }
    if (items.length < 5) bad(`has ${items.length} fields; ('storage', type, key, location, numel) has 5`);
    const cls = items[1];
    const key = items[2];
    const location = items[3];
    const numel = items[4];
    let typeInfo: [DType | undefined, string] | undefined;
    let storageType = describe(cls);
    if (isNode(cls, 'global')) {
      storageType = qualifiedName(cls);
      if (cls.module === 'torch' || cls.module === 'torch.cuda') typeInfo = own(STORAGE_TYPES, cls.name) ?? dtypeOfGlobal(cls);
    }
    if (!typeInfo) bad(`names ${storageType}, which is not a torch storage class`);
    if (typeof key !== 'string' || key.length === 0 || key.length > 256 || /[/\\]/.test(key)) bad('has a bad storage key');
    if (typeof numel !== 'number' || !Number.isSafeInteger(numel) || numel < 0) bad(`has a bad element count ${describe(numel)}`);
    const prev = seen.get(key);
    if (prev) {
      if (prev.storageType !== storageType || prev.numel !== numel) {
        bad(`reuses storage key '${key}' with a different type or size`);
      }
      return prev;
    }
    const s: PyStorage = {
      kind: 'storage', key, storageType, dtype: typeInfo[0], typeName: typeInfo[1],
      untyped: isNode(cls, 'global') && cls.name === 'UntypedStorage',
      location: typeof location === 'string' ? location : String(describe(location)),
      numel,
    };
    seen.set(key, s);
    return s;
  };
}
