/**
 * scripts/build.mjs refuses to build when an entry point is missing (it used to skip it silently and
 * produce a package without that bundle). Run from an empty folder, every entry is missing.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const empty = mkdtempSync(join(tmpdir(), 'hopscope-build-'));
afterAll(() => rmSync(empty, { recursive: true, force: true }));

describe('scripts/build.mjs', () => {
  it('exits non-zero naming every missing entry point, and writes nothing', () => {
    const r = spawnSync(process.execPath, [join(ROOT, 'scripts/build.mjs')], { cwd: empty, encoding: 'utf8' });
    expect(r.status).toBe(1);
    const m = /entry points not found \(.*\): (.+)$/m.exec(r.stderr);
    expect(m, r.stderr).not.toBeNull();
    const listed = m![1]!.split(', ');
    expect(listed).toContain('extension/src/extension.ts');
    expect(listed).toContain('server/src/cli.ts');
    // The same list names files that exist in the repository (the real build finds them all).
    for (const file of listed) expect(existsSync(join(ROOT, file)), file).toBe(true);
    expect(readdirSync(empty)).toEqual([]);
  });
});
