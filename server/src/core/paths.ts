/**
 * Path pieces for the pure core (no node:path there): file paths arrive as strings, with `/` or
 * `\` separators.
 */

/** The folder part of a path ('.' when there is none, '/' for a file at the root). */
export function dirOf(p: string): string {
  const i = Math.max(p.lastIndexOf('/'), p.lastIndexOf('\\'));
  return i < 0 ? '.' : i === 0 ? p.slice(0, 1) : p.slice(0, i);
}

/** The file name part of a path. */
export function baseOf(p: string): string {
  return p.slice(Math.max(p.lastIndexOf('/'), p.lastIndexOf('\\')) + 1);
}
