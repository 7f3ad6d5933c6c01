/**
 * The receptive-field panel's page. No `vscode` import, so the webview test builds the very same
 * page (and Content-Security-Policy) around the bundled script.
 *
 * CSP: scripts only with the nonce; styles, images and fonts only from the extension's own
 * resources; `connect-src` lets the page fetch its layout worker script from those resources and
 * `worker-src blob:` lets it start the worker from that script (a webview page and its resources
 * have different origins, so `new Worker(resourceUrl)` is refused).
 */
export interface PanelPageParts {
  cspSource: string;
  nonce: string;
  script: string;
  style: string;
  worker: string;
}

const escapeAttribute = (s: string) => s.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;').replace(/>/g, '&gt;');

export function panelCsp(p: Pick<PanelPageParts, 'cspSource' | 'nonce'>): string {
  return [
    "default-src 'none'",
    `style-src ${p.cspSource}`,
    `img-src ${p.cspSource} data:`,
    `font-src ${p.cspSource}`,
    `script-src 'nonce-${p.nonce}'`,
    `connect-src ${p.cspSource}`,
    'worker-src blob:',
  ].join('; ');
}

export function panelHtml(p: PanelPageParts): string {
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="UTF-8">
<meta http-equiv="Content-Security-Policy" content="${escapeAttribute(panelCsp(p))}">
<meta name="viewport" content="width=device-width, initial-scale=1.0">
<meta id="hopscope-panel-config" data-layout-worker="${escapeAttribute(p.worker)}">
<link rel="stylesheet" href="${escapeAttribute(p.style)}">
<title>Receptive field</title>
</head>
<body>
<main id="app"></main>
<script nonce="${escapeAttribute(p.nonce)}" src="${escapeAttribute(p.script)}"></script>
</body>
</html>`;
}

export function makeNonce(): string {
  const chars = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789';
  let s = '';
  const bytes = new Uint8Array(32);
  globalThis.crypto.getRandomValues(bytes);
  for (const b of bytes) s += chars.charAt(b % chars.length);
  return s;
}
