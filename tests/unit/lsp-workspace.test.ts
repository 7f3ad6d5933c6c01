/**
 * The language server's workspace bookkeeping (server/src/lsp/workspace.ts) against a recording
 * stand-in for the graph worker: which checks it asks for, in what scope, and what it publishes.
 * The real worker and real files are exercised by tests/server/file-events.test.ts; here the
 * question is only what the LSP side decides (a file is asked about once however often it is
 * hovered; a change re-checks its folder's graphs holding the change, not the whole folder; a
 * deleted file is cleared and forgotten).
 */
import { describe, expect, it } from 'vitest';
import * as path from 'node:path';
import { GraphWorkspace, type WorkspaceHost } from '../../server/src/lsp/workspace';
import type { CheckOutcome, WalkResult, WorkerApi } from '../../server/src/node/worker-methods';
import type { Problem } from '../../server/src/core/formats/types';
import type { FileReport } from '../../server/src/core/checks/check-set';

const ROOT = path.resolve('/ws');
const f = (rel: string) => path.join(ROOT, rel);
/** Each pretend file is an edge list, the structure file of its graph (its report has figures). */
const FIGURES = { nodes: 2, edges: 2, directed: false, selfLoops: 0, duplicateEdges: 0, asymmetricPairs: 0, isolatedNodes: 0, components: 1, indexBase: 0 } as unknown as FileReport['graph'];
const dup: Problem = { code: 'duplicate-edges', severity: 'warning', count: 1, message: '1 duplicate edge entry' };

/** Files on the pretend disk, with their problems; every file is a graph of its own. */
class FakeWorker {
  disk = new Map<string, Problem[]>();
  checks: Array<{ paths: string[]; focus?: string[] }> = [];
  walks: string[][] = [];
  forgotten: string[] = [];
  /** Resolves the next check only when released (to hold a check "running"). */
  hold: Promise<void> | undefined;

  api(): WorkerApi {
    const self = this;
    const partial: Partial<WorkerApi> = {
      async configure() {},
      async walk(p: { paths: string[] }): Promise<WalkResult> {
        self.walks.push(p.paths);
        const files = [...self.disk.keys()].filter((k) => p.paths.some((q) => k === q || k.startsWith(q + path.sep))).sort();
        return { files, manifests: [], missing: [], unsupported: [] };
      },
      async check(p: { paths: string[]; focus?: string[] }): Promise<CheckOutcome> {
        self.checks.push(p);
        if (self.hold) await self.hold;
        const asked = (p.focus ?? p.paths).filter((x) => self.disk.has(x));
        return {
          files: asked.map((x) => ({ path: x, format: 'edgelist', tensors: [], graph: FIGURES, problems: self.disk.get(x)! })),
          manifestProblems: [], skipped: [], structures: [],
          graphs: asked.map((x) => ({ name: path.basename(x), files: [x], structureFile: x })),
        };
      },
      async forget(p: { path: string }) { self.forgotten.push(p.path); },
    };
    return partial as WorkerApi;
  }
}

function setup(files: Record<string, Problem[]>) {
  const worker = new FakeWorker();
  for (const [rel, ps] of Object.entries(files)) worker.disk.set(f(rel), ps);
  const published: Array<{ file: string; codes: string[] }> = [];
  const host: WorkspaceHost = {
    publish: (file, problems) => published.push({ file, codes: problems.map((p) => p.code) }),
    status: () => {},
    log: (s) => { throw new Error(s); },
  };
  const ws = new GraphWorkspace(worker.api(), host, { quietMs: 5 });
  ws.setRoots([ROOT]);
  return { worker, ws, published };
}

const settle = async (ws: GraphWorkspace) => { while (ws.busy) await new Promise((r) => setTimeout(r, 5)); };

describe('GraphWorkspace', () => {
  it('checks the workspace folder by folder, each folder as one check', async () => {
    const { worker, ws } = setup({ 'a/1.edges': [dup], 'a/2.edges': [], 'b/3.edges': [] });
    await ws.scan();
    expect(worker.checks.map((c) => c.paths)).toEqual([[f('a/1.edges'), f('a/2.edges')], [f('b/3.edges')]]);
    expect(ws.reports.size).toBe(3);
  });

  it('asks for one check of a file however often it is asked about while that check waits', async () => {
    const { worker, ws } = setup({ 'x.edges': [dup] });
    let release!: () => void;
    worker.hold = new Promise((r) => { release = r; });
    const waits = [ws.ensureChecked(f('x.edges')), ws.ensureChecked(f('x.edges')), ws.ensureChecked(f('x.edges'))];
    await new Promise((r) => setTimeout(r, 10));
    expect(ws.pending(f('x.edges'))).toBe(true);
    release();
    await Promise.all(waits);
    expect(worker.checks).toHaveLength(1);
    expect(ws.reports.get(f('x.edges'))!.problems[0]!.code).toBe('duplicate-edges');
  });

  it('a changed file is re-checked with its folder as context and itself as the focus', async () => {
    const files: Record<string, Problem[]> = {};
    for (let i = 0; i < 20; i++) files[`flat/g${i}.edges`] = [];
    const { worker, ws, published } = setup(files);
    await ws.scan();
    worker.checks = [];
    published.length = 0;
    worker.disk.set(f('flat/g7.edges'), [dup]);
    ws.fileEvents([f('flat/g7.edges')]);
    await settle(ws);
    expect(worker.checks).toHaveLength(1);
    expect(worker.checks[0]!.paths).toHaveLength(20);
    expect(worker.checks[0]!.focus).toEqual([f('flat/g7.edges')]);
    expect(published).toEqual([{ file: f('flat/g7.edges'), codes: ['duplicate-edges'] }]);
  });

  it('ignores events where the workspace walk never goes (a package installed into .venv, node_modules)', async () => {
    const { worker, ws } = setup({ 'a.edges': [] });
    await ws.scan();
    worker.walks = [];
    ws.fileEvents([f('.venv/lib/python3.11/site-packages/scipy/io/tests/data/a.mtx'), f('node_modules'), f('.git/index')]);
    expect(ws.busy).toBe(false);
    ws.fileEvents([f('data/new.npy'), f('renamed_folder')]);
    await settle(ws);
    expect(worker.walks).toEqual([[f('data/new.npy'), f('renamed_folder')]]);
  });

  it('a deleted file is cleared and forgotten; a deleted folder clears every file below it', async () => {
    const { worker, ws, published } = setup({ 'd/1.edges': [dup], 'd/sub/2.edges': [dup], 'e/3.edges': [dup] });
    await ws.scan();
    published.length = 0;
    worker.disk.delete(f('d/1.edges'));
    worker.disk.delete(f('d/sub/2.edges'));
    ws.fileEvents([f('d')]);
    await settle(ws);
    expect(published.sort((a, b) => a.file.localeCompare(b.file))).toEqual([
      { file: f('d/1.edges'), codes: [] }, { file: f('d/sub/2.edges'), codes: [] },
    ]);
    expect(worker.forgotten.sort()).toEqual([f('d/1.edges'), f('d/sub/2.edges')]);
    expect(ws.reports.has(f('e/3.edges'))).toBe(true);
  });
});
