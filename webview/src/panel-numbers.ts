/** How the receptive-field panel writes numbers in its text: shares, figures and counted nouns. */

/** A share in [0, 1] as a percentage: whole when at (or rounding to) 100% or exactly 0, else one decimal. */
export const pct = (x: number) => `${(100 * x).toFixed(x >= 0.995 || x === 0 ? 0 : 1)}%`;

/** A figure with up to four decimals, or in exponent form when very large or very small. */
export const num = (x: number) => (Math.abs(x) >= 1e4 || (Math.abs(x) < 1e-3 && x !== 0) ? x.toExponential(2) : +x.toFixed(4) + '');

/** "1 node", "2,500 nodes". */
export const plural = (n: number, one: string, many = one + 's') => `${n.toLocaleString('en-US')} ${n === 1 ? one : many}`;
