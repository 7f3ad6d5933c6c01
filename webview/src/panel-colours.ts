/**
 * Colours of the receptive-field drawing. The data palettes are our own, computed in OKLab /
 * OKLCH (Björn Ottosson, "A perceptual color space for image processing", 2020,
 * https://bottosson.github.io/posts/oklab/ — the conversion below is written from that
 * definition):
 *  - hop distance: one hue family (OKLCH hue HOP_HUE) whose lightness steps evenly with the hop,
 *    dark → light on light backgrounds and light → dark on dark ones, so the centre always has
 *    the strongest contrast and the ramp reads without hue vision and in grey print;
 *  - 1-WL groups: ten hues evenly spaced around the OKLCH circle from GROUP_START, taken three
 *    steps apart so neighbouring groups differ in hue, at two lightness levels that alternate;
 *    the next ten use the same hues at the other level (twenty colours, then they repeat);
 *  - curvature: a diverging scale whose negative side is both warmer and darker/brighter than
 *    the neutral middle;
 *  - node types (typed graphs): categorical hues taken from the theme's chart colours
 *    (--vscode-charts-orange, -purple, -green, -yellow, -red) where the theme defines them, else
 *    our own list, each kept at least TYPE_HOP_GAP degrees from the hop ramp's hue and redrawn at
 *    our own OKLCH lightness (one level per background, a second level for the next round), so a
 *    type colour never reads as a hop distance and keeps its contrast whatever the theme's chart
 *    colours are.
 * Every data colour keeps a WCAG 2.x contrast ratio of at least 3:1 with the theme background
 * (tests/unit/panel-colours.test.ts). Theme colours come from the VS Code CSS variables.
 */
import { hcl, rgb } from 'd3-color';

export type ThemeKind = 'light' | 'dark' | 'high-contrast' | 'high-contrast-light';

export interface Theme {
  kind: ThemeKind;
  background: string;
  foreground: string;
  muted: string;
  focus: string;
  /** Outline of nodes: the contrast border in high contrast, else a soft foreground. */
  outline: string;
  outlineWidth: number;
  edge: string;
  edgeOpacity: number;
  fontFamily: string;
  fontSize: number;
  /** OKLCH hues of the theme's chart colours usable for node types (typeHues); absent: our own list. */
  typeHues?: number[];
}

/** Current theme from the body classes and CSS variables (fallbacks for a plain page). */
export function readTheme(doc: Document = document): Theme {
  const b = doc.body;
  const kind: ThemeKind = b.classList.contains('vscode-high-contrast-light') ? 'high-contrast-light'
    : b.classList.contains('vscode-high-contrast') ? 'high-contrast'
    : b.classList.contains('vscode-dark') ? 'dark' : 'light';
  const css = getComputedStyle(b);
  const v = (name: string, fallback: string) => css.getPropertyValue(name).trim() || fallback;
  const darkBg = kind === 'dark' || kind === 'high-contrast';
  const background = v('--vscode-editor-background', darkBg ? '#1e1e1e' : '#ffffff');
  const foreground = v('--vscode-editor-foreground', darkBg ? '#d4d4d4' : '#1f1f1f');
  const hc = kind === 'high-contrast' || kind === 'high-contrast-light';
  return {
    kind, background, foreground,
    muted: v('--vscode-descriptionForeground', darkBg ? '#a0a0a0' : '#616161'),
    focus: v('--vscode-focusBorder', '#0078d4'),
    outline: hc ? v('--vscode-contrastBorder', darkBg ? '#6fc3df' : '#0f4a85') : mix(foreground, background, 0.55),
    outlineWidth: hc ? 1.5 : 0.75,
    edge: foreground,
    edgeOpacity: hc ? 0.7 : 0.28,
    fontFamily: v('--vscode-font-family', 'system-ui, sans-serif'),
    fontSize: parseFloat(v('--vscode-font-size', '13')) || 13,
    typeHues: typeHues(TYPE_CHART_VARIABLES.map((name) => css.getPropertyValue(name).trim())),
  };
}

export function isDarkBackground(t: Theme): boolean {
  return t.kind === 'dark' || t.kind === 'high-contrast';
}

// ---- OKLab (Ottosson 2020) and WCAG contrast -------------------------------------------------------

/** sRGB transfer function (IEC 61966-2-1): encoded 0..1 → linear light, and back. */
function toLinear(c: number): number {
  return c <= 0.04045 ? c / 12.92 : Math.pow((c + 0.055) / 1.055, 2.4);
}
function fromLinear(c: number): number {
  return c <= 0.0031308 ? 12.92 * c : 1.055 * Math.pow(c, 1 / 2.4) - 0.055;
}

/** Linear sRGB of a CSS colour string (anything d3-color parses); NaN when it does not parse. */
function linearRgb(c: string): [number, number, number] {
  const x = rgb(c);
  return [toLinear(x.r / 255), toLinear(x.g / 255), toLinear(x.b / 255)];
}

/** OKLab [L, a, b] of a colour: linear sRGB → LMS (Ottosson's M1 for sRGB) → cube root → M2. */
export function oklab(c: string): [number, number, number] {
  const [r, g, b] = linearRgb(c);
  const l = Math.cbrt(0.4122214708 * r + 0.5363325363 * g + 0.0514459929 * b);
  const m = Math.cbrt(0.2119034982 * r + 0.6806995451 * g + 0.1073969566 * b);
  const s = Math.cbrt(0.0883024619 * r + 0.2817188376 * g + 0.6299787005 * b);
  return [
    0.2104542553 * l + 0.7936177850 * m - 0.0040720468 * s,
    1.9779984951 * l - 2.4285922050 * m + 0.4505937099 * s,
    0.0259040371 * l + 0.7827717662 * m - 0.8086757660 * s,
  ];
}

/** Linear sRGB of an OKLCH colour (L 0..1, chroma C, hue h in degrees); may be out of gamut. */
function oklchToLinear(L: number, C: number, h: number): [number, number, number] {
  const a = C * Math.cos((h * Math.PI) / 180), b = C * Math.sin((h * Math.PI) / 180);
  const l = (L + 0.3963377774 * a + 0.2158037573 * b) ** 3;
  const m = (L - 0.1055613458 * a - 0.0638541728 * b) ** 3;
  const s = (L - 0.0894841775 * a - 1.2914855480 * b) ** 3;
  return [
    4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s,
    -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s,
    -0.0041960863 * l - 0.7034186147 * m + 1.7076147010 * s,
  ];
}

const inGamut = (c: [number, number, number]) => c[0] >= -1e-7 && c[0] <= 1 + 1e-7 && c[1] >= -1e-7 && c[1] <= 1 + 1e-7 && c[2] >= -1e-7 && c[2] <= 1 + 1e-7;

/** Largest chroma at OKLCH lightness L and hue h that sRGB can show (bisection, to 1e-6). */
export function maxChroma(L: number, h: number): number {
  let lo = 0, hi = 0.4;
  while (hi - lo > 1e-6) {
    const mid = (lo + hi) / 2;
    if (inGamut(oklchToLinear(L, mid, h))) lo = mid; else hi = mid;
  }
  return lo;
}

/** #rrggbb of an OKLCH colour (clipped to sRGB; callers keep C within maxChroma). */
export function oklchHex(L: number, C: number, h: number): string {
  const [r, g, b] = oklchToLinear(L, C, h);
  const byte = (x: number) => Math.round(255 * fromLinear(Math.min(1, Math.max(0, x)))).toString(16).padStart(2, '0');
  return `#${byte(r)}${byte(g)}${byte(b)}`;
}

/** Euclidean distance in OKLab (ΔE_OK; about 0.02 is a just-noticeable difference). */
export function deltaE(c1: string, c2: string): number {
  const p = oklab(c1), q = oklab(c2);
  return Math.hypot(p[0] - q[0], p[1] - q[1], p[2] - q[2]);
}

/**
 * WCAG 2.x contrast ratio (L1 + 0.05) / (L2 + 0.05) of two colours' relative luminances
 * (W3C, Web Content Accessibility Guidelines 2.1, definitions of "relative luminance" and
 * "contrast ratio"; WCAG 2.1 uses 0.03928 where IEC 61966-2-1 has 0.04045 — no 8-bit value
 * falls between them, so the result is the same).
 */
export function contrastRatio(c1: string, c2: string): number {
  const lum = (c: string) => { const [r, g, b] = linearRgb(c); return 0.2126 * r + 0.7152 * g + 0.0722 * b; };
  const y1 = lum(c1), y2 = lum(c2);
  return (Math.max(y1, y2) + 0.05) / (Math.min(y1, y2) + 0.05);
}

// ---- hop distance ----------------------------------------------------------------------------------------

/** OKLCH hue of the hop ramp (a blue-green). */
export const HOP_HUE = 200;
/** OKLCH lightness of the centre and of the outermost hop, per background. */
const HOP_LIGHT: [number, number] = [0.26, 0.65];
const HOP_DARK: [number, number] = [0.97, 0.52];
const hopCache = new Map<string, string>();

/**
 * Colour of hop k of 0..maxHop: OKLCH lightness steps evenly from the centre's to the outermost
 * hop's, at one hue, with chroma 85% of what sRGB allows there (at most 0.16).
 */
export function hopColour(k: number, maxHop: number, dark: boolean): string {
  const t = maxHop > 0 ? Math.min(1, Math.max(0, k / maxHop)) : 0;
  const key = `${t}/${dark}`;
  let c = hopCache.get(key);
  if (c === undefined) {
    const [from, to] = dark ? HOP_DARK : HOP_LIGHT;
    const L = from + (to - from) * t;
    c = oklchHex(L, Math.min(0.16, 0.85 * maxChroma(L, HOP_HUE)), HOP_HUE);
    hopCache.set(key, c);
  }
  return c;
}

// ---- the pair's own edge (pair mode) ---------------------------------------------------------------

/** OKLCH hue of the pair-edge stroke: a magenta-red far from the hop ramp's blue-green. */
export const PAIR_EDGE_HUE = 350;

/**
 * Stroke of the pair's own edge when it is in the message-passing graph (a leak): one strong
 * magenta-red, dark on light backgrounds and light on dark ones, so it cannot pass for an edge of
 * the hop ramp (tests/unit/panel-colours.test.ts checks its contrast and its distance to the ramp).
 */
export function pairEdgeColour(dark: boolean): string {
  const L = dark ? 0.72 : 0.5;
  return oklchHex(L, Math.min(0.2, 0.9 * maxChroma(L, PAIR_EDGE_HUE)), PAIR_EDGE_HUE);
}

/** CIE lightness (0..100) of a colour: the tests check the hop ramp is monotonic in it. */
export function lightness(c: string): number {
  return hcl(c).l;
}

// ---- 1-WL groups ----------------------------------------------------------------------------------------

/** OKLCH hue of the first group colour; the ten hues are 36° apart from here. */
export const GROUP_START = 70;
const GROUP_HUES = 10;
/** Two OKLCH lightness levels per background. */
const GROUP_LIGHT: [number, number] = [0.52, 0.64];
const GROUP_DARK: [number, number] = [0.72, 0.84];
/** Number of distinct group colours before they repeat. */
export const GROUP_COLOURS = 2 * GROUP_HUES;
const groupCache = new Map<string, string>();

/** Colour of the i-th WL group (groups of one node get a neutral grey from the caller). */
export function groupColour(i: number, dark: boolean): string {
  const n = ((i % GROUP_COLOURS) + GROUP_COLOURS) % GROUP_COLOURS;
  const key = `${n}/${dark}`;
  let c = groupCache.get(key);
  if (c === undefined) {
    const round = Math.floor(n / GROUP_HUES);
    // Three hue steps (108°) between neighbours; 3 and 10 share no factor, so all ten hues come round.
    const h = GROUP_START + (360 / GROUP_HUES) * ((3 * n) % GROUP_HUES);
    const levels = dark ? GROUP_DARK : GROUP_LIGHT;
    const L = levels[(n + round) % 2]!;
    c = oklchHex(L, Math.min(0.14, 0.9 * maxChroma(L, h)), h);
    groupCache.set(key, c);
  }
  return c;
}

/**
 * Edge colour for balanced Forman curvature: ≤ -1 strongest warm, 0 neutral, ≥ 1 strongest cool.
 * The warm end is darker on light themes and brighter on dark ones than the neutral middle.
 */
export function curvatureColour(value: number | null, dark: boolean, neutral: string): string {
  if (value === null || !Number.isFinite(value)) return neutral;
  const t = Math.max(-1, Math.min(1, value));
  const mid = hcl(neutral);
  const end = t < 0
    ? hcl(40, 85, dark ? 72 : 42)
    : hcl(240, 45, dark ? 62 : 55);
  const s = Math.abs(t);
  const h = Number.isNaN(mid.h) ? end.h : mid.h + (end.h - mid.h) * s;
  return hcl(h, (Number.isNaN(mid.c) ? 0 : mid.c) * (1 - s) + end.c * s, mid.l + (end.l - mid.l) * s).formatHex();
}

/** a·w + b·(1-w) in sRGB (for soft outlines). */
export function mix(a: string, b: string, w: number): string {
  const x = rgb(a), y = rgb(b);
  if (Number.isNaN(x.r) || Number.isNaN(y.r)) return a;
  return rgb(x.r * w + y.r * (1 - w), x.g * w + y.g * (1 - w), x.b * w + y.b * (1 - w)).formatHex();
}

// ---- node types (typed graphs) ----------------------------------------------------------------------------

/** The theme's chart colours a node-type palette starts from, in order (blue is left out: it is the hop ramp's family). */
export const TYPE_CHART_VARIABLES = ['--vscode-charts-orange', '--vscode-charts-purple', '--vscode-charts-green', '--vscode-charts-yellow', '--vscode-charts-red'];
/** Our own hues when the theme has no chart colours: vermilion, green, magenta, amber, indigo (at least 50° apart). */
export const TYPE_HUES = [25, 125, 315, 75, 265];
/** Least hue distance (degrees) between a type colour and the hop ramp's hue, and between two type hues. */
export const TYPE_HOP_GAP = 40;
const TYPE_MIN_SPACING = 40;
/** OKLCH lightness per background: the first round of hues, then the second. */
const TYPE_LIGHT: [number, number] = [0.56, 0.45];
const TYPE_DARK: [number, number] = [0.76, 0.64];

const hueDistance = (a: number, b: number) => { const d = Math.abs(a - b) % 360; return d > 180 ? 360 - d : d; };

/**
 * Hues for node types from the theme's chart colours (CSS colour strings; empty or unparsable ones
 * skipped): a hue too near the hop ramp or too near a hue already taken is left out, and our own
 * hues (TYPE_HUES) fill the list up to its length. Undefined when the theme gives none.
 */
export function typeHues(colours: string[]): number[] | undefined {
  const out: number[] = [];
  for (const c of colours) {
    if (!c) continue;
    const [L, a, b] = oklab(c);
    if (!Number.isFinite(L) || Math.hypot(a, b) < 0.04) continue; // grey: no hue to take
    const h = ((Math.atan2(b, a) * 180) / Math.PI + 360) % 360;
    if (hueDistance(h, HOP_HUE) < TYPE_HOP_GAP || out.some((x) => hueDistance(x, h) < TYPE_MIN_SPACING)) continue;
    out.push(h);
  }
  if (!out.length) return undefined;
  for (const h of TYPE_HUES) {
    if (out.length >= TYPE_HUES.length) break;
    if (!out.some((x) => hueDistance(x, h) < TYPE_MIN_SPACING)) out.push(h);
  }
  return out;
}

const typeCache = new Map<string, string>();

/**
 * Colour of node type i: hue i of the theme's type hues (or ours), at our lightness for the
 * background; after every hue was used once, the same hues at the second lightness level.
 */
export function typeColour(i: number, dark: boolean, hues: number[] = TYPE_HUES): string {
  const list = hues.length ? hues : TYPE_HUES;
  const n = Math.max(0, Math.floor(i)) % (2 * list.length);
  const h = list[n % list.length]!;
  const round = n >= list.length ? 1 : 0;
  const key = `${h}/${round}/${dark}`;
  let c = typeCache.get(key);
  if (c === undefined) {
    const L = (dark ? TYPE_DARK : TYPE_LIGHT)[round]!;
    c = oklchHex(L, Math.min(0.15, 0.9 * maxChroma(L, h)), h);
    typeCache.set(key, c);
  }
  return c;
}
