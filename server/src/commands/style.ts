/**
 * The one styler of the `hopscope` output: ANSI styles only when colour is allowed, which the
 * entry point decides once (`colourAllowed`) and passes to every command in `CliIo.color`.
 */
import type { CliIo } from './types';

const STYLES = { bold: 1, dim: 2, red: 31, green: 32, yellow: 33, blue: 34, cyan: 36 } as const;
export type Style = keyof typeof STYLES;

/** `c('red', text)`: the text in that style when the output may have colour, else the text as is. */
export function styler(io: Pick<CliIo, 'color'>): (style: Style, s: string) => string {
  return (style, s) => (io.color ? `\x1b[${STYLES[style]}m${s}\x1b[0m` : s);
}

/**
 * Colour on a terminal only, and never when NO_COLOR is set to anything but the empty string
 * (the convention at no-color.org).
 */
export function colourAllowed(stream: { isTTY?: boolean }, env: Readonly<Record<string, string | undefined>>): boolean {
  return stream.isTTY === true && !env.NO_COLOR;
}

export const plural = (k: number, word: string, many = `${word}s`): string => `${k} ${k === 1 ? word : many}`;
