// `npm run bench:editor`: two editor latencies of the language server (dist/server.js over stdio),
// on the bench's own graphs (bench/gen.mjs, reused from bench/out):
//
//   1. save → diagnostics: a 1,000,000-line edge list is saved with one more (or one fewer) bad
//      line and the server is told as an editor's file watcher tells it; the time until that
//      file's new diagnostics are published. Several saves, alternating, each changes the problems.
//   2. hovers while a 10,000,000-line edge list is checked: the large file appears in the
//      workspace, and node-id hovers on a small open edge list are sent one at a time (20 ms apart)
//      until the large file's diagnostics are published; p50/p95/max of their latency.
//
// The server is started as the extension starts it: with huge pages asked of glibc
// (common/huge-pages.ts; `--no-huge-pages` starts it without, for a before/after).
//
// Figures, never a test: exit status 1 only when the server failed or never answered.
//
//   node bench/editor.mjs [--saves 5] [--small-edges 1m] [--large-edges 10m] [--server dist/server.js] [--no-huge-pages] [--keep]
import { spawn } from 'node:child_process';
import * as fs from 'node:fs';
import { createRequire } from 'node:module';
import * as os from 'node:os';
import * as path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { DEFAULT_SEED, ensureGraph } from './gen.mjs';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const require = createRequire(path.join(ROOT, 'package.json'));
const { createMessageConnection, StreamMessageReader, StreamMessageWriter } = require('vscode-jsonrpc/node');

const argOf = (name, dflt) => { const i = process.argv.indexOf(name); return i > 0 ? process.argv[i + 1] : dflt; };
const size = (s) => { const m = /^(\d+(?:\.\d+)?)([km]?)$/i.exec(String(s)); if (!m) throw new Error(`bad size ${s}`); return Math.round(Number(m[1]) * (m[2].toLowerCase() === 'm' ? 1e6 : m[2].toLowerCase() === 'k' ? 1e3 : 1)); };
const SAVES = Number(argOf('--saves', 5));
const SMALL_E = size(argOf('--small-edges', '1m'));
const LARGE_E = size(argOf('--large-edges', '10m'));
const KEEP = process.argv.includes('--keep');
const SERVER = path.resolve(argOf('--server', path.join(ROOT, 'dist', 'server.js')));
if (!fs.existsSync(SERVER)) { console.error('dist/server.js missing: run npm run build'); process.exit(1); }

const label = (e) => (e % 1e6 === 0 ? `${e / 1e6}m` : e % 1e3 === 0 ? `${e / 1e3}k` : String(e));
const OUT = path.join(ROOT, 'bench', 'out');
const log = (m) => process.stderr.write(m + '\n');
const smallGraph = ensureGraph(path.join(OUT, `graph-${label(SMALL_E)}`), SMALL_E, DEFAULT_SEED, { log });
const largeGraph = ensureGraph(path.join(OUT, `graph-${label(LARGE_E)}`), LARGE_E, DEFAULT_SEED, { log });
const smallTxt = smallGraph.txt;
const largeTxt = largeGraph.txt;

// The workspace: one small open edge list (hovers), the 1M list (saves); the 10M list comes later.
const ws = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-editor-'));
const abs = (r) => path.join(ws, r);
const uriOf = (r) => pathToFileURL(abs(r)).href;
const HOVER_DOC = 'dock_lanes.edges';
const hoverLines = [];
for (let u = 1; u < 40; u++) hoverLines.push(`${u} ${u - 1}`, `${u - 1} ${u}`);
fs.writeFileSync(abs(HOVER_DOC), hoverLines.join('\n') + '\n');
const SAVED = 'ride_log_1m.edges';
const LARGE = 'ride_log_10m.edges';
fs.copyFileSync(smallTxt, abs(SAVED));
const savedText = fs.readFileSync(abs(SAVED));

// extension/src/extension.ts starts the server with envWithHugePages(process.env): on Linux,
// GLIBC_TUNABLES gains glibc.malloc.hugetlb=1 unless HOPSCOPE_HUGE_PAGES is off or the caller set it.
const HUGE = !process.argv.includes('--no-huge-pages');
const serverEnv = { ...process.env };
if (HUGE && process.platform === 'linux' && !/(^|:)glibc\.malloc\.hugetlb=/.test(serverEnv.GLIBC_TUNABLES ?? '')) {
  serverEnv.GLIBC_TUNABLES = serverEnv.GLIBC_TUNABLES ? `${serverEnv.GLIBC_TUNABLES}:glibc.malloc.hugetlb=1` : 'glibc.malloc.hugetlb=1';
}
log(`server environment: GLIBC_TUNABLES=${serverEnv.GLIBC_TUNABLES ?? '(unset)'}`);
const child = spawn(process.execPath, [SERVER, '--stdio'], { stdio: ['pipe', 'pipe', 'inherit'], env: serverEnv });
let exited = null;
child.on('exit', (code, sig) => { exited = `exit ${code ?? sig}`; });
child.stdin.on('error', () => {});
const conn = createMessageConnection(new StreamMessageReader(child.stdout), new StreamMessageWriter(child.stdin));
const publishes = []; // { t, uri, n }
let status = { busy: true, filesChecked: 0 };
const listeners = new Set();
conn.onNotification('textDocument/publishDiagnostics', (p) => { publishes.push({ t: performance.now(), uri: p.uri, n: p.diagnostics.length }); listeners.forEach((l) => l()); });
conn.onNotification('hopscope/status', (s) => { status = s; listeners.forEach((l) => l()); });
conn.onRequest('workspace/configuration', () => [null, null]);
conn.onRequest('client/registerCapability', () => null);
conn.onRequest('window/workDoneProgress/create', () => null);
conn.listen();

function until(pred, ms = 300_000) {
  return new Promise((resolve, reject) => {
    const end = Date.now() + ms;
    const check = () => {
      const fail = exited ? `server ${exited}` : Date.now() > end ? 'timed out' : null;
      if (fail || pred()) { listeners.delete(check); clearInterval(timer); if (fail) reject(new Error(fail)); else resolve(); }
    };
    const timer = setInterval(check, 5);
    listeners.add(check);
    check();
  });
}
const sleep = (ms) => new Promise((r) => setTimeout(r, ms));
const pct = (xs, q) => { if (!xs.length) return NaN; const s = [...xs].sort((a, b) => a - b); return s[Math.min(s.length - 1, Math.floor(q * s.length))]; };
const ms = (x) => (Number.isFinite(x) ? `${x.toFixed(x < 10 ? 1 : 0)} ms` : '—');
const median = (xs) => pct(xs, 0.5);

async function main() {
  await conn.sendRequest('initialize', {
    processId: process.pid, rootUri: pathToFileURL(ws).href, workspaceFolders: [{ uri: pathToFileURL(ws).href, name: 'editor' }],
    capabilities: { workspace: { configuration: true }, textDocument: { publishDiagnostics: { relatedInformation: true } } },
  });
  await conn.sendNotification('initialized', {});
  await conn.sendNotification('textDocument/didOpen', { textDocument: { uri: uriOf(HOVER_DOC), languageId: 'plaintext', version: 1, text: hoverLines.join('\n') + '\n' } });
  const t0 = performance.now();
  await until(() => !status.busy && status.filesChecked >= 2 && publishes.some((p) => p.uri === uriOf(SAVED)));
  console.log(`workspace ${ws}: start-up check of a ${SMALL_E.toLocaleString('en')}-line list and a small one in ${ms(performance.now() - t0)}`);

  // 1. Saves of the 1M list: a line with a negative id added, then removed (the problems change each time).
  const saveMs = [];
  for (let i = 0; i < SAVES; i++) {
    const bad = i % 2 === 0;
    fs.writeFileSync(abs(SAVED), bad ? Buffer.concat([savedText, Buffer.from('17 -4\n')]) : savedText);
    const before = publishes.length;
    const t = performance.now();
    await conn.sendNotification('workspace/didChangeWatchedFiles', { changes: [{ uri: uriOf(SAVED), type: 2 }] });
    await until(() => publishes.slice(before).some((p) => p.uri === uriOf(SAVED)), 120_000);
    saveMs.push(performance.now() - t);
    await until(() => !status.busy);
    await sleep(300);
  }
  console.log(`1. save of the ${SMALL_E.toLocaleString('en')}-line list → its diagnostics: median ${ms(median(saveMs))}, ` +
    `max ${ms(Math.max(...saveMs))} over ${saveMs.length} saves [${saveMs.map((x) => x.toFixed(0)).join(', ')}] (target ≤ 1000 ms)`);

  // 2. Hovers on the small list while the 10M list is checked.
  fs.copyFileSync(largeTxt, abs(LARGE));
  const before = publishes.length;
  const tl = performance.now();
  await conn.sendNotification('workspace/didChangeWatchedFiles', { changes: [{ uri: uriOf(LARGE), type: 1 }] });
  let done = false;
  const waitLarge = until(() => publishes.slice(before).some((p) => p.uri === uriOf(LARGE)), 600_000).then(() => { done = true; });
  const hovers = [];
  let answered = 0;
  while (!done && !exited) {
    const k = hovers.length;
    const h0 = performance.now();
    const h = await conn.sendRequest('textDocument/hover', { textDocument: { uri: uriOf(HOVER_DOC) }, position: { line: k % hoverLines.length, character: 0 } });
    hovers.push(performance.now() - h0);
    if (h?.contents?.value) answered++;
    await sleep(20);
  }
  await waitLarge;
  console.log(`2. hovers on a small list while the ${LARGE_E.toLocaleString('en')}-line list was checked (${ms(performance.now() - tl)} to its diagnostics): ` +
    `${hovers.length} hovers (${answered} with text), p50 ${ms(pct(hovers, 0.5))}, p95 ${ms(pct(hovers, 0.95))}, max ${ms(Math.max(...hovers))} (target ≤ 100 ms)`);
  return { saveMs, hovers };
}

let code = 0;
try {
  await main();
} catch (e) {
  console.error(`editor bench failed: ${e.message}`);
  code = 1;
} finally {
  conn.dispose();
  child.kill();
  if (!KEEP) fs.rmSync(ws, { recursive: true, force: true });
}
process.exit(code);
