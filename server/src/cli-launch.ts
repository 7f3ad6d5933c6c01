/**
 * The `hopscope` executable (dist/cli.js). It loads only node built-ins, common/huge-pages.ts and node/relaunch.ts,
 * decides whether the command is worth running in a second process started with huge pages
 * (node/relaunch.ts: large inputs, Linux with glibc, transparent huge pages in `madvise` mode), and
 * then either starts that process and passes its exit status on, or runs the command line's
 * bundle (dist/cli-main.js, built from cli.ts) in this one. Results are the same either way.
 */
import { spawnSync } from 'node:child_process';
import { envWithHugePages } from '../../common/huge-pages';
import { decideRelaunch, measureMachine } from './node/relaunch';

/** Set in the second process so it never starts a third. */
const RELAUNCHED = 'HOPSCOPE_RELAUNCHED';

function launch(): void {
  const args = process.argv.slice(2);
  if (process.env[RELAUNCHED] !== '1' && process.argv[1] !== undefined) {
    const decision = decideRelaunch(measureMachine(args.slice(1)));
    if (process.env.HOPSCOPE_HUGE_PAGES_DEBUG) {
      process.stderr.write(`hopscope: huge pages: ${decision.relaunch ? 'second process' : 'this process'} (${decision.why})\n`);
    }
    if (decision.relaunch) {
      const env = { ...envWithHugePages(process.env), [RELAUNCHED]: '1' };
      const child = spawnSync(process.execPath, [...process.execArgv, process.argv[1], ...args], { stdio: 'inherit', env });
      if (!child.error) {
        if (child.signal) process.kill(process.pid, child.signal);
        process.exitCode = child.status ?? 1;
        return;
      }
      // Could not start the second process: run here, as if huge pages had not been asked for.
    }
  }
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  (require('./cli-main.js') as { runFromProcess: () => void }).runFromProcess();
}

launch();
