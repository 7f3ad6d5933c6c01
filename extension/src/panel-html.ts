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

import { makeNonce, pageCsp, webviewPage } from './webview-page';

export { makeNonce };

const WORKER_CSP = (cspSource: string) => [`connect-src ${cspSource}`, 'worker-src blob:'];

export function panelCsp(p: Pick<PanelPageParts, 'cspSource' | 'nonce'>): string {
  return pageCsp({ ...p, extraCsp: WORKER_CSP(p.cspSource) });
}

export function panelHtml(p: PanelPageParts): string {
  return webviewPage({
    cspSource: p.cspSource, nonce: p.nonce, script: p.script, style: p.style, title: 'Receptive field',
    extraCsp: WORKER_CSP(p.cspSource),
    config: { id: 'hopscope-panel-config', data: { 'layout-worker': p.worker } },
  });
}
