// `npm run test:e2e`: checks the e2e setup (scripts/e2e-setup.sh --check), packages the extension,
// then runs both end-to-end suites against code-server and reports each: the Playwright UI tests
// (tests/e2e, with the packaged .vsix installed) and the extension-host mocha suite (tests/vscode,
// extension loaded from dist/). Extra arguments go to Playwright (e.g. `-- -g squiggle`).
import { spawnSync } from 'node:child_process';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const playwright = join(dirname(createRequire(import.meta.url).resolve('@playwright/test/package.json')), 'cli.js');

function step(title, cmd, args) {
  const t = Date.now();
  console.log(`\n== ${title}`);
  const r = spawnSync(cmd, args, { cwd: root, stdio: 'inherit' });
  const secs = ((Date.now() - t) / 1000).toFixed(1);
  console.log(`== ${title}: ${r.status === 0 ? 'ok' : `failed (exit ${r.status ?? r.signal})`} in ${secs} s`);
  return r.status === 0;
}

if (!step('e2e setup check', 'bash', ['scripts/e2e-setup.sh', '--check'])) process.exit(1);
if (!step('package the extension', process.execPath, ['scripts/package.mjs'])) process.exit(1);
const ui = step('UI tests in code-server (Playwright)', process.execPath,
  [playwright, 'test', '-c', 'tests/e2e/playwright.config.ts', ...process.argv.slice(2)]);
const host = step('extension-host tests in code-server (mocha)', process.execPath, ['tests/vscode/run-in-code-server.mjs']);
console.log(`\nUI tests: ${ui ? 'passed' : 'FAILED'}; extension-host tests: ${host ? 'passed' : 'FAILED'}`);
process.exit(ui && host ? 0 : 1);
