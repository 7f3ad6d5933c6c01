// Entry point loaded by VS Code's extension host for extension tests (extensionTestsPath): runs every
// bundled *.test.js next to this file with mocha and rejects when a test fails.
import Mocha from 'mocha';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { format } from 'node:util';

/**
 * Starts every line of the test report, so that tests/vscode/run-in-code-server.mjs can pick the
 * report out of the workbench log it receives. A zero-width space: invisible in other runners' output.
 */
export const REPORT_MARK = '\u200b';

export function run(): Promise<void> {
  const base = Mocha.reporters.Base as unknown as { consoleLog: (...args: unknown[]) => void };
  const log = base.consoleLog;
  base.consoleLog = (...args) => log(REPORT_MARK + format(...args));
  const mocha = new Mocha({ ui: 'bdd', timeout: 90_000, color: false, reporter: 'spec' });
  for (const f of readdirSync(__dirname).filter((n) => n.endsWith('.test.js')).sort()) mocha.addFile(join(__dirname, f));
  return new Promise((resolve, reject) => {
    mocha.run((failures) => (failures ? reject(new Error(`${failures} extension-host test(s) failed`)) : resolve()));
  });
}
