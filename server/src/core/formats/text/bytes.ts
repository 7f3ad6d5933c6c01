/** Byte values the text readers look for, and what counts as a blank inside a line. */

export const LF = 10;
export const CR = 13;
export const SPACE = 32;
export const TAB = 9;
export const HASH = 35;
export const PERCENT = 37;
export const COMMA = 44;
export const SEMICOLON = 59;
export const PIPE = 124;
export const QUOTE = 34;

export const isBlank = (c: number): boolean => c === SPACE || c === TAB || c === CR;
