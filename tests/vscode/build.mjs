// Bundles the extension-host test suite (tests/vscode/suite/*.ts) into dist-test/suite/ as CommonJS,
// with `vscode` and `mocha` left to the host (mocha must be the runner's own instance).
import * as esbuild from 'esbuild';
import { readdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '../..');
export const SUITE_ENTRY = join(root, 'dist-test/suite/index.js');

export async function buildSuite() {
  const dir = join(root, 'tests/vscode/suite');
  await esbuild.build({
    entryPoints: readdirSync(dir).filter((f) => f.endsWith('.ts')).map((f) => join(dir, f)),
    outdir: join(root, 'dist-test/suite'),
    bundle: true, platform: 'node', format: 'cjs', target: 'node20', sourcemap: 'inline',
    external: ['vscode', 'mocha'], logLevel: 'warning',
  });
  return SUITE_ENTRY;
}

if (process.argv[1] === fileURLToPath(import.meta.url)) await buildSuite();
