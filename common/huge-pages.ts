/**
 * Transparent huge pages for the processes Hopscope starts (the language server, and the command
 * line's second process): the environment that asks glibc for them.
 *
 * A check writes its tensors into fresh memory, and on some machines the first write to each 4 KiB
 * page is the largest single cost (about 14 µs a page on the virtual machine the bench runs on:
 * 3.4 ms per MiB, more than parsing it). glibc 2.35 and later can make malloc advise the kernel to
 * back the memory it maps with 2 MiB pages (`GLIBC_TUNABLES=glibc.malloc.hugetlb=1`: madvise with
 * MADV_HUGEPAGE after each mmap; glibc's tunables manual and NEWS for 2.35), which removes most of
 * those faults when the kernel's transparent huge pages are in `madvise` mode (in `always` mode
 * every process has them already; in `never` mode nothing helps). glibc reads tunables when a
 * process starts, so a process cannot give them to itself:
 * - the extension starts the language server with them (extension/src/extension.ts) — this matters
 *   where the server runs on node (remote and browser-hosted editors); under Electron array
 *   buffers may not come from malloc, and the setting then changes nothing;
 * - the command line's launcher (server/src/cli-launch.ts, decision in server/src/node/relaunch.ts)
 *   starts a second process with them when the inputs are large enough to pay for it.
 *
 * Nothing here changes a result, only how memory is mapped. `HOPSCOPE_HUGE_PAGES=0` turns it off;
 * a `glibc.malloc.hugetlb` the caller already set in GLIBC_TUNABLES is left as it is.
 */
export const HUGE_PAGES_TUNABLE = 'glibc.malloc.hugetlb=1';
/** The switch a user can set: `0`/`off` never, `1`/`on` always (when the machine can), unset: by size. */
export const HUGE_PAGES_SWITCH = 'HOPSCOPE_HUGE_PAGES';

export type Env = Record<string, string | undefined>;

/** `GLIBC_TUNABLES` with the huge-page tunable added to whatever the caller set, or undefined when
 * the caller already chose a value for it (theirs wins). */
export function tunablesWithHugePages(current: string | undefined): string | undefined {
  if (current === undefined || current === '') return HUGE_PAGES_TUNABLE;
  if (/(^|:)glibc\.malloc\.hugetlb=/.test(current)) return undefined;
  return `${current}:${HUGE_PAGES_TUNABLE}`;
}

/** The environment to start a child with so that its malloc asks for huge pages; the same object
 * (unchanged) when the switch is off or the caller set the tunable themselves. */
export function envWithHugePages(env: Env, platform: string = process.platform): Env {
  if (platform !== 'linux' || hugePagesSwitch(env) === 'off') return env;
  const tunables = tunablesWithHugePages(env.GLIBC_TUNABLES);
  return tunables === undefined ? env : { ...env, GLIBC_TUNABLES: tunables };
}

/** What `HOPSCOPE_HUGE_PAGES` asks for. */
export function hugePagesSwitch(env: Env): 'on' | 'off' | 'auto' {
  const v = (env[HUGE_PAGES_SWITCH] ?? '').trim().toLowerCase();
  if (v === '0' || v === 'off' || v === 'no' || v === 'false') return 'off';
  if (v === '1' || v === 'on' || v === 'yes' || v === 'true') return 'on';
  return 'auto';
}
