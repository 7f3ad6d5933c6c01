/**
 * DOM helpers shared by the webviews (viewer.ts and the receptive-field panel). Elements are made
 * with createElement, attributes set with setAttribute, and every child given as a string becomes a
 * text node: nothing here parses HTML, so a string from a file (a tensor name, a label, a message)
 * can never turn into markup or script, and the pages need no inline script or style under their CSP.
 */
import { select } from 'd3-selection';

/** A child of a new element: a node, or a string shown as text. */
export type Child = Node | string;

function fill<E extends HTMLElement>(e: E, attrs: Record<string, string>, children: Child[]): E {
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, v);
  for (const c of children) e.append(typeof c === 'string' ? document.createTextNode(c) : c);
  return e;
}

/** An element of a known HTML tag, typed as that element. */
export function el<K extends keyof HTMLElementTagNameMap>(tag: K, attrs: Record<string, string> = {}, ...children: Child[]): HTMLElementTagNameMap[K] {
  return fill(document.createElement(tag), attrs, children);
}

/** An element of any tag (custom elements such as vscode-button), typed as a plain HTMLElement. */
export function custom(tag: string, attrs: Record<string, string> = {}, ...children: Child[]): HTMLElement {
  return fill(document.createElement(tag), attrs, children);
}

/** An <svg> of the given size appended to `parent`, announced as one image named `label`. */
export function chartSvg(parent: Element, width: number, height: number, label: string) {
  return select(parent).append('svg').attr('width', width).attr('height', height).attr('role', 'img').attr('aria-label', label);
}
