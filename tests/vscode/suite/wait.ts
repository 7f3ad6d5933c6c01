/** Polls `get` until it returns a value that is not undefined (or gives up after `ms`). */
export async function waitFor<T>(what: string, get: () => T | undefined | Promise<T | undefined>, ms = 60_000): Promise<T> {
  const end = Date.now() + ms;
  for (;;) {
    const v = await get();
    if (v !== undefined) return v;
    if (Date.now() > end) throw new Error(`timed out after ${ms / 1000} s waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}
