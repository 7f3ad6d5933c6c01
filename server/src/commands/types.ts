/** A `hopscope` command. cli.ts dispatches on `name`; everything else lives in the command. */
export interface CliIo {
  out: (s: string) => void;
  err: (s: string) => void;
  /** Colour allowed (stdout is a TTY and NO_COLOR is unset). */
  color: boolean;
}

export interface Command {
  name: string;
  /** One line for the overview, e.g. "field FILE --node V --layers L   receptive field of a node". */
  summary: string;
  /** Full usage text for `hopscope NAME --help`. */
  usage: string;
  /** Returns the exit code: 0 ok, 1 ran but found what --fail-on asks about (if any), 2 usage or unreadable input. */
  run(argv: string[], io: CliIo): number;
}

export class UsageError extends Error {
  override readonly name = 'UsageError';
}
