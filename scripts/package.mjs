// `npm run package`: a production build from an empty dist/ (so no stale source maps or old bundles
// end up in the package), then the .vsix at .cache/e2e/hopscope.vsix (or the path given as the first
// argument). What goes in is the "files" allow-list of package.json; `npx vsce ls --no-dependencies`
// prints it. vsce runs in a staging folder holding only those entries: run in the checkout it would
// match every file under .cache/ (the e2e code-server, about 12,000 files) against its patterns, which
// takes half a minute. Runs without prompts: no repository field is needed, and README links stay
// relative (the extension details page resolves them inside the installed extension, which ships media/).
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readFileSync, renameSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { createRequire } from 'node:module';
import { basename, dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const out = resolve(root, process.argv[2] ?? '.cache/e2e/hopscope.vsix');
const vsce = join(dirname(createRequire(import.meta.url).resolve('@vscode/vsce/package.json')), 'vsce');

function run(args, cwd = root) {
  const r = spawnSync(process.execPath, args, { cwd, stdio: ['ignore', 'inherit', 'inherit'] });
  if (r.status !== 0) process.exit(r.status ?? 1);
}

rmSync(join(root, 'dist'), { recursive: true, force: true });
run([join(root, 'scripts/build.mjs'), '--production']);
mkdirSync(dirname(out), { recursive: true });

// The top-level entries named by "files" ("dist/**" -> dist), plus package.json.
const { files } = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8'));
const stage = mkdtempSync(join(tmpdir(), 'hopscope-vsix-'));
try {
  for (const entry of new Set(['package.json', ...files.map((f) => f.split('/')[0])])) {
    if (existsSync(join(root, entry))) cpSync(join(root, entry), join(stage, entry), { recursive: true });
  }
  // Written under another name, then renamed: a test installing the previous package meanwhile never
  // reads a half-written file. --allow-unused-files-pattern: media/ may be empty.
  const partial = join(dirname(out), `.${basename(out, '.vsix')}-${process.pid}.vsix`);
  run([vsce, 'package', '--no-dependencies', '--allow-missing-repository', '--no-rewrite-relative-links',
    '--allow-unused-files-pattern', '--out', partial], stage);
  renameSync(partial, out);
} finally {
  rmSync(stage, { recursive: true, force: true });
}
console.log(`packaged ${out} (${Math.round(statSync(out).size / 1024)} KB)`);
