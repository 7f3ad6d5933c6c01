// `npm run test:vscode`: the extension-host suite (tests/vscode/suite) under desktop VS Code through
// @vscode/test-electron, with the extension loaded from this checkout and a fresh copy of demo/ as
// the workspace. The first run downloads VS Code (about 150 MB, into .vscode-test/), so it needs
// internet access and is not part of CI; the same suite runs in CI inside code-server
// (tests/vscode/run-in-code-server.mjs, part of `npm run test:e2e`).
// VSCODE_VERSION picks the VS Code build (default: the oldest the extension supports, 1.91.0).
import { runTests } from '@vscode/test-electron';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { ROOT, copyDemo } from '../../scripts/code-server.mjs';
import { buildSuite } from './build.mjs';

const suite = await buildSuite();
const base = mkdtempSync(join(tmpdir(), 'hopscope-electron-'));
const folder = copyDemo(join(base, 'demo'));
let code = 1;
try {
  await runTests({
    version: process.env.VSCODE_VERSION ?? '1.91.0',
    extensionDevelopmentPath: ROOT,
    extensionTestsPath: suite,
    launchArgs: [folder, '--disable-extensions', '--disable-workspace-trust', '--user-data-dir', join(base, 'user-data')],
  });
  code = 0;
} catch (e) {
  console.error(e instanceof Error ? e.message : e);
} finally {
  rmSync(base, { recursive: true, force: true });
}
process.exit(code);
