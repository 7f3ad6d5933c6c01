// `npm run demo` (after `npm run build`): first the command-line summary of the demo workspace
// (demo/), then the editor:
//   - with a `code` command on PATH: VS Code opens demo/ with the extension loaded from this checkout;
//   - otherwise: the browser-based VS Code (code-server, set up once by scripts/e2e-setup.sh into
//     .cache/e2e/cs) with the packaged extension installed into a persistent profile in .cache/demo/,
//     listening on 127.0.0.1 only; it prints the address to open and runs until Ctrl+C.
// `--cli-only` stops after the summary (used by CI).
// The demo is broken on purpose, so the check itself exits 1 (problems) or 2 (a file that cannot be
// read); the summary step succeeds when the check ran and reported.
import { spawnSync } from 'node:child_process';
import { accessSync, constants } from 'node:fs';
import { delimiter, join } from 'node:path';
import { ROOT, codeServerInstalled, installVsix, makeProfile, portFree, startCodeServer, workbenchUrl } from './code-server.mjs';

const root = ROOT;
const demo = join(root, 'demo');


const r = spawnSync(process.execPath, [join(root, 'dist/cli.js'), 'check', 'demo/'], { cwd: root, stdio: 'inherit' });
const meaning = { 0: 'no problems', 1: 'problems found', 2: 'a file could not be read' }[r.status] ?? 'failed';
console.log(`\nhopscope check demo/ exited with ${r.status} (${meaning}) — the demo files are broken on purpose; see demo/README.md.`);
if (r.status !== 0 && r.status !== 1 && r.status !== 2) process.exit(1);
if (process.argv.includes('--cli-only')) process.exit(0);

function onPath(cmd) {
  for (const dir of (process.env.PATH ?? '').split(delimiter)) {
    try { accessSync(join(dir, cmd), constants.X_OK); return true; } catch { /* next */ }
  }
  return false;
}

if (onPath('code')) {
  console.log('\nOpening demo/ in VS Code with Hopscope loaded from this checkout…');
  const c = spawnSync('code', [`--extensionDevelopmentPath=${root}`, demo], { stdio: 'inherit' });
  process.exit(c.status ?? 1);
}

console.log('\nNo `code` command on PATH: starting VS Code in the browser (code-server) instead.');
if (!codeServerInstalled()) {
  console.log('One-time setup: Node 24 and code-server go into .cache/e2e/cs (about 800 MB, 3-5 minutes;\n' +
    'it also installs Debian\'s chromium and build headers with apt-get when they are missing).');
  const s = spawnSync('bash', [join(root, 'scripts/e2e-setup.sh')], { cwd: root, stdio: 'inherit' });
  if (s.status !== 0) process.exit(s.status ?? 1);
}

const vsix = join(root, '.cache/demo/hopscope.vsix');
const p = spawnSync(process.execPath, [join(root, 'scripts/package.mjs'), vsix], { cwd: root, stdio: ['ignore', 'ignore', 'inherit'] });
if (p.status !== 0) process.exit(p.status ?? 1);
const profile = makeProfile(join(root, '.cache/demo'), { isolate: false });
installVsix(profile, vsix);

const port = (await portFree(8080)) ? 8080 : 0;
const cs = await startCodeServer(profile, { port });
// The folder is shown unescaped when that is unambiguous, so the address stays readable.
const url = /^[\w/.-]+$/.test(demo) ? `${cs.url}/?folder=${demo}` : workbenchUrl(cs.url, demo);
console.log(`\nHopscope demo: open ${url}\n` +
  '(VS Code in the browser, listening on 127.0.0.1 only; profile in .cache/demo/, log in .cache/demo/code-server.log)\n' +
  'Press Ctrl+C to stop.');
let stopping = false;
const stop = async () => {
  if (stopping) return;
  stopping = true;
  await cs.stop();
  process.exit(0);
};
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
const code = await cs.exited;
if (!stopping) {
  console.error(`code-server stopped unexpectedly (${code}); see .cache/demo/code-server.log`);
  process.exit(1);
}
