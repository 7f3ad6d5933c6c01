/**
 * The analysis subcommands of `hopscope` (besides `check`, which lives in cli.ts).
 * Each command registers itself here with one import and one array entry.
 */
import type { Command } from './types';
import { fieldCommand } from './field';
import { wlCommand } from './wl';
import { compareCommand } from './compare';
import { bottlenecksCommand } from './bottlenecks';
import { spectrumCommand } from './spectrum';

export const COMMANDS: Command[] = [
  fieldCommand,
  wlCommand,
  compareCommand,
  bottlenecksCommand,
  spectrumCommand,
];
