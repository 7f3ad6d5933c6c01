/**
 * "Inspect as Graph": while a debug session is paused, saves the value of a variable or selected
 * expression to a temporary .npz (a DAP `evaluate` of the snippets in ./snippets, driven by ./transfer) and opens
 * it in the tensor viewer, where the language server checks it like any saved file.
 *
 * Python (debugpy) writes the file itself with numpy.savez; when that file is not reachable from
 * the extension host (debuggee in a container or on another machine) its bytes come back through
 * `evaluate`, in chunks, below hopscope.debug.maxInlineMB. JavaScript sends the numbers back and the
 * .npz is written here. Every temporary file is deleted when its viewer closes, when its session
 * ends (if no viewer shows it), and when the extension is deactivated.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import * as vscode from 'vscode';
import type { LanguageClient } from 'vscode-languageclient/node';
import { FileSummaryRequest } from '../../../common/protocol';
import { readSetting } from '../../../common/settings';
import { VIEW_TYPE } from '../viewer';
import { labelFor, languageOfSession, type TensorInfo } from './snippets';
import { fetchFromJavaScript, fetchFromPython, type Evaluate, type Fetched, type Refused } from './transfer';

export const INSPECT_COMMAND = 'hopscope.inspectAsGraph';
/** Prefix of every temporary folder (one per inspected value, so no sibling files are bundled with it). */
export const TEMP_PREFIX = 'hopscope-dbg-';

/** What the command resolves to. The UI shows messages; tests read this. */
export interface InspectOutcome {
  ok: boolean;
  message?: string;
  /** The temporary .npz (file URI) now shown in the viewer. */
  uri?: string;
  tensors?: TensorInfo[];
  /** Entries of a graph object that were left out, and why. */
  notes?: string[];
  /** Problem codes the checks found in the file (when the language server answered). */
  problems?: string[];
}

/** Argument VS Code passes to commands in the Variables view context menu. */
interface VariablesContext {
  sessionId?: string;
  variable?: { name?: string; evaluateName?: string };
}

interface Paused {
  session: vscode.DebugSession;
  frameId: number;
}

export function registerInspect(context: vscode.ExtensionContext, getClient: () => LanguageClient | undefined): void {
  const temps = new TempFiles();
  context.subscriptions.push(
    temps,
    vscode.commands.registerCommand(INSPECT_COMMAND, (arg?: unknown) => inspect(arg, temps, getClient)),
    vscode.window.tabGroups.onDidChangeTabs((e) => { if (e.closed.length) temps.sweep((f) => f.shown); }),
    vscode.debug.onDidTerminateDebugSession((s) => temps.sweep((f) => f.shown && f.sessionId === s.id)),
  );
}

async function inspect(arg: unknown, temps: TempFiles, getClient: () => LanguageClient | undefined): Promise<InspectOutcome> {
  const paused = await pausedFrame();
  if (typeof paused === 'string') return tell(paused, 'info');
  const lang = languageOfSession(paused.session.type);
  if (!lang) {
    return tell(`Inspect as Graph works in Python (debugpy) and JavaScript/TypeScript debug sessions; this session is of type '${paused.session.type}'.`, 'info');
  }
  const expression = (await expressionFrom(arg))?.trim();
  if (!expression) return tell('Select an expression in the editor, or pick a variable in the Variables view, to inspect it as a graph.', 'info');

  const label = labelFor(expression);
  const cfg = vscode.workspace.getConfiguration('hopscope');
  const limits = {
    inline: readSetting('debug.maxInlineMB', cfg.get('debug.maxInlineMB')) * 1024 * 1024,
    file: readSetting('maxFileSizeMB', cfg.get('maxFileSizeMB')) * 1024 * 1024,
  };

  const evaluate: Evaluate = async (expr, ctx) => {
    const res = await paused.session.customRequest('evaluate', { expression: expr, frameId: paused.frameId, context: ctx }) as { result?: unknown } | undefined;
    return String(res?.result ?? '');
  };
  let fetched: Fetched | Refused;
  try {
    fetched = await vscode.window.withProgress(
      { location: vscode.ProgressLocation.Notification, title: `Hopscope: reading \`${expression}\` from the debugger` },
      (progress) => {
        if (lang === 'javascript') return fetchFromJavaScript(evaluate, expression, { label, maxInlineBytes: limits.inline });
        let last = 0;
        return fetchFromPython(evaluate, expression, {
          label, maxFileBytes: limits.file, maxInlineBytes: limits.inline, reachable: sameFile,
          onProgress: (done, total) => { progress.report({ message: `${Math.round((100 * done) / total)} %`, increment: (100 * (done - last)) / total }); last = done; },
        });
      },
    );
  } catch (e) {
    return tell(`Hopscope could not evaluate \`${expression}\` in the paused frame: ${evaluateError(e)}`, 'error');
  }
  if ('refused' in fetched) return tell(fetched.refused, 'warning');
  let saved: Saved;
  try {
    saved = { file: fetched.path ?? writeTemp(label, fetched.bytes!), tensors: fetched.tensors, notes: fetched.notes };
  } catch (e) {
    return tell(`Hopscope could not write the temporary file: ${(e as Error).message}`, 'error');
  }
  temps.add(saved.file, paused.session.id);

  const uri = vscode.Uri.file(saved.file);
  try {
    await vscode.commands.executeCommand('vscode.openWith', uri, VIEW_TYPE, { viewColumn: vscode.ViewColumn.Beside, preview: false });
  } catch (e) {
    temps.remove(saved.file);
    return tell(`Hopscope could not open the saved value: ${(e as Error).message}`, 'error');
  }
  temps.markShown(saved.file);
  if (saved.notes.length) void vscode.window.showInformationMessage(`Inspected \`${expression}\`; left out: ${saved.notes.join('; ')}.`);
  const problems = await problemCodes(getClient(), uri, expression);
  return { ok: true, uri: uri.toString(), tensors: saved.tensors, notes: saved.notes, ...(problems ? { problems } : {}) };
}

function tell(message: string, level: 'info' | 'warning' | 'error'): InspectOutcome {
  if (level === 'info') void vscode.window.showInformationMessage(message);
  else if (level === 'warning') void vscode.window.showWarningMessage(message);
  else void vscode.window.showErrorMessage(message);
  return { ok: false, message };
}

/** The paused frame the user is looking at (the top frame when a thread is selected), or why there is none. */
async function pausedFrame(): Promise<Paused | string> {
  const item = vscode.debug.activeStackItem;
  if (!item) {
    return vscode.debug.activeDebugSession
      ? 'The debugger is not paused: stop at a breakpoint, then inspect a value.'
      : 'No debug session: start debugging and stop at a breakpoint to inspect a value as a graph.';
  }
  if ('frameId' in item) return { session: item.session, frameId: item.frameId };
  try {
    const trace = await item.session.customRequest('stackTrace', { threadId: item.threadId, startFrame: 0, levels: 1 }) as { stackFrames?: Array<{ id: number }> };
    const top = trace?.stackFrames?.[0];
    if (top) return { session: item.session, frameId: top.id };
  } catch { /* the thread is running */ }
  return 'The selected thread is not paused: stop at a breakpoint, then inspect a value.';
}

async function expressionFrom(arg: unknown): Promise<string | undefined> {
  if (typeof arg === 'string') return arg;
  const v = (arg as VariablesContext | undefined)?.variable;
  if (v && (v.evaluateName || v.name)) return v.evaluateName || v.name;
  const fromEditor = editorExpression();
  if (fromEditor) return fromEditor;
  return vscode.window.showInputBox({
    title: 'Inspect as Graph',
    prompt: 'Expression to evaluate in the paused frame and inspect',
    placeHolder: 'data.edge_index',
  });
}

/** The selection, else the dotted name ending at the word under the cursor (`data.edge_index`). */
function editorExpression(): string | undefined {
  const editor = vscode.window.activeTextEditor;
  if (!editor) return undefined;
  const doc = editor.document;
  if (!editor.selection.isEmpty) return doc.getText(editor.selection);
  const at = editor.selection.active;
  const dotted = doc.getWordRangeAtPosition(at, /[A-Za-z_$][\w$]*(?:\.[A-Za-z_$][\w$]*)*/);
  const word = doc.getWordRangeAtPosition(at, /[A-Za-z_$][\w$]*/);
  if (!dotted || !word) return undefined;
  return doc.getText(new vscode.Range(dotted.start, word.end));
}

interface Saved {
  file: string;
  tensors: TensorInfo[];
  notes: string[];
}

/** The adapter's error text, shortened to its last line (Python tracebacks end with the exception). */
function evaluateError(e: unknown): string {
  const text = e instanceof Error ? e.message : String(e);
  const lines = text.split(/\r?\n/).map((l) => l.trim()).filter(Boolean);
  return lines[lines.length - 1] ?? text;
}

/** True when `file` is readable here and has the size the debuggee reported (so it is the same file). */
function sameFile(file: string, size: number): boolean {
  try {
    return path.isAbsolute(file) && fs.statSync(file).size === size;
  } catch {
    return false;
  }
}

function writeTemp(label: string, bytes: Uint8Array): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), TEMP_PREFIX));
  const file = path.join(dir, `${label}.npz`);
  fs.writeFileSync(file, bytes);
  return file;
}

async function problemCodes(client: LanguageClient | undefined, uri: vscode.Uri, expression: string): Promise<string[] | undefined> {
  if (!client) return undefined;
  try {
    const s = await client.sendRequest(FileSummaryRequest.type, { uri: uri.toString(), wait: true });
    const problems = s.report?.problems ?? [];
    const count = (sev: string) => problems.filter((q) => q.severity === sev).length;
    const [errors, warnings] = [count('error'), count('warning')];
    vscode.window.setStatusBarMessage(
      `$(${errors ? 'error' : warnings ? 'warning' : 'check'}) Hopscope: \`${expression}\` — ${errors} error${errors === 1 ? '' : 's'}, ${warnings} warning${warnings === 1 ? '' : 's'}`, 10_000);
    return problems.map((q) => q.code);
  } catch {
    return undefined;
  }
}

interface TempFile {
  sessionId: string;
  /** Set once a viewer showed it: before that, closing other tabs must not remove it. */
  shown: boolean;
}

/** The temporary files this window created, and when they go. */
class TempFiles implements vscode.Disposable {
  private readonly files = new Map<string, TempFile>();

  add(file: string, sessionId: string): void {
    this.files.set(file, { sessionId, shown: false });
  }

  markShown(file: string): void {
    const f = this.files.get(file);
    if (f) f.shown = true;
  }

  /** Removes the files matching `which` that no tab shows any more. */
  sweep(which: (f: TempFile) => boolean): void {
    const open = openFiles();
    for (const [file, f] of [...this.files]) if (which(f) && !open.has(file)) this.remove(file);
  }

  remove(file: string): void {
    this.files.delete(file);
    try {
      fs.rmSync(file, { force: true });
      const dir = path.dirname(file);
      if (path.basename(dir).startsWith(TEMP_PREFIX)) fs.rmdirSync(dir);
    } catch { /* already gone, or not ours to remove */ }
  }

  dispose(): void {
    for (const file of [...this.files.keys()]) this.remove(file);
  }
}

function openFiles(): Set<string> {
  const out = new Set<string>();
  for (const group of vscode.window.tabGroups.all) {
    for (const tab of group.tabs) {
      const input = tab.input;
      if (input instanceof vscode.TabInputCustom || input instanceof vscode.TabInputText) out.add(input.uri.fsPath);
    }
  }
  return out;
}
