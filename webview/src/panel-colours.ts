/**
 * Colours of the receptive-field drawing. Hop distance uses a ramp of our own that changes
 * lightness steadily from the centre outwards (so it reads without hue vision and in grey print)
 * while the hue turns from indigo to amber; the ramp runs dark → light on light backgrounds and
 * light → dark on dark ones, so the centre always has the strongest contrast. WL groups use a
 * categorical d3 scheme; curvature uses a diverging scale whose negative side is both warmer and
 * darker/brighter than the neutral middle. Theme colours come from the VS Code CSS variables.
 */
import { hcl, rgb } from 'd3-color';
import { schemeTableau10 } from 'd3-scale-chromatic';

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
  };
}

export function isDarkBackground(t: Theme): boolean {
  return t.kind === 'dark' || t.kind === 'high-contrast';
}

/**
 * Colour of hop k of 0..maxHop. Light backgrounds: lightness 26 → 78; dark: 94 → 44. Hue turns
 * through 165° (indigo ↔ amber), chroma stays moderate so neighbours differ mostly in lightness.
 */
export function hopColour(k: number, maxHop: number, dark: boolean): string {
  const t = maxHop > 0 ? Math.min(1, Math.max(0, k / maxHop)) : 0;
  if (dark) return hcl(88 - 165 * t, 44 + 6 * t, 94 - 50 * t).formatHex();
  return hcl(283 + 165 * t, 58 - 8 * t, 26 + 52 * t).formatHex();
}

/** CIE lightness (0..100) of a colour: the tests check the hop ramp is monotonic in it. */
export function lightness(c: string): number {
  return hcl(c).l;
}

/** Colour of the i-th WL group (groups of one node get `neutral`). */
export function groupColour(i: number): string {
  return schemeTableau10[i % schemeTableau10.length]!;
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
