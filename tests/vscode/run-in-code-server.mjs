// Runs the extension-host test suite (tests/vscode/suite) inside code-server: the extension is loaded
// from this checkout (dist/, like F5), the tests from dist-test/, the workspace is a fresh copy of
// demo/. code-server takes both paths from the workbench URL's `payload` (it has no command-line
// flags for them), which it honours only with the smoke-test driver enabled; a browser must connect
// for an extension host to start, and the exit code comes back through window.codeAutomationExit.
// Needs scripts/e2e-setup.sh and a built dist/ (npm run build or npm run package). Exit code 0 = passed.
import { chromium } from 'playwright-core';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { format } from 'node:util';
import {
  CHROMIUM, CHROMIUM_ARGS, ROOT, codeServerInstalled, copyDemo, extensionHostLogs, installVsix, makeProfile,
  remoteUri, startCodeServer, workbenchUrl,
} from '../../scripts/code-server.mjs';
import { buildSuite } from './build.mjs';

const TIMEOUT_MS = 300_000;
const REPORT_MARK = '\u200b'; // see tests/vscode/suite/index.ts

if (!codeServerInstalled()) {
  console.error('code-server is missing: run `bash scripts/e2e-setup.sh` first');
  process.exit(2);
}
if (!existsSync(join(ROOT, 'dist/extension.js'))) {
  console.error('dist/extension.js is missing: run `npm run build` first');
  process.exit(2);
}
const suite = await buildSuite();

const base = mkdtempSync(join(tmpdir(), 'hopscope-exthost-'));
const profile = makeProfile(base);
// The test-only debugger type for Python (tests/debug/debugpy-extension, never shipped) goes into this
// profile as an installed extension: code-server loads only one extensionDevelopmentPath.
{
  const vsce = join(createRequire(import.meta.url).resolve('@vscode/vsce/package.json'), '..', 'vsce');
  const vsix = join(base, 'debugpy-test-adapter.vsix');
  const r = spawnSync(process.execPath, [vsce, 'package', '--no-dependencies', '--allow-missing-repository', '--skip-license', '-o', vsix],
    { cwd: join(ROOT, 'tests/debug/debugpy-extension'), encoding: 'utf8' });
  if (r.status !== 0) console.error(`packaging the test debugger failed; the Python debug test will be skipped:\n${r.stdout}${r.stderr}`);
  else installVsix(profile, vsix);
}
const folder = copyDemo(join(base, 'demo'));
const started = Date.now();
let code = 1;
let cs;
let browser;
try {
  cs = await startCodeServer(profile, { extraArgs: ['--vscode-option', 'enable-smoke-test-driver'] });
  browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
  const page = await browser.newPage();
  // The workbench forwards its log and the extension host's console here: print the test report
  // (its lines start with the suite's marker) and errors, not the workbench's routine chatter.
  await page.exposeFunction('codeAutomationLog', (level, args) => {
    const line = format(...(Array.isArray(args) ? args : [args]));
    const at = line.indexOf(REPORT_MARK);
    if (at >= 0) console.log(line.slice(at + REPORT_MARK.length));
    else if (level >= 5) console.log(line); // errors
  });
  const exited = new Promise((resolve) => { void page.exposeFunction('codeAutomationExit', (c) => resolve(c)); });
  const payload = [
    ['extensionDevelopmentPath', remoteUri(cs.url, ROOT)],
    ['extensionTestsPath', remoteUri(cs.url, suite)],
  ];
  await page.goto(workbenchUrl(cs.url, folder, payload));
  const result = await Promise.race([exited, new Promise((r) => setTimeout(() => r('timeout'), TIMEOUT_MS))]);
  if (result === 'timeout') console.error(`extension-host tests did not finish within ${TIMEOUT_MS / 1000} s`);
  else code = Number(result);
} catch (e) {
  console.error(e);
} finally {
  await browser?.close();
  await cs?.stop();
  if (code !== 0) {
    for (const f of extensionHostLogs(profile)) {
      const lines = readFileSync(f, 'utf8').split('\n').slice(-40).map((l) => (l.length > 400 ? l.slice(0, 400) + '…' : l));
      console.log(`\n----- ${f} (last 40 lines)\n${lines.join('\n')}`);
    }
  }
  rmSync(base, { recursive: true, force: true });
}
console.log(`extension-host tests in code-server: ${code === 0 ? 'passed' : `FAILED (exit ${code})`} in ${((Date.now() - started) / 1000).toFixed(1)} s`);
process.exit(code);
