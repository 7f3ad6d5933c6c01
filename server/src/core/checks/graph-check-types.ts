/**
 * What a graph check takes: the graph's parts (tensors with their roles), what the user declared,
 * and the bounds it works within; and the problems it gives, each attributed to a file. Shared by
 * checkGraph (graph-check.ts) and its rules (rules/).
 */
import type { Problem, Tensor } from '../formats/types';
import type { RoleGuess } from './roles';
import type { SendingRow } from '../../../../common/report';

export type SelfLoopPolicy = 'allowed' | 'forbidden';
export type { SendingRow };

/** What the user declared about a graph (manifest, CLI flags, editor settings). */
export interface GraphOptions {
  directed?: boolean;
  nodes?: number;
  indexBase?: 0 | 1;
  selfLoops?: SelfLoopPolicy;
  /** Which row of the edge index sends messages (the field analyses; no check depends on it). */
  sendingRow?: SendingRow;
}

export interface GraphPart {
  file: string;
  tensor: Tensor;
  guess: RoleGuess;
  /** Facts the part's own file states (e.g. the Matrix Market size line). */
  hints?: { nodes?: number; indexBase?: 0 | 1; directed?: boolean };
}

export interface FileProblem {
  file: string;
  problem: Problem;
}

/** Bounds on memory a check may use (see denseNodeLimit). */
export interface CheckLimits {
  /** The largest file that is read at all (hopscope.maxFileSizeMB, or the CLI's limit). */
  maxFileBytes?: number;
  /**
   * For the analysis commands: stop after the bounds pass (edges read, node count, index base, ids
   * in range, the per-node tensors' lengths). The structure's CSR directions are built on first
   * use; no pair rules, figures, components or duplicate examples (see checkGraph).
   */
  lean?: boolean;
}
