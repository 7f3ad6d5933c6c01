/**
 * The one argument parser of the `hopscope` commands (server/src/commands/args.ts, on Node's
 * util.parseArgs) and the one styler. The contract is our own usage text (each command's --help
 * and the README's CLI section): a mistake on the command line is exit code 2, a message
 * "hopscope COMMAND: what is wrong", then the command's usage; nothing on stdout.
 */
import { describe, expect, it } from 'vitest';
import * as path from 'node:path';
import { main } from '../../server/src/cli';
import { parseCommandLine, GRAPH_OPTIONS, graphOptions } from '../../server/src/commands/args';
import { colourAllowed, styler } from '../../server/src/commands/style';
import { UsageError } from '../../server/src/commands/types';
import { COMMANDS } from '../../server/src/commands';

const root = path.join(__dirname, '../..');
const KARATE = path.join(root, 'tests/fixtures/graphs/karate.npy'); // numpy.save, 2 x 156

function run(...argv: string[]) {
  let out = '', err = '';
  const code = main(argv, { out: (s) => (out += s), err: (s) => (err += s), color: false });
  return { code, out, err };
}

/** The words that make each command run on the karate club, so that one extra word is the only mistake. */
const VALID: Record<string, string[]> = {
  check: [KARATE],
  field: [KARATE, '--node', '0', '--layers', '1'],
  wl: [KARATE],
  compare: [KARATE, KARATE],
  bottlenecks: [KARATE],
  spectrum: [KARATE, '--k', '2'],
  ceiling: [path.join(root, 'tests/fixtures/ceiling/karate.npz')], // karate club with its 'club' labels
};

describe('parseCommandLine', () => {
  const specs = { ...GRAPH_OPTIONS, node: { type: 'string' }, json: { type: 'boolean', short: 'j' } } as const;
  const usage = (argv: string[]) => {
    try {
      parseCommandLine(argv, specs);
    } catch (e) {
      expect(e).toBeInstanceOf(UsageError);
      return (e as Error).message;
    }
    throw new Error(`no UsageError for ${argv.join(' ')}`);
  };

  it('long and short forms, inline values, positionals in any order, -- ends the options', () => {
    const r = parseCommandLine(['a.npy', '--node=3', '-j', 'b.npy', '--', '--json', '-x'], specs);
    expect(r.values).toEqual({ node: '3', json: true });
    expect(r.positionals).toEqual(['a.npy', 'b.npy', '--json', '-x']);
    expect(parseCommandLine(['--node', '-1'], specs).values.node).toBe('-1'); // a negative number is a value
  });

  it('our messages for every mistake', () => {
    expect(usage(['--nodes', '3'])).toBe('unknown option --nodes');
    expect(usage(['-x'])).toBe('unknown option -x');
    expect(usage(['--node'])).toBe('--node needs a value');
    expect(usage(['--node', '--json'])).toBe('--node needs a value');
    expect(usage(['--json=yes'])).toBe('--json takes no value');
    expect(usage(['--node', '1', '--node=2'])).toBe('--node given twice');
  });

  it('--num-nodes and --index-base become graph declarations, checked', () => {
    expect(graphOptions(parseCommandLine(['--num-nodes', '40', '--index-base', '1'], specs).values)).toEqual({ nodes: 40, indexBase: 1 });
    expect(() => graphOptions({ 'index-base': '2' })).toThrow('--index-base must be 0 or 1, got "2"');
    expect(() => graphOptions({ 'num-nodes': '-4' })).toThrow('--num-nodes must be a non-negative whole number, got "-4"');
  });
});

describe('every command: unknown options and bad values exit 2 with our message and the usage', () => {
  for (const command of COMMANDS) {
    const valid = VALID[command.name];
    it(`${command.name}`, () => {
      expect(valid, `add ${command.name} to VALID`).toBeDefined();
      const cases: Array<[string[], string]> = [
        [[...valid!, '--wobble'], 'unknown option --wobble'],
        [[...valid!, '-q'], 'unknown option -q'],
        [[...valid!, '--index-base', '2'], '--index-base must be 0 or 1, got "2"'],
        [[...valid!, '--num-nodes', 'many'], '--num-nodes must be a non-negative whole number, got "many"'],
        [[...valid!, '--index-base'], '--index-base needs a value'],
        [[...valid!, '--json=1'], '--json takes no value'],
        [[...valid!, '--num-nodes', '34', '--num-nodes', '35'], '--num-nodes given twice'],
      ];
      for (const [argv, message] of cases) {
        const r = run(command.name, ...argv);
        expect(r.code, argv.join(' ')).toBe(2);
        expect(r.out, argv.join(' ')).toBe('');
        expect(r.err, argv.join(' ')).toBe(`hopscope ${command.name}: ${message}\n\n${command.usage}\n`);
      }
      // The same words without the mistake run (so the mistake is what made the exit code 2).
      expect(run(command.name, ...valid!, '--json').code).toBe(0);
    });
  }
});

describe('hopscope check values', () => {
  it('--fail-on takes exactly the documented error, warning and never', () => {
    const usage = COMMANDS.find((c) => c.name === 'check')!.usage;
    expect(usage).toContain('--fail-on error|warning|never');
    for (const v of ['error', 'warning', 'never']) expect(run('check', KARATE, '--fail-on', v).code).toBe(0);
    for (const v of ['info', 'Error', '']) {
      const r = run('check', KARATE, '--fail-on', v);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(new RegExp(`^hopscope check: --fail-on must be error, warning or never, got "${v}"\\n`));
    }
  });

  it('--directed with --undirected is refused; --manifest needs a file', () => {
    expect(run('check', KARATE, '--directed', '--undirected').err).toMatch(/^hopscope check: --directed and --undirected exclude each other/);
    expect(run('check', KARATE, '--manifest').err).toMatch(/^hopscope check: --manifest needs a value/);
  });

  it('--help and --version win over other words; after -- they are paths', () => {
    const help = run('check', '--bogus', '--help');
    expect(help.code).toBe(0);
    expect(help.out).toMatch(/^Usage: hopscope check PATH/);
    expect(run('check', '-v').out).toMatch(/^hopscope \d+\.\d+\.\d+\n$/);
    const path = run('check', '--', '--help');
    expect(path.code).toBe(2);
    expect(path.err).toMatch(/--help: no such file or folder/);
  });

  it('the overview lists check first, then the analyses', () => {
    const r = run('--help');
    expect(r.code).toBe(0);
    const listed = r.out.split('\n').filter((l) => /^ {2}\w/.test(l)).map((l) => l.trim().split(/\s+/)[0]);
    expect(listed).toEqual(['check', 'field', 'wl', 'compare', 'bottlenecks', 'spectrum', 'ceiling']);
  });
});

describe('the one styler', () => {
  it('colour only on a terminal, never with NO_COLOR set (no-color.org: any non-empty value)', () => {
    expect(colourAllowed({ isTTY: true }, {})).toBe(true);
    expect(colourAllowed({ isTTY: false }, {})).toBe(false);
    expect(colourAllowed({}, {})).toBe(false);
    expect(colourAllowed({ isTTY: true }, { NO_COLOR: '1' })).toBe(false);
    expect(colourAllowed({ isTTY: true }, { NO_COLOR: '' })).toBe(true);
  });

  it('styles only when allowed', () => {
    expect(styler({ color: true })('red', 'x')).toBe('\x1b[31mx\x1b[0m');
    expect(styler({ color: false })('red', 'x')).toBe('x');
  });

  it('every command prints no escape codes without colour', () => {
    for (const command of COMMANDS) {
      const r = run(command.name, ...VALID[command.name]!);
      expect(r.code, command.name).toBe(0);
      expect(r.out, command.name).not.toContain('\x1b[');
    }
  });
});
