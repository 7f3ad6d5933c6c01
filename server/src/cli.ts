/**
 * The `hopscope` command line: picks the command and hands it the rest of the words. Each command
 * (server/src/commands/) parses its own options with the shared parser and writes its own output.
 */
import { useParallelPairBuilder } from './node/pair-build';
import { COMMANDS } from './commands';
import type { CliIo } from './commands/types';
import { colourAllowed } from './commands/style';

const VERSION = '0.1.0';

function overview(): string {
  const lines = [
    `hopscope ${VERSION}: checks graph tensor files and shows what a message-passing model sees.`,
    '',
    'Commands:',
    ...COMMANDS.map((c) => `  ${c.summary}`),
    '',
    'Run hopscope COMMAND --help for the options of one command.',
  ];
  return lines.join('\n');
}

export type { CliIo };

/** Runs the CLI; returns the exit code. */
export function main(argv: string[], io: CliIo): number {
  const [cmd, ...rest] = argv;
  if (cmd === undefined || cmd === '-h' || cmd === '--help' || cmd === 'help') {
    (cmd === undefined ? io.err : io.out)(overview() + '\n');
    return cmd === undefined ? 2 : 0;
  }
  if (cmd === '-v' || cmd === '--version') { io.out(`hopscope ${VERSION}\n`); return 0; }
  const command = COMMANDS.find((c) => c.name === cmd);
  if (!command) {
    io.err(`hopscope: unknown command "${cmd}"\n\n${overview()}\n`);
    return 2;
  }
  // Help and version win over every other word before a `--`: `hopscope field FILE --help` runs nothing.
  const end = rest.indexOf('--');
  const options = end < 0 ? rest : rest.slice(0, end);
  if (options.includes('-h') || options.includes('--help')) { io.out(command.usage + '\n'); return 0; }
  if (options.includes('-v') || options.includes('--version')) { io.out(`hopscope ${VERSION}\n`); return 0; }
  return command.run(rest, io);
}

/** Runs the command line on this process's arguments and streams (dist/cli.js calls this, in this
 * process or in the second one it starts with huge pages). */
export function runFromProcess(): void {
  useParallelPairBuilder();
  const code = main(process.argv.slice(2), {
    out: (s) => process.stdout.write(s),
    err: (s) => process.stderr.write(s),
    color: colourAllowed(process.stdout, process.env),
  });
  process.exitCode = code;
}

if (typeof require !== 'undefined' && typeof module !== 'undefined' && require.main === module) runFromProcess();
