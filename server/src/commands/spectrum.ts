/**
 * `hopscope spectrum FILE --k K`: the K smallest eigenvalues of the graph Laplacian, and
 * optionally the eigenvectors as an N x K float32 .npy of positional encodings.
 */
import * as fs from 'node:fs';
import type { CliIo, Command } from './types';
import { UsageError } from './types';
import { ANALYSIS_OPTIONS, CHECK_USAGE, analysisOptions, guarded, oneOf, parseCommandLine, wholeNumber } from './args';
import { plural, styler } from './style';
import { loadUndirected } from './undirected-input';
import { laplacianSpectrum, positionalEncoding, type LaplacianKind } from '../core/graph/spectral/spectrum';
import { encodeNpyFloat32 } from '../core/formats/npy-write';
import { undirectedEdgeCount } from '../core/graph/structure/undirected';

const DEFAULT_TOL = 1e-8;

const USAGE = `Usage: hopscope spectrum FILE --k K [options]

The K smallest eigenvalues of a Laplacian of the graph in FILE, with their eigenvectors on
request. The graph is taken undirected: an edge in either direction joins two nodes once,
repeated edges merge and self-loops are dropped.

  combinatorial   L = D - A
  normalized      I - D^-1/2 A D^-1/2 (Chung's convention: an isolated node has an all-zero row,
                  so it adds an eigenvalue 0, as networkx.normalized_laplacian_matrix does)

Eigenvalue 0 appears once per connected component (isolated nodes included). The rest comes from
small components solved exactly and from a restarted Lanczos method on the larger ones; every
pair is checked by its residual |Lx - lambda x| <= tol * bound, where bound is 2 x the largest
degree (combinatorial) or 2 (normalized).

Options:
  --k K                 how many eigenvalues, 1..N (N = node count)
  --laplacian combinatorial|normalized
                        which Laplacian (default combinatorial)
  --out PE.npy          write the K eigenvectors as an N x K float32 .npy: row i is the node with
                        id i (i + 1 in a 1-based file), column j the eigenvector of the j-th
                        smallest eigenvalue (unit length, sign fixed so that its first clearly
                        nonzero entry is positive). An existing file is never replaced unless
                        --force is given
  --force               let --out replace an existing file
  --tol T               relative residual tolerance, 1e-12..1e-2 (default ${DEFAULT_TOL})
  --num-nodes N         declare the node count
  --index-base 0|1      declare that node ids start at 0 or at 1
${CHECK_USAGE}
  --json                print JSON: { eigenvalues, laplacian, residuals, converged, ... }
  -h, --help            show this help

Exit codes: 0 = done; 2 = usage error, K out of range, --out exists, or the file could not be
read or written.`;

const OPTIONS = {
  ...ANALYSIS_OPTIONS,
  k: { type: 'string' },
  laplacian: { type: 'string' },
  out: { type: 'string' },
  tol: { type: 'string' },
  force: { type: 'boolean' },
  json: { type: 'boolean' },
} as const;

const LAPLACIANS = ['combinatorial', 'normalized'] as const satisfies readonly LaplacianKind[];

function parseTol(v: string): number {
  const x = Number(v);
  if (!/^[0-9.eE+-]+$/.test(v) || !Number.isFinite(x) || x < 1e-12 || x > 1e-2) {
    throw new UsageError(`--tol must be a number from 1e-12 to 1e-2, got "${v}"`);
  }
  return x;
}

function run(argv: string[], io: CliIo): number {
  return guarded('spectrum', USAGE, io, () => {
    const { values: v, positionals: files } = parseCommandLine(argv, OPTIONS);
    if (files.length !== 1) throw new UsageError(files.length ? `one FILE at a time, got ${files.length}` : 'no FILE given');
    if (v.k === undefined) throw new UsageError('--k is required');
    const k = wholeNumber('--k', v.k, 1);
    const kind: LaplacianKind = v.laplacian === undefined ? 'combinatorial' : oneOf('--laplacian', v.laplacian, LAPLACIANS);
    const tol = v.tol === undefined ? DEFAULT_TOL : parseTol(v.tol);
    const out = v.out;
    const force = v.force === true;
    if (force && out === undefined) throw new UsageError('--force only applies to --out');
    if (out !== undefined && !force && fs.existsSync(out)) {
      throw new UsageError(`--out ${out} already exists; pass --force to replace it`);
    }

    const file = files[0]!;
    const { g } = loadUndirected(file, analysisOptions(v), 'spectrum', io);
    if (k > g.n) throw new UsageError(`--k ${k} is more than the ${plural(g.n, 'node')} of ${file}`);
    const r = laplacianSpectrum(g, k, { laplacian: kind, tol });

    if (out !== undefined) {
      const bytes = encodeNpyFloat32(r.n, r.k, positionalEncoding(r));
      try {
        fs.writeFileSync(out, bytes, { flag: force ? 'w' : 'wx' });
      } catch (e) {
        const code = (e as NodeJS.ErrnoException).code;
        if (code === 'EEXIST') throw new UsageError(`--out ${out} already exists; pass --force to replace it`);
        io.err(`hopscope spectrum: cannot write ${out}: ${(e as Error).message}\n`);
        return 2;
      }
    }
    if (!r.converged) {
      io.err(`hopscope spectrum: warning: not every eigenpair reached the tolerance within the iteration budget (see residuals)\n`);
    }

    const edges = undirectedEdgeCount(g);
    if (v.json) {
      io.out(JSON.stringify({
        file, nodes: g.n, edges, laplacian: kind, k: r.k,
        eigenvalues: Array.from(r.eigenvalues),
        residuals: Array.from(r.residuals),
        converged: r.converged,
        components: r.components,
        tolerance: r.tol,
        normBound: r.normBound,
        out: out ?? null,
      }, null, 2) + '\n');
      return 0;
    }

    const c = styler(io);
    const lines: string[] = [];
    lines.push(c('bold', `Smallest ${plural(r.k, 'eigenvalue')} of the ${kind} Laplacian`) +
      c('dim', `  (${file}: ${plural(g.n, 'node')}, ${plural(edges, 'edge')} in the undirected view)`));
    lines.push('');
    lines.push(c('dim', '      #        eigenvalue     residual'));
    r.eigenvalues.forEach((lambda, i) => {
      lines.push(`  ${String(i + 1).padStart(5)}  ${lambda.toFixed(10).padStart(16)}   ${r.residuals[i]!.toExponential(1).padStart(8)}`);
    });
    lines.push('');
    const zeros = Math.min(r.k, r.components);
    lines.push(`  ${plural(r.components, 'connected component')} (isolated nodes included): eigenvalue 0 has multiplicity ${r.components}` +
      (zeros < r.components ? ` (${zeros} listed)` : '') + '.');
    if (r.k > r.components) {
      lines.push(`  Smallest nonzero eigenvalue: ${r.eigenvalues[r.components]!.toFixed(6)}` +
        (r.components === 1 ? ' (algebraic connectivity).' : ' (over all components).'));
    }
    lines.push(r.converged
      ? c('dim', `  Every residual is at most ${r.tol} x ${r.normBound} (tolerance x bound on the largest eigenvalue).`)
      : c('yellow', `  Not converged within the iteration budget: the residuals above say how far each pair is.`));
    if (out !== undefined) lines.push(`  Wrote ${r.n} x ${r.k} float32 eigenvectors to ${out}.`);
    io.out(lines.join('\n') + '\n');
    return 0;
  });
}

export const spectrumCommand: Command = {
  name: 'spectrum',
  summary: 'spectrum FILE --k K       smallest Laplacian eigenvalues; eigenvectors as positional encodings',
  usage: USAGE,
  run,
};
