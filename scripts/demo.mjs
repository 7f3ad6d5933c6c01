// `npm run demo`: runs Hopscope over the demo workspace (demo/). The demo is broken on purpose, so
// the check itself exits 1 (problems) or 2 (a file that cannot be read); the demo succeeds when the
// check ran and reported.
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { dirname, join } from 'node:path';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const r = spawnSync(process.execPath, [join(root, 'dist/cli.js'), 'check', 'demo/'], { cwd: root, stdio: 'inherit' });
const meaning = { 0: 'no problems', 1: 'problems found', 2: 'a file could not be read' }[r.status] ?? 'failed';
console.log(`\nhopscope check demo/ exited with ${r.status} (${meaning}) — the demo files are broken on purpose; see demo/README.md.`);
process.exit(r.status === 0 || r.status === 1 || r.status === 2 ? 0 : 1);
