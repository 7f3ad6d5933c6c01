/**
 * The HTML page around a bundled webview script, shared by the tensor viewer and the
 * receptive-field panel. No `vscode` import, so webview tests build the very same page and
 * Content-Security-Policy. Scripts run only with the nonce; styles, images and fonts come only
 * from the extension's own resources; every attribute value is escaped.
 */
export interface PageParts {
  cspSource: string;
  nonce: string;
  script: string;
  style: string;
  title: string;
  /** Extra CSP directives, e.g. `connect-src …`. */
  extraCsp?: string[];
  /** Extra `<meta>` data attributes for the page's configuration (id → attributes). */
  config?: { id: string; data: Record<string, string> };
}

export const escapeAttribute = (s: string): string =>
  s.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;').replace(/>/g, '&gt;');

export function pageCsp(p: Pick<PageParts, 'cspSource' | 'nonce' | 'extraCsp'>): string {
  return [
    "default-src 'none'",
    `style-src ${p.cspSource}`,
    `img-src ${p.cspSource} data:`,
    `font-src ${p.cspSource}`,
    `script-src 'nonce-${p.nonce}'`,
    ...(p.extraCsp ?? []),
  ].join('; ');
}

export function webviewPage(p: PageParts): string {
  const config = p.config
    ? `\n<meta id="${escapeAttribute(p.config.id)}" ${Object.entries(p.config.data).map(([k, v]) => `data-${k}="${escapeAttribute(v)}"`).join(' ')}>`
    : '';
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="UTF-8">
<meta http-equiv="Content-Security-Policy" content="${escapeAttribute(pageCsp(p))}">
<meta name="viewport" content="width=device-width, initial-scale=1.0">${config}
<link rel="stylesheet" href="${escapeAttribute(p.style)}">
<title>${escapeAttribute(p.title)}</title>
</head>
<body>
<main id="app"></main>
<script nonce="${escapeAttribute(p.nonce)}" src="${escapeAttribute(p.script)}"></script>
</body>
</html>`;
}

export function makeNonce(): string {
  const chars = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789';
  const bytes = new Uint8Array(32);
  globalThis.crypto.getRandomValues(bytes);
  let s = '';
  for (const b of bytes) s += chars.charAt(b % chars.length);
  return s;
}
