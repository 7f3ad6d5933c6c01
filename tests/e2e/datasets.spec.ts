// Datasets of many graphs and typed graphs in the real editor (a fresh copy of demo/).
// Expected values come from how the demo generators build the files:
//  - scripts/make-demo-datasets.mjs: demo/patterns/patterns.npz holds 24 ride-pattern graphs with
//    graph splits; cluster 17 had no rides that day (0 edge entries, empty-graphs), a ride joins
//    graph 5 to graph 6 (cross-graph-edges, listed in graph 5);
//  - scripts/make-demo-typed.mjs: demo/citywide/citywide.npz has rider 21 written as a dock id in
//    row 1 of rider__rides_from__dock (index-out-of-range) and no relation back from district to dock
//    (one-way-relation).
import { expect, test, EXTENSION_ID, type Workbench } from './fixtures';

/** Filters the Problems panel by `text` and returns its rows. */
async function problemsMatching(wb: Workbench, text: string) {
  const page = wb.page;
  const filter = page.locator('.viewpane-filter input[aria-label="Filter Problems"]');
  if (!(await filter.isVisible())) await wb.runCommand('View: Focus Problems');
  await filter.fill(text);
  return page.locator('.markers-panel .monaco-list-row');
}

test('the tensor viewer shows a dataset as a table of graphs and opens a graph in the panel', async ({ workbench: wb }) => {
  const page = wb.page;
  await page.keyboard.press('Control+P');
  const input = page.locator('.quick-input-widget .quick-input-box input');
  await input.waitFor({ state: 'visible' });
  await input.fill('patterns/patterns.npz');
  await page.locator('.quick-input-widget .quick-input-list .monaco-list-row', { hasText: 'patterns.npz' }).first().waitFor();
  await page.keyboard.press('Enter');
  await page.locator('.part.editor .tab.active', { hasText: 'patterns.npz' }).waitFor();

  const viewer = page
    .frameLocator(`iframe.webview.ready[src*="extensionId=${EXTENSION_ID}"]`).first()
    .frameLocator('iframe#active-frame');
  await expect(viewer.locator('#graphs h2')).toHaveText('Graphs (24)', { timeout: 90_000 });
  await expect(viewer.locator('#dataset-facts')).toContainText('train 18, val 3, test 3');
  const rows = viewer.locator('#graph-scroll .graph-rows .graph-row:not([hidden])');
  await expect(rows).toHaveCount(24, { timeout: 60_000 });
  // Graph 17: no rides that day, so no edge entries, and one problem (empty-graphs).
  const empty = viewer.locator('#graph-scroll .graph-row[data-graph="17"]');
  await expect(empty.locator('.col-edges')).toHaveText('0');
  await expect(empty.locator('.col-problems')).toHaveText('1');
  // Sorting by problems (descending) puts the graphs with problems first.
  await viewer.locator('.graph-head [data-key="problems"]').click();
  await expect(viewer.locator('#graph-scroll .graph-row[aria-rowindex="2"] .col-problems')).toHaveText('1');
  await wb.shot('viewer-dataset-table');

  // Choose graph 3 and open it: the panel walks that graph alone.
  await viewer.locator('#graph-scroll .graph-row[data-graph="3"]').click();
  await expect(viewer.locator('#graph-chosen')).toContainText('Graph 3:');
  await viewer.locator('#open-graph').click();
  const panel = page
    .frameLocator(`iframe.webview.ready[src*="extensionId=${EXTENSION_ID}"]`).last()
    .frameLocator('iframe#active-frame');
  await expect(panel.locator('#summary')).toContainText('(graph 3 of 24)', { timeout: 60_000 });
  await expect(panel.locator('#file-name')).toHaveText('patterns.npz · graph 3');
  await wb.shot('panel-dataset-graph');
});

test('the demo typed graph\'s problems show in the Problems panel (demo/citywide/citywide.npz)', async ({ workbench: wb }) => {
  const oor = await problemsMatching(wb, 'index-out-of-range, **/citywide/citywide.npz');
  await expect(oor.first()).toContainText('citywide.npz', { timeout: 60_000 });
  const cross = oor.filter({ hasText: 'rider__rides_from__dock' });
  await expect(cross).toHaveCount(1);
  expect(await cross.innerText()).toMatch(/\nhopscope\nindex-out-of-range\n/);
  expect(await cross.innerText()).toContain('21');
  const oneWay = await problemsMatching(wb, 'one-way-relation, **/citywide/citywide.npz');
  await expect(oneWay.filter({ hasText: 'one-way-relation' })).toHaveCount(1);
  await wb.shot('problems-typed-citywide');
});
