/**
 * What the language server knows about the workspace's graph files, and the order in which it
 * asks the graph worker to check them. No LSP types beyond a cancellation source: the server
 * (server.ts) turns reports into diagnostics and hovers.
 *
 * - One queue of check jobs, run one at a time: urgent ones (file events, a hover or a viewer
 *   asking about a file not checked yet) before the background ones (the workspace check, folder
 *   by folder). A file is in at most one queued job: asking again waits for that job.
 * - File events are gathered for a quiet moment, then walked in the worker (a path may be a
 *   file, a folder that was renamed or created, a file that became a folder, or be gone). What is
 *   gone loses its diagnostics and is forgotten by the worker; what is new or changed is checked
 *   with what it can affect: its folder's files are read (from the worker's store) so sibling
 *   files group as in the workspace check, but only the graphs holding a changed file, or a file
 *   that shared a graph with one, are checked and reported. A manifest change re-checks the
 *   folders below it.
 * - The structure of every checked graph arrives as views of shared memory (node/shared-structure.ts)
 *   and stays here (within a byte bound) so node-id hovers never wait for the worker.
 */
import * as path from 'node:path';
import { CancellationTokenSource, type CancellationToken } from 'vscode-languageserver/node';
import { isSupportedFile, MANIFEST_NAME } from '../core/formats';
import type { FileReport } from '../core/checks/check-set';
import type { Problem } from '../core/formats/types';
import { WorkerCancelled, type CheckOutcome, type WorkerApi } from '../node/worker-methods';
import { structureBytes, type SharedStructure } from '../node/shared-structure';
import { collectGarbage } from '../node/collect-garbage';
import { walkedDir } from '../node/skipped-dirs';

/** Views dropped beyond this many bytes are collected at once: their shared memory is freed only then. */
const RELEASE_BYTES = 8 * 1024 ** 2;

export interface WorkspaceHost {
  /** The problems of a file (an empty list clears it). */
  publish(file: string, problems: Problem[]): void;
  /** Something changed that the status bar counts (busy, files, problems). */
  status(): void;
  log(message: string): void;
}

export interface ScanProgress {
  report(done: number, total: number, folder: string): void;
  /** The user cancelled the progress. */
  readonly token?: CancellationToken;
}

interface Job {
  /** Files this job checks: a later request for one of them waits for this job instead of queueing another. */
  files: string[];
  /** Set on the jobs of a workspace check; a newer check drops the older one's jobs. */
  scan?: number;
  run(): Promise<void>;
  /** Called once the job ran, failed or was dropped. */
  done?(): void;
}

/** Views of the graph structures the worker shared, least recently used dropped beyond `budget` bytes. */
export class StructureViews {
  private readonly map = new Map<string, SharedStructure>();
  private bytes = 0;
  /** Bytes of views dropped since the last collection (see GraphWorkspace.release). */
  released = 0;

  constructor(private readonly budget: number) {}

  get(file: string): SharedStructure | undefined {
    const s = this.map.get(file);
    if (s) { this.map.delete(file); this.map.set(file, s); }
    return s;
  }

  set(file: string, s: SharedStructure): void {
    this.delete(file);
    this.map.set(file, s);
    this.bytes += structureBytes(s);
    for (const [f, old] of this.map) {
      if (this.bytes <= this.budget || this.map.size <= 1) break;
      this.map.delete(f);
      this.bytes -= structureBytes(old);
      this.released += structureBytes(old);
    }
  }

  delete(file: string): void {
    const s = this.map.get(file);
    if (!s) return;
    this.map.delete(file);
    this.bytes -= structureBytes(s);
    this.released += structureBytes(s);
  }

  clear(): void {
    this.released += this.bytes;
    this.map.clear();
    this.bytes = 0;
  }

  get size(): number {
    return this.map.size;
  }
}

const isManifest = (p: string) => path.basename(p) === MANIFEST_NAME;
const under = (p: string, dir: string) => p === dir || p.startsWith(dir.endsWith(path.sep) ? dir : dir + path.sep);

export class GraphWorkspace {
  /** The last report of every checked file (absolute path). */
  readonly reports = new Map<string, FileReport>();
  /** Text files found not to be edge lists (README.txt, metrics.csv): never published. */
  readonly notGraph = new Set<string>();
  readonly views: StructureViews;
  /** Graph membership from the last checks: file → files of its graph. */
  private readonly graphOf = new Map<string, string[]>();
  private readonly manifestProblems = new Map<string, Problem[]>();
  /** Supported files per folder (direct children) and manifests, from walks and file events. */
  private readonly dirs = new Map<string, Set<string>>();
  private readonly manifests = new Set<string>();
  private roots: string[] = [];

  private urgent: Job[] = [];
  private background: Job[] = [];
  /** Files of jobs not started yet (count of such jobs per file). */
  private readonly queued = new Map<string, number>();
  private readonly running = new Set<string>();
  private readonly waiters = new Map<string, Array<() => void>>();
  private pumping = false;

  private scanGen = 0;
  private scanSource: CancellationTokenSource | undefined;
  private scanDone: Array<() => void> = [];
  private scanning = false;

  private readonly events = new Set<string>();
  private eventTimer: NodeJS.Timeout | undefined;
  /** When the first event of the ones waiting arrived. */
  private eventsSince = 0;

  constructor(
    private readonly worker: WorkerApi,
    private readonly host: WorkspaceHost,
    opts: { viewBytes?: number; quietMs?: number } = {},
  ) {
    this.views = new StructureViews(opts.viewBytes ?? 512 * 1024 ** 2);
    this.quietMs = opts.quietMs ?? 250;
  }
  private readonly quietMs: number;

  setRoots(roots: string[]): void {
    this.roots = roots.map((r) => path.resolve(r));
  }

  /** Whether checks are queued, running or waiting for file events to settle. */
  get busy(): boolean {
    return this.scanning || this.pumping || this.urgent.length > 0 || this.background.length > 0 || this.eventTimer !== undefined;
  }

  /** Manifest problems as last published (for the status counts). */
  manifestProblemLists(): IterableIterator<Problem[]> {
    return this.manifestProblems.values();
  }

  /** Files of the graph `file` belongs to (after a check). */
  graphFiles(file: string): string[] | undefined {
    return this.graphOf.get(file);
  }

  /** Whether a queued or running job will report `file`. */
  pending(file: string): boolean {
    return this.queued.has(file) || this.running.has(file);
  }

  // ---- the workspace check -------------------------------------------------------------------

  /**
   * Walks the workspace folders in the worker, forgets files that are gone, then checks every
   * folder (background jobs). Resolves when the last folder is checked or a newer check replaced
   * this one. Files whose problems did not change are not published again.
   */
  scan(progress?: ScanProgress): Promise<void> {
    const gen = ++this.scanGen;
    this.scanSource?.cancel();
    const source = new CancellationTokenSource();
    this.scanSource = source;
    progress?.token?.onCancellationRequested(() => source.cancel());
    // Jobs of an older workspace check that did not start are dropped.
    this.background = this.background.filter((j) => {
      if (j.scan === undefined) return true;
      this.unqueue(j);
      j.done?.();
      return false;
    });
    for (const resolve of this.scanDone.splice(0)) resolve();
    this.scanning = true;
    this.host.status();
    return new Promise<void>((resolve) => {
      this.scanDone.push(resolve);
      const finish = () => {
        if (gen !== this.scanGen) return;
        this.scanning = false;
        for (const r of this.scanDone.splice(0)) r();
        this.host.status();
      };
      let queuedFolders = false;
      this.push({
        // Stopped before the folders were queued (cancelled, or the walk failed): the check is over.
        files: [], scan: gen, done: () => { if (!queuedFolders) finish(); },
        run: async () => {
          const walk = await this.worker.walk({ paths: this.roots }, { token: source.token });
          if (gen !== this.scanGen) return;
          const found = new Set<string>();
          this.dirs.clear();
          this.manifests.clear();
          for (const f of walk.files) { const a = path.resolve(f); found.add(a); this.index(a); }
          for (const m of walk.manifests) { const a = path.resolve(m); found.add(a); this.manifests.add(a); }
          // Files known from an earlier check that are no longer there (or now excluded).
          for (const k of this.known()) if (!found.has(k)) this.gone(k);
          const folders = [...this.dirs].map(([dir, files]) => ({ dir, files: [...files].sort() }));
          const total = folders.reduce((s, f) => s + f.files.length, 0);
          let done = 0;
          for (const { dir, files } of folders) {
            const before = done;
            this.push({
              files, scan: gen,
              run: async () => {
                if (source.token.isCancellationRequested) return;
                progress?.report(before, total, path.basename(dir));
                await this.check(files, files, { token: source.token });
              },
            }, false);
            done += files.length;
          }
          const manifests = [...this.manifests].sort();
          queuedFolders = true;
          this.push({
            files: manifests, scan: gen, done: finish,
            run: async () => {
              // Manifests with problems of their own (or none: clear them).
              for (const m of manifests) {
                if (source.token.isCancellationRequested) return;
                await this.check([m], [], { token: source.token, manifests: [m] });
              }
            },
          }, false);
        },
      }, false);
    });
  }

  // ---- file events ---------------------------------------------------------------------------

  /** Paths the editor reported created, changed or deleted (files or folders). */
  fileEvents(paths: string[]): void {
    const kept = paths.map((p) => path.resolve(p)).filter((p) => !this.unwalked(p));
    if (!kept.length) return;
    for (const p of kept) this.events.add(p);
    // A quiet moment, but not forever: a file rewritten every 100 ms is still checked each second.
    if (this.eventTimer && Date.now() - this.eventsSince >= 4 * this.quietMs) return;
    if (this.eventTimer) clearTimeout(this.eventTimer);
    else this.eventsSince = Date.now();
    this.eventTimer = setTimeout(() => {
      this.eventTimer = undefined;
      const ps = [...this.events];
      this.events.clear();
      this.push({ files: ps, run: () => this.handleEvents(ps) }, true);
    }, this.quietMs);
    this.host.status();
  }

  private async handleEvents(paths: string[]): Promise<void> {
    const walk = await this.worker.walk({ paths }, { priority: 'high' });
    const present = new Set<string>();
    const changed = new Set<string>();
    const touchedManifests = new Set<string>();
    for (const f of walk.files) { const a = path.resolve(f); present.add(a); changed.add(a); this.index(a); }
    for (const m of walk.manifests) { const a = path.resolve(m); present.add(a); touchedManifests.add(a); this.manifests.add(a); }
    // What was known at or below an event path and is not there now: deleted, renamed away,
    // replaced by a folder of the same name (or a folder replaced by a file), newly excluded.
    const gone = new Set<string>();
    for (const p of paths) for (const k of this.known(p)) if (!present.has(k)) gone.add(k);
    const mates = new Set<string>();
    for (const g of gone) {
      if (isManifest(g)) touchedManifests.add(g);
      for (const m of this.graphOf.get(g) ?? []) if (!gone.has(m)) mates.add(m);
    }
    for (const g of gone) this.gone(g);
    await this.recheck(changed, mates);
    for (const m of touchedManifests) await this.recheckManifest(m, present.has(m));
  }

  /**
   * Checks `changed` files (and graph mates of changed or gone files) folder by folder, each with
   * its folder's files as context so siblings group as in the workspace check.
   */
  private async recheck(changed: Set<string>, mates: Set<string>): Promise<void> {
    const focusByDir = new Map<string, Set<string>>();
    const add = (f: string) => {
      const d = path.dirname(f);
      let s = focusByDir.get(d);
      if (!s) focusByDir.set(d, (s = new Set()));
      s.add(f);
    };
    for (const f of changed) {
      add(f);
      for (const m of this.graphOf.get(f) ?? []) add(m);
    }
    for (const m of mates) add(m);
    for (const [dir, focus] of focusByDir) {
      const context = this.dirs.get(dir);
      if (!context) { await this.check([...focus], [...focus]); continue; }
      // Sibling files group with the folder's only structure file when it has one: when at most
      // one structure file stays out of the change, the change can regroup every loose file.
      let others = 0;
      for (const f of context) {
        if (focus.has(f)) continue;
        const r = this.reports.get(f);
        if (!r) focus.add(f); // not checked yet: check it now
        else if (r.graph) others++;
      }
      if (others <= 1) for (const f of context) focus.add(f);
      const inContext = [...focus].filter((f) => context.has(f));
      const outside = [...focus].filter((f) => !context.has(f));
      if (inContext.length) await this.check([...context].sort(), inContext, { focus: inContext });
      if (outside.length) await this.check(outside, outside);
    }
  }

  /** A manifest changed, appeared or went: every folder below it is checked again, then the manifest. */
  private async recheckManifest(manifest: string, present: boolean): Promise<void> {
    const dir = path.dirname(manifest);
    const mates = new Set<string>();
    for (const [d, files] of this.dirs) {
      if (!under(d, dir)) continue;
      const list = [...files].sort();
      for (const f of list) for (const m of this.graphOf.get(f) ?? []) if (!under(m, dir)) mates.add(m);
      await this.check(list, list);
    }
    if (mates.size) await this.recheck(new Set(), mates);
    if (present) await this.check([manifest], [], { manifests: [manifest] });
    else {
      this.manifests.delete(manifest);
      this.manifestProblems.delete(manifest);
      this.host.publish(manifest, []);
    }
  }

  // ---- on demand -----------------------------------------------------------------------------

  /**
   * Resolves once `file` has been checked: by the queued or running job that already holds it,
   * or by one new urgent job (so asking twice never queues two checks of a file).
   */
  ensureChecked(file: string): Promise<void> {
    const abs = path.resolve(file);
    if (this.pending(abs)) return this.waitFor(abs);
    const wait = this.waitFor(abs);
    this.push({
      files: [abs],
      run: async () => {
        const context = this.dirs.get(path.dirname(abs));
        if (context?.has(abs)) await this.check([...context].sort(), [abs], { focus: [abs] });
        else await this.check([abs], [abs]);
      },
    }, true);
    return wait;
  }

  private waitFor(file: string): Promise<void> {
    return new Promise((resolve) => {
      let list = this.waiters.get(file);
      if (!list) this.waiters.set(file, (list = []));
      list.push(resolve);
    });
  }

  // ---- checking and absorbing outcomes -------------------------------------------------------

  /**
   * Asks the worker to check `paths`; `expect` are the files the answer must report (one it does
   * not report is gone or excluded now). `focus`: only graphs holding one of these are checked.
   */
  private async check(paths: string[], expect: string[], opts: { focus?: string[]; token?: CancellationToken; manifests?: string[] } = {}): Promise<void> {
    const outcome = await this.worker.check({ paths, ...(opts.focus ? { focus: opts.focus } : {}) }, opts.token ? { token: opts.token } : {});
    if (opts.token?.isCancellationRequested) return;
    this.absorb(outcome, expect, opts.manifests ?? []);
  }

  private absorb(outcome: CheckOutcome, expect: string[], manifests: string[]): void {
    const reported = new Set<string>();
    for (const s of outcome.skipped) {
      const a = path.resolve(s);
      reported.add(a);
      this.notGraph.add(a);
      this.reports.delete(a);
      this.views.delete(a);
      // It may have had problems while it looked like an edge list: clear them.
      this.host.publish(a, []);
    }
    const structureFiles = new Set<string>();
    for (const g of outcome.graphs) {
      const files = g.files.map((f) => path.resolve(f));
      for (const f of files) this.graphOf.set(f, files);
      if (g.structureFile) structureFiles.add(path.resolve(g.structureFile));
    }
    for (const r of outcome.files) {
      const a = path.resolve(r.path);
      reported.add(a);
      this.notGraph.delete(a);
      this.reports.set(a, { ...r, path: a });
      if (!structureFiles.has(a)) this.views.delete(a);
      this.host.publish(a, r.problems);
    }
    for (const s of outcome.structures ?? []) this.views.set(path.resolve(s.file), s.structure);
    for (const f of expect) if (!reported.has(path.resolve(f))) this.gone(path.resolve(f));
    const byManifest = new Map<string, Problem[]>(manifests.map((m) => [path.resolve(m), []]));
    for (const m of outcome.manifestProblems) {
      const a = path.resolve(m.path);
      if (!byManifest.has(a)) byManifest.set(a, []);
      byManifest.get(a)!.push(m.problem);
    }
    for (const [m, problems] of byManifest) {
      this.manifestProblems.set(m, problems);
      this.host.publish(m, problems);
    }
    this.host.status();
  }

  /** Everything kept for a path that is gone: diagnostics cleared, the worker's store told to forget it. */
  private gone(file: string): void {
    this.reports.delete(file);
    this.notGraph.delete(file);
    this.views.delete(file);
    this.graphOf.delete(file);
    this.dirs.get(path.dirname(file))?.delete(file);
    if (this.dirs.get(path.dirname(file))?.size === 0) this.dirs.delete(path.dirname(file));
    if (isManifest(file)) {
      this.manifests.delete(file);
      this.manifestProblems.delete(file);
    }
    this.host.publish(file, []);
    this.worker.forget({ path: file }).catch((e: unknown) => this.host.log(`forget ${file}: ${(e as Error).message}`));
  }

  /**
   * Whether a path lies where the workspace walk never goes (node_modules, .venv, .git, a dot
   * folder… below a workspace folder): events there are ignored, so installing a package into the
   * workspace does not check the data files it ships. The path itself is judged as a folder only
   * when it cannot be a graph file or manifest.
   */
  private unwalked(p: string): boolean {
    const root = this.roots.find((r) => under(p, r) && p !== r);
    if (!root) return false;
    const parts = path.relative(root, p).split(path.sep);
    const last = parts.pop()!;
    if (parts.some((d) => !walkedDir(d))) return true;
    return !isSupportedFile(last) && !isManifest(last) && !walkedDir(last);
  }

  private index(file: string): void {
    const d = path.dirname(file);
    let s = this.dirs.get(d);
    if (!s) this.dirs.set(d, (s = new Set()));
    s.add(file);
  }

  /** Every path known here, or those at or below `at`. */
  private known(at?: string): Set<string> {
    const out = new Set<string>();
    const keep = (p: string) => { if (at === undefined || under(p, at)) out.add(p); };
    for (const [d, files] of this.dirs) {
      if (at !== undefined && !under(d, at) && d !== path.dirname(at)) continue;
      for (const f of files) keep(f);
    }
    for (const m of this.manifests) keep(m);
    for (const f of this.reports.keys()) keep(f);
    for (const f of this.notGraph) keep(f);
    for (const f of this.manifestProblems.keys()) keep(f);
    return out;
  }

  // ---- the queue -----------------------------------------------------------------------------

  private push(job: Job, urgent: boolean): void {
    for (const f of job.files) this.queued.set(f, (this.queued.get(f) ?? 0) + 1);
    (urgent ? this.urgent : this.background).push(job);
    void this.pump();
  }

  private unqueue(job: Job): void {
    for (const f of job.files) {
      const n = (this.queued.get(f) ?? 1) - 1;
      if (n > 0) this.queued.set(f, n);
      else this.queued.delete(f);
    }
  }

  private async pump(): Promise<void> {
    if (this.pumping) return;
    this.pumping = true;
    this.host.status();
    try {
      for (;;) {
        const job = this.urgent.shift() ?? this.background.shift();
        if (!job) break;
        this.unqueue(job);
        for (const f of job.files) this.running.add(f);
        try {
          await job.run();
        } catch (e) {
          if (!(e instanceof WorkerCancelled)) this.host.log(`check failed: ${(e as Error)?.message ?? String(e)}`);
        } finally {
          for (const f of job.files) {
            this.running.delete(f);
            if (this.queued.has(f)) continue; // another job will check it: its waiters wait for that one
            for (const w of this.waiters.get(f) ?? []) w();
            this.waiters.delete(f);
          }
          job.done?.();
          this.release();
          this.host.status();
        }
      }
    } finally {
      this.pumping = false;
      this.host.status();
    }
  }

  /**
   * Shared memory is freed when no thread holds a view of it any more; the worker drops its own
   * when it forgets a file, but this thread's dropped views wait for a garbage collection that a
   * thread allocating little may not run for a long time. After dropping large views, run one.
   */
  private release(): void {
    if (this.views.released < RELEASE_BYTES) return;
    this.views.released = 0;
    collectGarbage();
  }

  /** Stops the workspace check and drops queued jobs (shutdown). */
  dispose(): void {
    this.scanSource?.cancel();
    if (this.eventTimer) clearTimeout(this.eventTimer);
    this.eventTimer = undefined;
    for (const j of [...this.urgent, ...this.background]) { this.unqueue(j); j.done?.(); }
    this.urgent = [];
    this.background = [];
    for (const list of this.waiters.values()) for (const w of list) w();
    this.waiters.clear();
  }
}

/** For `CheckOutcome.structures` consumers that need the type without the worker table. */
export type { SharedStructure };
