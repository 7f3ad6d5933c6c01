/**
 * The analysis subcommands of `hopscope` (besides `check`, which lives in cli.ts).
 * Each command registers itself here with one import and one array entry.
 */
import type { Command } from './types';
import { fieldCommand } from './field';

export const COMMANDS: Command[] = [
  fieldCommand,
];
