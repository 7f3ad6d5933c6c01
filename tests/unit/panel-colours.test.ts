/**
 * The receptive-field panel's palettes (webview/src/panel-colours.ts).
 *
 * Sources:
 *  - OKLab: Björn Ottosson, "A perceptual color space for image processing" (2020,
 *    https://bottosson.github.io/posts/oklab/). Reference value: sRGB red #ff0000 is
 *    oklab(0.62796 0.22486 0.12585), as printed in CSS Color Module Level 4's OKLab examples
 *    (recalled from memory, to 5 decimals); white is L = 1, a = b = 0 by construction.
 *    tests/webview/panel.spec.ts also checks oklchHex against Chromium's own oklch() conversion.
 *  - Contrast: WCAG 2.1 "relative luminance" and "contrast ratio" definitions; black on white is
 *    21:1 by definition; #767676 on white 4.54:1 and #777777 on white 4.48:1 (the well-known
 *    "lightest grey that passes AA" pair, recalled from memory). 3:1 is WCAG 2.1 SC 1.4.11
 *    (non-text contrast) for graphical objects.
 *  - Theme backgrounds: VS Code's default themes' editor.background — Light Modern / Light+ and
 *    High Contrast Light #ffffff, Dark+ #1e1e1e, Dark Modern #1f1f1f, High Contrast #000000
 *    (recalled from memory; #1e1e1e and #ffffff are also readTheme's fallbacks).
 *  - CIE L* (CIE 1976 lightness, as d3-color's hcl computes it) for the monotonic-lightness check.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  contrastRatio, curvatureColour, deltaE, GROUP_COLOURS, groupColour, HOP_HUE, hopColour, lightness,
  maxChroma, oklab, oklchHex, PAIR_EDGE_HUE, pairEdgeColour,
} from '../../webview/src/panel-colours';

const THEMES: Array<{ kind: string; background: string; dark: boolean }> = [
  { kind: 'light', background: '#ffffff', dark: false },
  { kind: 'dark (Dark+)', background: '#1e1e1e', dark: true },
  { kind: 'dark (Dark Modern)', background: '#1f1f1f', dark: true },
  { kind: 'high contrast', background: '#000000', dark: true },
  { kind: 'high contrast light', background: '#ffffff', dark: false },
];

/** OKLCH hue in degrees (0..360) of a colour. */
function hue(c: string): number {
  const [, a, b] = oklab(c);
  return ((Math.atan2(b, a) * 180) / Math.PI + 360) % 360;
}

describe('OKLab and contrast helpers', () => {
  it('OKLab of white and of sRGB red match the published values', () => {
    const w = oklab('#ffffff');
    expect(w[0]).toBeCloseTo(1, 6);
    expect(Math.abs(w[1])).toBeLessThan(1e-6);
    expect(Math.abs(w[2])).toBeLessThan(1e-6);
    const r = oklab('#ff0000');
    expect(r[0]).toBeCloseTo(0.62796, 4);
    expect(r[1]).toBeCloseTo(0.22486, 4);
    expect(r[2]).toBeCloseTo(0.12585, 4);
  });

  it('oklchHex inverts oklab: every colour of a 6-level sRGB grid comes back to the same byte values', () => {
    const levels = [0, 51, 102, 153, 204, 255];
    for (const r of levels) for (const g of levels) for (const b of levels) {
      const hex = `#${[r, g, b].map((x) => x.toString(16).padStart(2, '0')).join('')}`;
      const [L, a, bb] = oklab(hex);
      const C = Math.hypot(a, bb), h = (Math.atan2(bb, a) * 180) / Math.PI;
      expect(oklchHex(L, C, h)).toBe(hex);
    }
  });

  it('maxChroma is the sRGB gamut edge: just inside shows, just outside clips', () => {
    for (const [L, h] of [[0.3, 200], [0.6, 30], [0.85, 110], [0.5, 265]] as const) {
      const c = maxChroma(L, h);
      expect(c).toBeGreaterThan(0.02);
      // Inside: the hex round-trips to (almost) the asked lightness and chroma.
      const inside = oklab(oklchHex(L, c * 0.98, h));
      expect(inside[0]).toBeCloseTo(L, 2);
      expect(Math.hypot(inside[1], inside[2])).toBeCloseTo(c * 0.98, 2);
      // Well outside, clipping loses chroma or lightness.
      const outside = oklab(oklchHex(L, c * 1.5, h));
      expect(Math.abs(outside[0] - L) + Math.abs(Math.hypot(outside[1], outside[2]) - c * 1.5)).toBeGreaterThan(0.01);
    }
  });

  it('WCAG contrast ratios of known pairs', () => {
    expect(contrastRatio('#000000', '#ffffff')).toBeCloseTo(21, 6);
    expect(contrastRatio('#ffffff', '#000000')).toBeCloseTo(21, 6);
    expect(contrastRatio('#767676', '#ffffff')).toBeCloseTo(4.54, 2);
    expect(contrastRatio('#777777', '#ffffff')).toBeCloseTo(4.48, 2);
    expect(contrastRatio('#808080', '#808080')).toBe(1);
  });
});

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

  for (const t of THEMES) {
    it(`is distinguishable on ${t.kind} (${t.background}): adjacent hops ΔE_OK ≥ 0.045, every hop ≥ 3:1 against the background`, () => {
      for (let maxHop = 1; maxHop <= 8; maxHop++) {
        const ramp = Array.from({ length: maxHop + 1 }, (_, k) => hopColour(k, maxHop, t.dark));
        for (let k = 1; k <= maxHop; k++) expect(deltaE(ramp[k - 1]!, ramp[k]!)).toBeGreaterThanOrEqual(0.045);
        for (const c of ramp) expect(contrastRatio(c, t.background)).toBeGreaterThanOrEqual(3);
        // The centre stands out most.
        expect(contrastRatio(ramp[0]!, t.background)).toBeGreaterThan(contrastRatio(ramp[maxHop]!, t.background));
      }
    });
  }

  it('is one hue family: every hop colour sits within 3° of the ramp hue', () => {
    for (const dark of [false, true]) {
      for (let k = 0; k <= 8; k++) {
        const c = hopColour(k, 8, dark);
        const [, a, b] = oklab(c);
        if (Math.hypot(a, b) < 0.02) continue; // near-grey ends: hue is ill-defined after 8-bit rounding
        const d = Math.abs(((hue(c) - HOP_HUE + 540) % 360) - 180);
        expect(d).toBeLessThan(3);
      }
    }
  });

  it('curvature colours: negative edges stand out from flat ones in lightness, both themes', () => {
    for (const [dark, neutral] of [[false, '#8a8a8a'], [true, '#7a7a7a']] as const) {
      const flat = lightness(curvatureColour(0, dark, neutral));
      const neg = lightness(curvatureColour(-1, dark, neutral));
      expect(Math.abs(neg - flat)).toBeGreaterThan(8);
      expect(curvatureColour(null, dark, neutral)).toBe(neutral);
    }
  });
});

describe('pair-edge stroke (pair mode)', () => {
  it.each(THEMES)('$kind: 3:1 against the background (WCAG 2.1 SC 1.4.11), its own hue, far from every hop colour', ({ background, dark }) => {
    const c = pairEdgeColour(dark);
    expect(contrastRatio(c, background)).toBeGreaterThanOrEqual(3);
    expect(Math.abs(hue(c) - PAIR_EDGE_HUE)).toBeLessThan(2);
    for (const maxHop of [1, 4, 8]) for (let k = 0; k <= maxHop; k++) expect(deltaE(c, hopColour(k, maxHop, dark))).toBeGreaterThan(0.12);
  });
});

describe('1-WL group palette', () => {
  for (const t of THEMES) {
    it(`on ${t.kind} (${t.background}): ≥ 3:1 against the background, apart from each other and from grey`, () => {
      const cols = Array.from({ length: GROUP_COLOURS }, (_, i) => groupColour(i, t.dark));
      expect(new Set(cols).size).toBe(GROUP_COLOURS);
      for (let i = 0; i < cols.length; i++) {
        expect(contrastRatio(cols[i]!, t.background)).toBeGreaterThanOrEqual(3);
        for (let j = i + 1; j < cols.length; j++) {
          // The first ten (what most drawings use) are far apart; all twenty stay clearly apart.
          expect(deltaE(cols[i]!, cols[j]!)).toBeGreaterThanOrEqual(i < 10 && j < 10 ? 0.09 : 0.04);
        }
        // Nodes with a class of their own are drawn in a neutral grey (a mix of theme foreground and
        // background, like panel.ts makes): no group colour may look like it.
        const [L] = oklab(cols[i]!);
        for (const g of [0.45, 0.55, 0.65, 0.75]) {
          const grey = oklchHex(g, 0, 0);
          if (Math.abs(L - g) < 0.1) expect(deltaE(cols[i]!, grey)).toBeGreaterThanOrEqual(0.06);
        }
      }
      // Neighbouring groups (the order the side list shows them) differ clearly in hue or lightness.
      for (let i = 1; i < cols.length; i++) expect(deltaE(cols[i - 1]!, cols[i]!)).toBeGreaterThanOrEqual(0.1);
    });
  }

  it('hues are evenly spaced (36° apart) in OKLCH and repeat after twenty colours', () => {
    const hues = Array.from({ length: 10 }, (_, i) => hue(groupColour(i, false))).sort((a, b) => a - b);
    for (let i = 0; i < 10; i++) {
      const gap = ((hues[(i + 1) % 10]! - hues[i]! + 360) % 360);
      expect(Math.abs(gap - 36)).toBeLessThan(4);
    }
    expect(groupColour(GROUP_COLOURS + 3, true)).toBe(groupColour(3, true));
  });
});

describe('no bundled palettes', () => {
  // Our palettes are our own: nothing in webview/ may import d3's bundled colour schemes or
  // scheme/colour interpolators (d3-scale-chromatic, or the d3 umbrella package that re-exports it).
  it('webview/src imports nothing from d3-scale-chromatic or the d3 umbrella package', () => {
    const dir = path.join(__dirname, '../../webview/src');
    for (const f of fs.readdirSync(dir).filter((n) => n.endsWith('.ts'))) {
      const text = fs.readFileSync(path.join(dir, f), 'utf8');
      expect(text, f).not.toMatch(/from\s+['"]d3-scale-chromatic['"]|from\s+['"]d3['"]/);
      expect(text, f).not.toMatch(/\b(scheme[A-Z]\w*|interpolate(Viridis|Plasma|Inferno|Magma|Cividis|Turbo|Rainbow|Sinebow|Cool|Warm|Cubehelix\w*|Rd\w*|Bu\w*|Gn\w*|Or\w*|Pu\w*|Yl\w*|Blues|Greens|Greys|Oranges|Purples|Reds|Spectral|Br\w*|PR\w*|Pi\w*))\b/);
    }
  });
});

describe('node-type palette (typed graphs)', () => {
  // The chart colours of VS Code's Dark+ theme (charts.orange #d18616, charts.purple #b180d7,
  // charts.green #89d185, charts.yellow #cca700, charts.red #f14c4c; recalled from memory).
  const DARK_PLUS_CHARTS = ['#d18616', '#b180d7', '#89d185', '#cca700', '#f14c4c'];

  it('keeps 3:1 contrast with every default background, for our hues and the theme\'s', async () => {
    const { typeColour, typeHues, TYPE_HUES } = await import('../../webview/src/panel-colours');
    const themed = typeHues(DARK_PLUS_CHARTS)!;
    for (const t of THEMES) {
      for (const hues of [TYPE_HUES, themed]) {
        for (let i = 0; i < 2 * hues.length; i++) {
          const c = typeColour(i, t.dark, hues);
          expect(contrastRatio(c, t.background), `${t.kind} type ${i} ${c}`).toBeGreaterThanOrEqual(3);
        }
      }
    }
  });

  it('never reads as a hop colour: hues at least 40° from the hop ramp, and apart from each other', async () => {
    const { typeColour, typeHues, TYPE_HUES, TYPE_HOP_GAP } = await import('../../webview/src/panel-colours');
    const dist = (a: number, b: number) => { const d = Math.abs(a - b) % 360; return d > 180 ? 360 - d : d; };
    for (const hues of [TYPE_HUES, typeHues(DARK_PLUS_CHARTS)!]) {
      for (const dark of [false, true]) {
        const colours = hues.map((_, i) => typeColour(i, dark, hues));
        for (const c of colours) {
          expect(dist(hue(c), HOP_HUE)).toBeGreaterThanOrEqual(TYPE_HOP_GAP - 3);
          for (let k = 0; k <= 4; k++) expect(deltaE(c, hopColour(k, 4, dark))).toBeGreaterThan(0.08);
        }
        // Every pair of the first round differs clearly (ΔE_OK well above the ~0.02 just-noticeable difference).
        for (let a = 0; a < colours.length; a++) for (let b = a + 1; b < colours.length; b++) expect(deltaE(colours[a]!, colours[b]!)).toBeGreaterThan(0.07);
        // The second round repeats the hues at another lightness.
        expect(Math.abs(lightness(typeColour(hues.length, dark, hues)) - lightness(colours[0]!))).toBeGreaterThan(5);
      }
    }
  });

  it('takes the theme\'s chart hues, leaves out greys and near hues, and fills up with ours', async () => {
    const { typeHues, TYPE_HUES } = await import('../../webview/src/panel-colours');
    const themed = typeHues([...DARK_PLUS_CHARTS, '#808080', '', '#3ab8c4'])!;
    expect(themed.length).toBe(TYPE_HUES.length);
    // Orange, purple, green, red in the theme's order; yellow is within 40° of orange and left out;
    // the grey has no hue and the teal #3ab8c4 is the hop ramp's family; our indigo fills the fifth place.
    const kept = ['#d18616', '#b180d7', '#89d185', '#f14c4c'];
    for (let i = 0; i < kept.length; i++) expect(themed[i]).toBeCloseTo(hue(kept[i]!), 6);
    expect(themed[4]).toBe(265);
    expect(typeHues(['', 'not a colour'])).toBeUndefined();
  });
});
