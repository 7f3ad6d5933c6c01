/**
 * The `hopscope` commands. cli.ts dispatches on `name`; each command registers itself here with
 * one import and one array entry.
 */
import type { Command } from './types';
import { checkCommand } from './check';
import { fieldCommand } from './field';
import { wlCommand } from './wl';
import { compareCommand } from './compare';
import { bottlenecksCommand } from './bottlenecks';
import { spectrumCommand } from './spectrum';
import { ceilingCommand } from './ceiling';

export const COMMANDS: Command[] = [
  checkCommand,
  fieldCommand,
  wlCommand,
  compareCommand,
  bottlenecksCommand,
  spectrumCommand,
  ceilingCommand,
];
