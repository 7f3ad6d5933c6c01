// The receptive-field panel in the real editor: opened from the command palette on the demo's
// depot ring, then the layer slider moved from the keyboard. Expected counts follow from how
// scripts/make-demo.mjs builds depots/edge_index.npy: a ring of 12 depots (both directions) plus
// the chord 0 — 6. From depot 0: 3 nodes at hop 1 (1, 11, 6), 4 at hop 2 (2, 10, 5, 7) and the
// last 4 at hop 3 — so 8 nodes within 2 layers and all 12 within 3 (a breadth-first count; the
// panel's numbers come from the language server).
import { expect, test, EXTENSION_ID } from './fixtures';

test('open the receptive-field panel from the palette and slide the layer count', async ({ workbench: wb }) => {
  const page = wb.page;
  // File quick pick, then the centre node.
  await wb.runCommand('Hopscope: Open Receptive-Field Panel', /^Graph file/);
  const input = page.locator('.quick-input-widget .quick-input-box input');
  await input.fill('depots/edge_index.npy');
  await page.locator('.quick-input-widget .quick-input-list .monaco-list-row', { hasText: 'edge_index.npy' }).first().waitFor();
  await page.keyboard.press('Enter');
  await expect(page.locator('.quick-input-widget .quick-input-message')).toContainText(/Centre node id \(0–11\)/, { timeout: 30_000 });
  await input.fill('0');
  await page.keyboard.press('Enter');

  const panel = page
    .frameLocator(`iframe.webview.ready[src*="extensionId=${EXTENSION_ID}"]`).last()
    .frameLocator('iframe#active-frame');
  const stage = panel.locator('#stage');
  await expect(stage).toHaveAttribute('data-nodes', '8', { timeout: 60_000 });
  await expect(panel.locator('#summary')).toContainText('Node 0 hears from 8 nodes');

  // One step up with the keyboard on the slider: 3 layers reach all 12 depots.
  await panel.locator('#layers').focus();
  await page.keyboard.press('ArrowRight');
  await expect(panel.locator('#layers-out')).toHaveText('3');
  await expect(stage).toHaveAttribute('data-nodes', '12', { timeout: 60_000 });
  await expect(panel.locator('#summary')).toContainText('12 nodes');
  await expect(panel.locator('#summary')).toContainText('100');
  await wb.shot('field-panel-depots');
});
