// Extension-host tests of "Inspect as Graph" (hopscope.inspectAsGraph): a real debug session stops at
// a breakpoint, the command saves a variable to a temporary .npz, the tensor viewer opens on it and
// the language server checks it; the file goes away with its viewer. JavaScript runs under the
// built-in js-debug. Python runs under the test-only debug type 'hopscope-debugpy'
// (tests/debug/debugpy-extension, loaded as a second extensionDevelopmentPath); without it the
// Python test is skipped.
import * as assert from 'node:assert/strict';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { after, before, describe, it } from 'mocha';
import * as vscode from 'vscode';
import { readNpz } from '../../../server/src/core/formats/npz';
import { DEFAULT_LIMITS, type DenseTensor } from '../../../server/src/core/formats/types';
import { waitFor } from './wait';

const pkg = JSON.parse(readFileSync(join(__dirname, '../../package.json'), 'utf8')) as { publisher: string; name: string };
const EXTENSION_ID = `${pkg.publisher}.${pkg.name}`;
const DEBUGPY_FIXTURE_ID = 'hopscope-tests.hopscope-debugpy-test-adapter';
const COMMAND = 'hopscope.inspectAsGraph';

interface Outcome {
  ok: boolean;
  message?: string;
  uri?: string;
  tensors?: Array<{ name: string; dtype: string; shape: number[] }>;
  problems?: string[];
}


function viewerTab(uri: string): vscode.Tab | undefined {
  for (const group of vscode.window.tabGroups.all) {
    for (const tab of group.tabs) {
      if (tab.input instanceof vscode.TabInputCustom && tab.input.uri.toString() === uri) return tab;
    }
  }
  return undefined;
}

/** Starts a session, waits until it stops at the breakpoint on `line` (0-based) of `program`. */
async function stopAt(program: string, line: number, config: vscode.DebugConfiguration): Promise<vscode.DebugStackFrame> {
  const folder = vscode.workspace.workspaceFolders?.[0];
  const uri = vscode.Uri.file(program);
  vscode.debug.addBreakpoints([new vscode.SourceBreakpoint(new vscode.Location(uri, new vscode.Position(line, 0)))]);
  const stopped = new Promise<vscode.DebugStackFrame>((resolve) => {
    const d = vscode.debug.onDidChangeActiveStackItem((item) => {
      if (item && 'frameId' in item) { d.dispose(); resolve(item); }
    });
  });
  assert.ok(await vscode.debug.startDebugging(folder, config), `could not start ${config.type}`);
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`${config.type} did not stop at ${program}:${line + 1} within 60 s`)), 60_000);
  });
  try {
    return await Promise.race([stopped, timeout]);
  } finally {
    clearTimeout(timer);
  }
}

async function endSessions(): Promise<void> {
  await vscode.debug.stopDebugging();
  vscode.debug.removeBreakpoints(vscode.debug.breakpoints);
  await waitFor('the session to end', () => (vscode.debug.activeDebugSession ? undefined : true), 30_000);
}

function tensorsIn(uri: string): Map<string, DenseTensor> {
  const bytes = new Uint8Array(readFileSync(vscode.Uri.parse(uri).fsPath));
  return new Map(readNpz(bytes, 'inspected.npz', DEFAULT_LIMITS).tensors.map((t) => [t.name, t as DenseTensor]));
}

describe('Inspect as Graph while debugging', () => {
  const dir = mkdtempSync(join(tmpdir(), 'hopscope-inspect-test-'));

  before(async () => {
    const ext = vscode.extensions.getExtension(EXTENSION_ID);
    assert.ok(ext, `${EXTENSION_ID} is not loaded`);
    await ext.activate();
  });

  after(async () => {
    if (vscode.debug.activeDebugSession) await endSessions();
    rmSync(dir, { recursive: true, force: true });
  });

  it('says so when no debug session is paused', async () => {
    const outcome = await vscode.commands.executeCommand<Outcome>(COMMAND, 'edges');
    assert.equal(outcome.ok, false);
    assert.match(outcome.message ?? '', /No debug session|not paused/);
  });

  it('opens a JavaScript array in the viewer, checks a graph object, and removes the files with their tabs', async function () {
    this.timeout(180_000); // js-debug start-up alone takes 12-14 s on 2 cores
    const program = join(dir, 'lanes.js');
    writeFileSync(program, [
      'const edges = [[0, 1, 1, 2], [1, 0, 2, 1]];',
      'const graph = { edge_index: [[0, 1, 2], [1, 2, 7]], x: [[0.5, 1], [1.5, 2], [2.5, 3]], train_mask: [true, false, true], name: "lanes" };',
      'const weights = Float64Array.from({ length: 20000 }, (_, i) => i / 4);',
      'console.log(edges.length, graph.name, weights.length);',
      '',
    ].join('\n'));
    const frame = await stopAt(program, 3, { type: 'node', request: 'launch', name: 'lanes', program, console: 'internalConsole' });
    assert.equal(frame.session.type, 'pwa-node');

    // As the Variables view's context menu passes it.
    const outcome = await vscode.commands.executeCommand<Outcome>(COMMAND, { sessionId: frame.session.id, variable: { name: 'edges', evaluateName: 'edges', value: 'Array(2)' } });
    assert.ok(outcome.ok, outcome.message);
    const file = vscode.Uri.parse(outcome.uri!).fsPath;
    assert.match(file, /hopscope-dbg-[^/\\]+[/\\]edges\.npz$/);
    assert.ok(file.startsWith(tmpdir()), `${file} is not in the temp folder ${tmpdir()}`);
    const tab = await waitFor('the viewer tab', () => viewerTab(outcome.uri!), 20_000);
    assert.equal((tab.input as vscode.TabInputCustom).viewType, 'hopscope.tensorViewer');
    const edges = tensorsIn(outcome.uri!).get('edges')!;
    assert.deepEqual([edges.dtype, edges.shape, Array.from(edges.data)], ['int64', [2, 4], [0, 1, 1, 2, 1, 0, 2, 1]]);

    // A graph object: node 7 does not exist (3 feature rows), which the checks report.
    const graph = await vscode.commands.executeCommand<Outcome>(COMMAND, 'graph');
    assert.ok(graph.ok, graph.message);
    assert.deepEqual(graph.tensors!.map((t) => t.name).sort(), ['edge_index', 'train_mask', 'x']);
    assert.ok(graph.problems?.includes('index-out-of-range'), `problems: ${graph.problems?.join(', ')}`);
    const graphTab = await waitFor('the graph viewer tab', () => viewerTab(graph.uri!), 20_000);

    // From the editor's context menu: the selected expression (the command gets the document's URI).
    const doc = await vscode.workspace.openTextDocument(program);
    const selection = new vscode.Range(0, 6, 0, 11);
    assert.equal(doc.getText(selection), 'edges');
    await vscode.window.showTextDocument(doc, { selection, viewColumn: vscode.ViewColumn.One });
    const selected = await vscode.commands.executeCommand<Outcome>(COMMAND, doc.uri);
    assert.ok(selected.ok, selected.message);
    assert.deepEqual(selected.tensors, [{ name: 'edges', dtype: 'int64', shape: [2, 4] }]);
    const selectedTab = await waitFor('the viewer tab of the selection', () => viewerTab(selected.uri!), 20_000);
    await vscode.window.tabGroups.close(selectedTab);

    // 160 KB of float64: longer than js-debug's repl results, so it comes through the clipboard context.
    const weights = await vscode.commands.executeCommand<Outcome>(COMMAND, 'weights');
    assert.ok(weights.ok, weights.message);
    const w = tensorsIn(weights.uri!).get('weights')!;
    assert.deepEqual([w.dtype, w.shape, w.data[0], w.data[1], w.data[19999]], ['float64', [20000], 0, 0.25, 4999.75]);
    await vscode.window.tabGroups.close(await waitFor('the weights tab', () => viewerTab(weights.uri!), 20_000));

    // Not tensor-like: a message, no tab.
    const text = await vscode.commands.executeCommand<Outcome>(COMMAND, 'graph.name');
    assert.equal(text.ok, false);
    assert.match(text.message ?? '', /not tensor-like/);

    // Closing a viewer removes its file; a viewer still open keeps its file after the session ends.
    await vscode.window.tabGroups.close(tab);
    await waitFor('edges.npz to be removed', () => (existsSync(file) ? undefined : true), 10_000);
    await endSessions();
    const graphFile = vscode.Uri.parse(graph.uri!).fsPath;
    assert.ok(existsSync(graphFile), 'the file of an open viewer was removed when the session ended');
    await vscode.window.tabGroups.close(graphTab);
    await waitFor('the graph file to be removed', () => (existsSync(graphFile) ? undefined : true), 10_000);
  });

  it('opens a NumPy dict from a Python session (test-only debugpy type)', async function () {
    this.timeout(180_000);
    if (!vscode.extensions.getExtension(DEBUGPY_FIXTURE_ID)) {
      this.skip(); // tests/debug/debugpy-extension is not loaded next to Hopscope
    }
    const program = join(dir, 'lanes.py');
    writeFileSync(program, [
      'import numpy as np',
      "data = {'edge_index': np.array([[0, 1, 2], [1, 2, 0]]), 'x': np.eye(3, dtype=np.float32), 'note': 'lanes'}",
      'print(len(data))',
      '',
    ].join('\n'));
    await stopAt(program, 2, { type: 'hopscope-debugpy', request: 'launch', name: 'lanes.py', program, python: '/usr/bin/python3', console: 'internalConsole', justMyCode: true });
    const outcome = await vscode.commands.executeCommand<Outcome>(COMMAND, 'data');
    assert.ok(outcome.ok, outcome.message);
    const tab = await waitFor('the viewer tab', () => viewerTab(outcome.uri!), 20_000);
    assert.equal((tab.input as vscode.TabInputCustom).viewType, 'hopscope.tensorViewer');
    const m = tensorsIn(outcome.uri!);
    assert.deepEqual([...m.keys()].sort(), ['edge_index', 'x']);
    assert.deepEqual(Array.from(m.get('edge_index')!.data), [0, 1, 2, 1, 2, 0]);
    assert.deepEqual(Array.from(m.get('x')!.data), [1, 0, 0, 0, 1, 0, 0, 0, 1]);
    const file = vscode.Uri.parse(outcome.uri!).fsPath;
    await vscode.window.tabGroups.close(tab);
    await waitFor('the file to be removed', () => (existsSync(file) ? undefined : true), 10_000);
    await endSessions();
  });
});
