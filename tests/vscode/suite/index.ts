// Entry point loaded by VS Code's extension host for extension tests (extensionTestsPath): runs every
// bundled *.test.js next to this file with mocha and rejects when a test fails.
import Mocha from 'mocha';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';

export function run(): Promise<void> {
  const mocha = new Mocha({ ui: 'bdd', timeout: 90_000, color: false, reporter: 'spec' });
  for (const f of readdirSync(__dirname).filter((n) => n.endsWith('.test.js')).sort()) mocha.addFile(join(__dirname, f));
  return new Promise((resolve, reject) => {
    mocha.run((failures) => (failures ? reject(new Error(`${failures} extension-host test(s) failed`)) : resolve()));
  });
}
