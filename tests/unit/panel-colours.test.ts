/**
 * The receptive-field panel's hop palette (webview/src/panel-colours.ts) stays readable without
 * hue vision: CIE L* (CIE 1976 lightness, as d3-color's hcl computes it) changes monotonically
 * with hop distance, in clear steps, and the centre has the strongest contrast with the background.
 */
import { describe, expect, it } from 'vitest';
import { curvatureColour, hopColour, lightness } from '../../webview/src/panel-colours';

describe('hop palette', () => {
  for (const dark of [false, true]) {
    it(`lightness is monotonic in the hop on ${dark ? 'dark' : 'light'} backgrounds`, () => {
      for (let maxHop = 1; maxHop <= 8; maxHop++) {
        const L = Array.from({ length: maxHop + 1 }, (_, k) => lightness(hopColour(k, maxHop, dark)));
        for (let k = 1; k <= maxHop; k++) {
          const step = dark ? L[k - 1]! - L[k]! : L[k]! - L[k - 1]!;
          // 8 hops share about 45 L* units: at least 5 per step.
          expect(step).toBeGreaterThan(5);
        }
        // The centre is the farthest from the background (L* 100 for white, about 12 for #1e1e1e).
        const bg = dark ? 12 : 100;
        expect(Math.abs(L[0]! - bg)).toBeGreaterThan(Math.abs(L[maxHop]! - bg));
      }
    });
  }

  it('curvature colours: negative edges stand out from flat ones in lightness, both themes', () => {
    for (const [dark, neutral] of [[false, '#8a8a8a'], [true, '#7a7a7a']] as const) {
      const flat = lightness(curvatureColour(0, dark, neutral));
      const neg = lightness(curvatureColour(-1, dark, neutral));
      expect(Math.abs(neg - flat)).toBeGreaterThan(8);
      expect(curvatureColour(null, dark, neutral)).toBe(neutral);
    }
  });
});
