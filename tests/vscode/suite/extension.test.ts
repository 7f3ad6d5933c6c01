// Extension-host tests: the extension as the VS Code API sees it, in a workspace that is a fresh copy
// of demo/. Expected problems come from demo/README.md (what is broken where) and the demo files.
import * as assert from 'node:assert/strict';
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { before, describe, it } from 'mocha';
import * as vscode from 'vscode';
import { waitFor } from './wait';

const pkg = JSON.parse(readFileSync(join(__dirname, '../../package.json'), 'utf8')) as {
  publisher: string; name: string; contributes?: { commands?: { command: string }[] };
};
const EXTENSION_ID = `${pkg.publisher}.${pkg.name}`;

function workspaceUri(rel: string): vscode.Uri {
  const folder = vscode.workspace.workspaceFolders?.[0];
  assert.ok(folder, 'the tests need the demo folder open as the workspace');
  return vscode.Uri.joinPath(folder.uri, rel);
}


function hopscopeDiagnostics(uri: vscode.Uri): vscode.Diagnostic[] {
  return vscode.languages.getDiagnostics(uri).filter((d) => d.source === 'hopscope');
}

function codeOf(d: vscode.Diagnostic): string {
  return typeof d.code === 'object' ? String(d.code.value) : String(d.code);
}

function hoverText(hovers: vscode.Hover[]): string {
  return hovers.flatMap((h) => h.contents.map((c) => (typeof c === 'string' ? c : c.value))).join('\n');
}

describe('Hopscope in the extension host', () => {
  before(async () => {
    const ext = vscode.extensions.getExtension(EXTENSION_ID);
    assert.ok(ext, `${EXTENSION_ID} is not loaded`);
    await ext.activate();
  });

  it('registers every command it contributes', async () => {
    const contributed = (pkg.contributes?.commands ?? []).map((c) => c.command);
    assert.ok(contributed.length > 0, 'package.json contributes no commands');
    const registered = new Set(await vscode.commands.getCommands(true));
    assert.deepEqual(contributed.filter((c) => !registered.has(c)), []);
  });

  it('starts its language server with huge pages asked of glibc (Linux; common/huge-pages.ts)', async function () {
    if (process.platform !== 'linux' || process.env.HOPSCOPE_HUGE_PAGES === '0' || /glibc\.malloc\.hugetlb=/.test(process.env.GLIBC_TUNABLES ?? '')) this.skip();
    const ext = vscode.extensions.getExtension(EXTENSION_ID)!;
    const server = join(ext.extensionPath, 'dist', 'server.js');
    // The server is a child process whose command line names dist/server.js; its environment is
    // what the extension gave it.
    const environ = await waitFor('the language server process', () => {
      for (const pid of readdirSync('/proc').filter((d) => /^\d+$/.test(d))) {
        try {
          if (!readFileSync(`/proc/${pid}/cmdline`, 'utf8').split('\0').includes(server)) continue;
          return readFileSync(`/proc/${pid}/environ`, 'utf8').split('\0');
        } catch { /* gone, or not ours to read */ }
      }
      return undefined;
    });
    const tunables = environ.find((v) => v.startsWith('GLIBC_TUNABLES='));
    assert.ok(tunables && /(=|:)glibc\.malloc\.hugetlb=1(:|$)/.test(tunables), `server environment: ${tunables ?? 'no GLIBC_TUNABLES'}`);
  });

  it('reports the edge-list problems of lanes/lanes.csv with codes, links and exact ranges', async () => {
    const uri = workspaceUri('lanes/lanes.csv');
    await vscode.window.showTextDocument(uri);
    const expected = ['asymmetric-adjacency', 'self-loops', 'duplicate-edges', 'index-out-of-range', 'non-integer-index', 'edge-shape'];
    const diags = await waitFor('the lanes.csv diagnostics', () => {
      const d = hopscopeDiagnostics(uri);
      return expected.every((c) => d.some((x) => codeOf(x) === c)) ? d : undefined;
    });
    for (const d of diags) {
      assert.equal(typeof d.code, 'object', `${codeOf(d)} has no link`);
      // The link points at the problem's row of the README table (anchors `problem-<code>`).
      assert.equal((d.code as { target: vscode.Uri }).target.fragment, `problem-${codeOf(d)}`);
    }
    // Line 32 is `5,48,61`: the range covers exactly the out-of-range `48`.
    const oor = diags.find((d) => codeOf(d) === 'index-out-of-range')!;
    assert.deepEqual([oor.range.start.line, oor.range.start.character, oor.range.end.line, oor.range.end.character], [31, 2, 31, 4]);
    assert.equal(oor.severity, vscode.DiagnosticSeverity.Error);
    // Line 39 starts with `12.5`.
    const nonInt = diags.find((d) => codeOf(d) === 'non-integer-index')!;
    assert.deepEqual([nonInt.range.start.line, nonInt.range.start.character, nonInt.range.end.character], [38, 0, 4]);
  });

  it('reports files nobody opened: the truncated archive is unreadable', async () => {
    const uri = workspaceUri('archive/snapshot_2024.npz');
    const diags = await waitFor('a diagnostic on archive/snapshot_2024.npz', () => {
      const d = hopscopeDiagnostics(uri);
      return d.length ? d : undefined;
    });
    assert.deepEqual(diags.map(codeOf), ['unreadable']);
    assert.equal(diags[0].severity, vscode.DiagnosticSeverity.Error);
  });

  it('hovers a data path in the training script with the tensor shape', async () => {
    const uri = workspaceUri('train_docks.py');
    const doc = await vscode.workspace.openTextDocument(uri);
    const needle = 'lanes/dock_features.npy';
    const offset = doc.getText().indexOf(needle);
    assert.ok(offset > 0, `${needle} not found in train_docks.py`);
    const pos = doc.positionAt(offset + 8);
    const text = await waitFor('a finished hover on the dock_features.npy path', async () => {
      const t = hoverText(await vscode.commands.executeCommand<vscode.Hover[]>('vscode.executeHoverProvider', uri, pos));
      return /checking/i.test(t) || !t ? undefined : t;
    });
    assert.match(text, /dock_features/);
    assert.match(text, /48\s*[×x]\s*6|\[\s*48\s*,\s*6\s*\]/);
  });

  it('opens .npy files in the tensor viewer', async () => {
    const uri = workspaceUri('lanes/dock_features.npy');
    await vscode.commands.executeCommand('vscode.open', uri);
    const tab = await waitFor('the viewer tab', () => {
      const input = vscode.window.tabGroups.activeTabGroup.activeTab?.input;
      return input instanceof vscode.TabInputCustom && input.uri.toString() === uri.toString() ? input : undefined;
    }, 20_000);
    assert.equal(tab.viewType, 'hopscope.tensorViewer');
    await vscode.commands.executeCommand('workbench.action.closeActiveEditor');
  });

  it('offers an undoable quick fix that removes the self-loop line', async () => {
    const uri = workspaceUri('lanes/lanes.csv');
    const editor = await vscode.window.showTextDocument(uri);
    const doc = editor.document;
    const original = doc.getText();
    assert.equal(doc.lineAt(15).text, '17,17,35');
    const selfLoop = await waitFor('the self-loops diagnostic', () => hopscopeDiagnostics(uri).find((d) => codeOf(d) === 'self-loops'));
    const actions = await vscode.commands.executeCommand<vscode.CodeAction[]>(
      'vscode.executeCodeActionProvider', uri, selfLoop.range, vscode.CodeActionKind.QuickFix.value);
    const fix = actions.find((a) => /self-loop/i.test(a.title));
    assert.ok(fix?.edit, `no self-loop fix among: ${actions.map((a) => a.title).join(' | ')}`);
    assert.ok(await vscode.workspace.applyEdit(fix.edit));
    assert.equal(doc.getText(), original.replace('17,17,35\n', ''));
    assert.ok(doc.isDirty);
    await vscode.commands.executeCommand('undo');
    assert.equal(doc.getText(), original);
  });
});
