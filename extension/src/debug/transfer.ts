/**
 * The conversation with a paused debuggee, over an `evaluate` function: run the inspect snippet,
 * then, when needed, copy the saved bytes through further evaluations. No `vscode` and no file
 * system here (both are passed in), so the DAP tests run exactly this code against debugpy.
 */
import {
  errorMessage, formatMB, jsInspectSnippet, npzFromJsReply, parseReply, pythonChunkSnippet, pythonCleanupSnippet,
  pythonInspectSnippet, replyJson, type JsReply, type PythonReply, type TensorInfo,
} from './snippets';

/** DAP `evaluate` in the paused frame; resolves to the response's `result`. */
export type Evaluate = (expression: string, context: 'repl' | 'clipboard') => Promise<string>;

export type Fetched = {
  tensors: TensorInfo[];
  /** Entries of a graph object that were left out, and why. */
  notes: string[];
} & (
  /** The debuggee's own file, readable here: show it, then delete it. */
  | { path: string; bytes?: undefined }
  /** The .npz bytes, to be written to a local temporary file. */
  | { bytes: Uint8Array; path?: undefined }
);

/** A sentence for the user when the value cannot be inspected. */
export interface Refused { refused: string }

/** js-debug cuts 'repl' results at 100 000 characters; longer replies come through 'clipboard'. */
export const JS_REPL_CHARS = 90_000;
/** debugpy does not cut 'clipboard' results; it cuts 'repl' results at 65 536 characters. */
export const PY_CLIPBOARD_CHUNK = 8 * 1024 * 1024;
export const PY_REPL_CHUNK = 32 * 1024;

export interface PythonFetchOptions {
  label: string;
  /** Largest total array size the debuggee may save (hopscope.maxFileSizeMB). */
  maxFileBytes: number;
  /** Largest file copied through `evaluate` (hopscope.debug.maxInlineMB). */
  maxInlineBytes: number;
  /** True when `path` is readable from here and has `size` bytes, i.e. it is the debuggee's file. */
  reachable: (path: string, size: number) => boolean;
  onProgress?: (done: number, total: number) => void;
}

export async function fetchFromPython(evaluate: Evaluate, expression: string, o: PythonFetchOptions): Promise<Fetched | Refused> {
  const r = replyJson<PythonReply>(parseReply(await evaluate(pythonInspectSnippet(expression, { label: o.label, maxBytes: o.maxFileBytes }), 'repl')));
  if (r.error) return { refused: errorMessage(r, expression) };
  if (o.reachable(r.path, r.size)) return { path: r.path, tensors: r.tensors, notes: r.notes };
  // The debuggee's temporary folder is not ours: copy its file through the debugger, then remove it there.
  try {
    if (r.size > o.maxInlineBytes) {
      return {
        refused: `\`${expression}\` was saved in the debuggee (${formatMB(r.size)}), but that file cannot be read from here, and copying it through the debugger is limited to ${formatMB(o.maxInlineBytes)} (hopscope.debug.maxInlineMB).`,
      };
    }
    const bytes = await copyThroughEvaluate(evaluate, r.path, r.size, o.onProgress);
    return { bytes, tensors: r.tensors, notes: r.notes };
  } finally {
    await evaluate(pythonCleanupSnippet(r.path), 'repl').catch(() => undefined);
  }
}

/**
 * Reads `size` bytes of the debuggee's file in base64 chunks: large chunks through 'clipboard'
 * (not cut short), small ones through 'repl' when the adapter refuses or cuts the former.
 */
export async function copyThroughEvaluate(
  evaluate: Evaluate, path: string, size: number, onProgress?: (done: number, total: number) => void,
  chunks: { clipboard: number; repl: number } = { clipboard: PY_CLIPBOARD_CHUNK, repl: PY_REPL_CHUNK },
): Promise<Uint8Array> {
  const bytes = new Uint8Array(size);
  let offset = 0;
  let context: 'repl' | 'clipboard' = 'clipboard';
  while (offset < size) {
    const n = Math.min(context === 'clipboard' ? chunks.clipboard : chunks.repl, size - offset);
    let part: Uint8Array | undefined;
    try {
      part = parseReply(await evaluate(pythonChunkSnippet(path, offset, n), context)).head;
    } catch (e) {
      if (context === 'repl') throw e;
    }
    if (!part || part.length !== n) {
      if (context === 'repl') throw new Error(`the debuggee sent ${part?.length ?? 0} of ${n} bytes at offset ${offset}`);
      context = 'repl';
      continue;
    }
    bytes.set(part, offset);
    offset += n;
    onProgress?.(offset, size);
  }
  return bytes;
}

export interface JsFetchOptions {
  label: string;
  /** Largest total array size sent back (hopscope.debug.maxInlineMB). */
  maxInlineBytes: number;
}

export async function fetchFromJavaScript(evaluate: Evaluate, expression: string, o: JsFetchOptions): Promise<Fetched | Refused> {
  let reply = parseReply(await evaluate(jsInspectSnippet(expression, { label: o.label, maxBytes: o.maxInlineBytes, maxChars: JS_REPL_CHARS }), 'repl'));
  let head = replyJson<JsReply>(reply);
  if (!head.error && head.more !== undefined) {
    reply = parseReply(await evaluate(jsInspectSnippet(expression, { label: o.label, maxBytes: o.maxInlineBytes, maxChars: null }), 'clipboard'));
    head = replyJson<JsReply>(reply);
  }
  if (head.error) return { refused: errorMessage(head, expression) };
  if (head.more !== undefined) return { refused: `The debugger sent only the size of \`${expression}\`, not its values.` };
  return {
    bytes: npzFromJsReply(head, reply.body ?? new Uint8Array(0)),
    tensors: head.tensors.map(({ name, dtype, shape }) => ({ name, dtype, shape })),
    notes: head.notes,
  };
}
