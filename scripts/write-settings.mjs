// Writes package.json's contributes.configuration.properties from the one settings table
// (common/settings.ts): `node scripts/write-settings.mjs`. With --check it only says whether
// package.json is in step (exit 1 when not); tests/unit/settings.test.ts checks the same.
import * as esbuild from 'esbuild';
import { readFileSync, writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { isDeepStrictEqual } from 'node:util';

const root = fileURLToPath(new URL('..', import.meta.url));
const bundled = await esbuild.build({
  entryPoints: [`${root}common/settings.ts`], bundle: true, write: false, format: 'esm', platform: 'node', logLevel: 'warning',
});
const { SETTINGS } = await import(`data:text/javascript;base64,${Buffer.from(bundled.outputFiles[0].text).toString('base64')}`);

const properties = Object.fromEntries(Object.entries(SETTINGS).map(([key, spec]) => [`hopscope.${key}`, spec]));
const file = `${root}package.json`;
const pkg = JSON.parse(readFileSync(file, 'utf8'));
const now = pkg.contributes.configuration.properties;
// JSON round trip: the table's readonly arrays and objects as plain JSON.
const wanted = JSON.parse(JSON.stringify(properties));

if (process.argv.includes('--check')) {
  const same = isDeepStrictEqual(now, wanted);
  console.log(same ? 'package.json settings match common/settings.ts' : 'package.json settings differ from common/settings.ts: run node scripts/write-settings.mjs');
  process.exitCode = same ? 0 : 1;
} else {
  pkg.contributes.configuration.properties = wanted;
  writeFileSync(file, JSON.stringify(pkg, null, 2) + '\n');
  console.log(`wrote ${Object.keys(wanted).length} settings to package.json`);
}
