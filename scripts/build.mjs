// Bundles the entry points into dist/: extension host (cjs), language server (cjs), its check
// worker and helper threads (cjs),
// command line (a small launcher with a shebang, and the command line's bundle) and webview (browser iife). Type checking is `npm run typecheck`.
import * as esbuild from 'esbuild';
import { existsSync } from 'node:fs';

const production = process.argv.includes('--production');
const watch = process.argv.includes('--watch');

const common = {
  bundle: true,
  sourcemap: !production,
  minify: production,
  logLevel: 'warning',
  target: 'node20',
  // The Python helpers "Inspect as Graph" sends to a debuggee (extension/src/debug/*.py) are bundled as text.
  loader: { '.py': 'text' },
};

const entries = [
  { ...common, entryPoints: ['extension/src/extension.ts'], outfile: 'dist/extension.js', platform: 'node', format: 'cjs', external: ['vscode'] },
  { ...common, entryPoints: ['server/src/lsp/server.ts'], outfile: 'dist/server.js', platform: 'node', format: 'cjs' },
  { ...common, entryPoints: ['server/src/node/worker.ts'], outfile: 'dist/worker.js', platform: 'node', format: 'cjs' },
  { ...common, entryPoints: ['server/src/node/helper-worker.ts'], outfile: 'dist/helper.js', platform: 'node', format: 'cjs' },
  // `hopscope` is the small launcher (cli-launch.ts); the command line itself is dist/cli-main.js,
  // which the launcher requires (or runs in a second process started with huge pages).
  { ...common, entryPoints: ['server/src/cli-launch.ts'], outfile: 'dist/cli.js', platform: 'node', format: 'cjs', banner: { js: '#!/usr/bin/env node' }, external: ['./cli-main.js'] },
  { ...common, entryPoints: ['server/src/cli.ts'], outfile: 'dist/cli-main.js', platform: 'node', format: 'cjs' },
  { ...common, entryPoints: ['webview/src/viewer.ts'], outfile: 'dist/webview/viewer.js', platform: 'browser', format: 'iife', target: 'es2022' },
  { ...common, entryPoints: ['webview/src/panel.ts'], outfile: 'dist/webview/panel.js', platform: 'browser', format: 'iife', target: 'es2022' },
  { ...common, entryPoints: ['webview/src/panel-layout-worker.ts'], outfile: 'dist/webview/panel-layout.js', platform: 'browser', format: 'iife', target: 'es2022' },
];

// A missing entry point is a broken checkout or a renamed file: stop before building anything, rather
// than ship a package without that bundle.
const missing = entries.map((e) => e.entryPoints[0]).filter((file) => !existsSync(file));
if (missing.length > 0) {
  console.error(`build: entry point${missing.length > 1 ? 's' : ''} not found (run from the repository root; ` +
    `update scripts/build.mjs if a file was moved): ${missing.join(', ')}`);
  process.exit(1);
}

if (watch) {
  for (const e of entries) (await esbuild.context(e)).watch();
} else {
  await Promise.all(entries.map((e) => esbuild.build(e)));
}
