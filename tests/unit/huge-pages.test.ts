/**
 * Huge pages for the processes Hopscope starts (common/huge-pages.ts, server/src/node/relaunch.ts,
 * server/src/cli-launch.ts). The tunable's name and meaning are glibc's (NEWS for 2.35 and the
 * tunables manual: `glibc.malloc.hugetlb=1` makes malloc madvise MADV_HUGEPAGE on what it maps);
 * the kernel's mode file is /sys/kernel/mm/transparent_hugepage/enabled (the kernel's admin guide,
 * transhuge.rst: the selected mode in brackets). What is tested here is that the decision follows
 * its inputs, and that the command line's output and exit status are the same in either process.
 */
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { envWithHugePages, tunablesWithHugePages, HUGE_PAGES_TUNABLE } from '../../common/huge-pages';
import { decideRelaunch, expectedSavingMs, inputBytes, measureMachine, probeFaultMsPerMiB, readThpMode, runsOnGlibc, type RelaunchInputs } from '../../server/src/node/relaunch';

const root = path.join(__dirname, '../..');
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'hopscope-huge-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

describe('GLIBC_TUNABLES with huge pages', () => {
  it('adds the tunable to what the caller set, and leaves a caller\'s own hugetlb value alone', () => {
    expect(tunablesWithHugePages(undefined)).toBe(HUGE_PAGES_TUNABLE);
    expect(tunablesWithHugePages('')).toBe(HUGE_PAGES_TUNABLE);
    expect(tunablesWithHugePages('glibc.malloc.arena_max=2')).toBe(`glibc.malloc.arena_max=2:${HUGE_PAGES_TUNABLE}`);
    expect(tunablesWithHugePages('glibc.malloc.hugetlb=0')).toBeUndefined();
    expect(tunablesWithHugePages('glibc.malloc.arena_max=2:glibc.malloc.hugetlb=2')).toBeUndefined();
  });

  it('changes the environment on Linux only, and not when HOPSCOPE_HUGE_PAGES is off', () => {
    const env = { PATH: '/usr/bin' };
    expect(envWithHugePages(env, 'linux')).toEqual({ PATH: '/usr/bin', GLIBC_TUNABLES: HUGE_PAGES_TUNABLE });
    expect(env).toEqual({ PATH: '/usr/bin' }); // the caller's object is not modified
    expect(envWithHugePages(env, 'darwin')).toBe(env);
    expect(envWithHugePages(env, 'win32')).toBe(env);
    const off = { ...env, HOPSCOPE_HUGE_PAGES: '0' };
    expect(envWithHugePages(off, 'linux')).toBe(off);
  });
});

describe('whether the command line starts a second process', () => {
  const base: RelaunchInputs = {
    platform: 'linux', env: {}, thpMode: 'madvise', glibc: true,
    inputBytes: 160e6, faultMsPerMiB: 3.4, startMs: 90, execArgv: [],
  };
  it('does for a large input where faults are slow, and not for a small one', () => {
    expect(decideRelaunch(base).relaunch).toBe(true);
    expect(decideRelaunch({ ...base, inputBytes: 1e6 }).relaunch).toBe(false);
    // Where faults are cheap (bare metal: a few tenths of a ms per MiB) 160 MB does not pay for a start.
    expect(decideRelaunch({ ...base, faultMsPerMiB: 0.2 }).relaunch).toBe(false);
  });
  it('never where huge pages cannot be had or are already there', () => {
    expect(decideRelaunch({ ...base, platform: 'darwin' }).relaunch).toBe(false);
    expect(decideRelaunch({ ...base, glibc: false }).relaunch).toBe(false);
    expect(decideRelaunch({ ...base, thpMode: 'always' }).relaunch).toBe(false);
    expect(decideRelaunch({ ...base, thpMode: 'never' }).relaunch).toBe(false);
    expect(decideRelaunch({ ...base, thpMode: null }).relaunch).toBe(false);
    expect(decideRelaunch({ ...base, env: { GLIBC_TUNABLES: 'glibc.malloc.hugetlb=1' } }).relaunch).toBe(false);
    expect(decideRelaunch({ ...base, env: { HOPSCOPE_HUGE_PAGES: 'off' } }).relaunch).toBe(false);
  });
  it('never under a debugger or profiler, which should see the command run in the process it watches', () => {
    expect(decideRelaunch({ ...base, execArgv: ['--inspect=9229'] })).toEqual({ relaunch: false, why: 'started with --inspect=9229' });
    expect(decideRelaunch({ ...base, execArgv: ['--cpu-prof'] }).relaunch).toBe(false);
    expect(decideRelaunch({ ...base, execArgv: ['--max-old-space-size=8192'] }).relaunch).toBe(true);
  });
  it('always when asked with HOPSCOPE_HUGE_PAGES=1, where the machine can', () => {
    expect(decideRelaunch({ ...base, inputBytes: 0, env: { HOPSCOPE_HUGE_PAGES: '1' } }).relaunch).toBe(true);
    expect(decideRelaunch({ ...base, thpMode: 'never', env: { HOPSCOPE_HUGE_PAGES: '1' } }).relaunch).toBe(false);
  });
});

describe('the estimate and the probe', () => {
  it('expects a saving in proportion to the input and the fault cost', () => {
    // 160 MB at 3.4 ms/MiB: 152.6 MiB × 1.5 fresh bytes per input byte × 3.4 × 0.7 saved.
    expect(expectedSavingMs(160e6, 3.4)).toBeCloseTo((160e6 / 2 ** 20) * 1.5 * 3.4 * 0.7, 6);
    expect(expectedSavingMs(0, 3.4)).toBe(0);
  });
  it('measures the cost of first writes as a positive time per MiB', () => {
    const ms = probeFaultMsPerMiB();
    expect(Number.isFinite(ms)).toBe(true);
    expect(ms).toBeGreaterThan(0);
    expect(ms).toBeLessThan(1000); // 1 s per MiB would be a broken clock, not a slow machine
  });
  it('does not probe the fault cost for inputs too small to pay for a second start at any likely cost', () => {
    const small = path.join(tmp, 'small.npy');
    fs.writeFileSync(small, Buffer.alloc(4096));
    const m = measureMachine([small], {});
    expect(m.faultMsPerMiB).toBe(0);
    expect(decideRelaunch(m).relaunch).toBe(false);
  });
});

describe('input bytes', () => {
  it('sums the files named and the files below folders, skipping hidden and tool folders and options', () => {
    const d = path.join(tmp, 'docks');
    fs.mkdirSync(path.join(d, 'week1'), { recursive: true });
    fs.mkdirSync(path.join(d, '.hidden'), { recursive: true });
    fs.mkdirSync(path.join(d, 'node_modules'), { recursive: true });
    fs.writeFileSync(path.join(d, 'rides.txt'), Buffer.alloc(1000));
    fs.writeFileSync(path.join(d, 'week1', 'rides.npy'), Buffer.alloc(500));
    fs.writeFileSync(path.join(d, '.hidden', 'big.npy'), Buffer.alloc(7000));
    fs.writeFileSync(path.join(d, 'node_modules', 'big.npy'), Buffer.alloc(7000));
    const single = path.join(tmp, 'one.npy');
    fs.writeFileSync(single, Buffer.alloc(300));
    expect(inputBytes([d])).toBe(1500);
    expect(inputBytes([single, '--num-nodes', '40', d, path.join(tmp, 'missing.npy')])).toBe(1800);
    expect(inputBytes([d], 1000)).toBeGreaterThanOrEqual(1000); // stops once enough is found
    expect(inputBytes([d], Infinity, 1)).toBe(0); // the folder itself was the one entry allowed
  });
});

describe('the launcher (dist/cli.js)', () => {
  const cli = path.join(root, 'dist/cli.js');
  const broken = path.join(root, 'tests/fixtures/graphs/broken_bundle');
  const run = (hp: string) => spawnSync(process.execPath, [cli, 'check', broken, '--json'], {
    encoding: 'utf8', env: { ...process.env, HOPSCOPE_HUGE_PAGES: hp, HOPSCOPE_HUGE_PAGES_DEBUG: '1' },
  });

  it('gives the same report and exit status in this process and in a second one', () => {
    if (!fs.existsSync(cli)) throw new Error('dist/cli.js missing: run npm run build (npm test does)');
    const here = run('0');
    const second = run('1');
    expect(here.status).toBe(1); // the broken bundle has errors
    expect(second.status).toBe(here.status);
    expect(second.stdout).toBe(here.stdout);
    expect(here.stderr).toMatch(/huge pages: this process \(HOPSCOPE_HUGE_PAGES is off\)/);
    // A second process only where this machine can give huge pages; and never a third.
    const can = process.platform === 'linux' && readThpMode() === 'madvise' && runsOnGlibc()
      && process.env.GLIBC_TUNABLES?.includes('glibc.malloc.hugetlb') !== true;
    expect(second.stderr.match(/huge pages:/g)).toHaveLength(1);
    expect(second.stderr).toMatch(can ? /huge pages: second process/ : /huge pages: this process/);
  });

  it('passes on the exit status of a usage error from the second process', () => {
    const r = spawnSync(process.execPath, [cli, 'check', '--no-such-option', broken], {
      encoding: 'utf8', env: { ...process.env, HOPSCOPE_HUGE_PAGES: '1' },
    });
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/no-such-option/);
  });
});
