// What a user sees after opening the demo workspace (a fresh copy of demo/) in VS Code with the
// packaged extension: Problems panel, squiggles, hovers, the tensor viewer and quick fixes.
// Expected values come from demo/README.md (what is broken where) and demo/lanes/lanes.csv itself.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { expect, test, EXTENSION_ID, type Workbench } from './fixtures';

/** Filters the Problems panel by `text` and returns its visible rows. */
async function problemsMatching(wb: Workbench, text: string) {
  const page = wb.page;
  const filter = page.locator('.viewpane-filter input[aria-label="Filter Problems"]');
  if (!(await filter.isVisible())) await wb.runCommand('View: Focus Problems');
  await filter.fill(text);
  return page.locator('.markers-panel .monaco-list-row');
}

test.describe('workspace', () => {
  // First in the file: no test has opened anything yet in this worker's workbench.
  test('the start-up scan reports files that were never opened (truncated archive: unreadable)', async ({ workbench: wb }) => {
    // Nothing is opened: the server checks every graph file of the workspace when it starts.
    const rows = await problemsMatching(wb, 'unreadable, **/archive/snapshot_2024.npz');
    // A file row (name, folder, count) followed by the problem row.
    await expect(rows.first()).toContainText('snapshot_2024.npz', { timeout: 60_000 });
    await expect(rows).toHaveCount(2);
    expect(await rows.nth(1).innerText()).toMatch(/\nhopscope\nunreadable\n/);
    // And the edge list's problems are there without opening it.
    const oor = await problemsMatching(wb, 'index-out-of-range, **/lanes/lanes.csv');
    await expect(oor.first()).toContainText('lanes.csv');
    await expect(oor.filter({ hasText: /\[Ln 32, Col 3\]/ })).toHaveCount(1);
  });

  test('a test edge left in the message-passing graph shows in the Problems panel (demo/rides/rides.npz)', async ({ workbench: wb }) => {
    // demo/README.md: the test ride 10 – 11 was left in edge_index.
    // The file's other split problems (demo/README.md lists them) may show beside it.
    const rows = await problemsMatching(wb, 'leaked-positive-pairs, **/rides/rides.npz');
    await expect(rows.first()).toContainText('rides.npz', { timeout: 60_000 });
    const leak = rows.filter({ hasText: 'leaked-positive-pairs' });
    await expect(leak).toHaveCount(1);
    const text = await leak.innerText();
    expect(text).toMatch(/\nhopscope\nleaked-positive-pairs\n/);
    expect(text).toContain('10 – 11 is a message edge');
  });

  test('hovering a data path in the training script shows the tensor shape', async ({ workbench: wb }) => {
    const editor = await wb.openFile('train_docks.py');
    const token = editor.locator('.view-lines .view-line span span', { hasText: 'dock_features.npy' }).first();
    await token.waitFor();
    const box = (await token.boundingBox())!;
    const hover = await wb.hoverAt(box, 'dock_features');
    await expect(hover).toContainText(/48\s*[×x]\s*6|\[\s*48\s*,\s*6\s*\]/);
    await wb.shot('train-docks-hover');
  });

  test('clicking a .npy file in the explorer opens the tensor viewer with its name and shape', async ({ workbench: wb }) => {
    const page = wb.page;
    const explorer = page.locator('.explorer-folders-view .monaco-list-row');
    const file = explorer.filter({ hasText: 'dock_features.npy' }).first();
    if (!(await file.isVisible())) await explorer.filter({ hasText: /^lanes$/ }).first().click();
    await file.click();
    await page.locator('.part.editor .tab.active', { hasText: 'dock_features.npy' }).waitFor();
    const webview = page
      .frameLocator(`iframe.webview.ready[src*="extensionId=${EXTENSION_ID}"]`)
      .frameLocator('iframe#active-frame');
    const body = webview.locator('body');
    await expect(body).toContainText('dock_features', { timeout: 60_000 });
    await expect(body).toContainText(/\b48\b\D{1,8}\b6\b/);
    await wb.shot('viewer-dock-features');
  });
});

test.describe('lanes/lanes.csv in the editor', () => {
  test('Problems panel lists the edge-list problems with code and source', async ({ workbench: wb }) => {
    await wb.openFile('lanes/lanes.csv');
    await wb.page.locator('.monaco-editor .squiggly-error').first().waitFor({ timeout: 60_000 });
    // demo/README.md: line 11 one-way lane, 16 self-loop, 24 duplicate, 32 dock 48, 39 `12.5`, 43 short line.
    const expected: [string, number][] = [
      ['asymmetric-adjacency', 11], ['self-loops', 16], ['duplicate-edges', 24],
      ['index-out-of-range', 32], ['non-integer-index', 39], ['edge-shape', 43],
    ];
    for (const [code, line] of expected) {
      // Text and a file glob: other demo files have problems with the same codes.
      const rows = await problemsMatching(wb, `${code}, **/lanes/lanes.csv`);
      const row = rows.filter({ hasText: `[Ln ${line}, ` });
      await expect(row).toHaveCount(1);
      // Rendered as: message, source, code, position (one per line).
      expect(await row.innerText()).toMatch(new RegExp(`\\nhopscope\\n${code}\\n\\[Ln ${line}, Col \\d+\\]$`));
      // The file row above it names the file.
      await expect(rows.first()).toContainText('lanes.csv');
    }
    await wb.shot('problems-lanes');
  });

  test('a squiggle sits on the out-of-range id 48 of line 32, and its hover names the problem', async ({ workbench: wb }) => {
    await wb.openFile('lanes/lanes.csv');
    await wb.page.locator('.monaco-editor .squiggly-error').first().waitFor({ timeout: 60_000 });
    await wb.goToLine(32);
    expect(await wb.lineText(32)).toBe('5,48,61');
    await expect.poll(() => wb.squiggles(32, 'error').then((s) => s.length)).toBe(1);
    const [sq] = await wb.squiggles(32, 'error');
    const value = await wb.columnBox(32, 3, 5); // "48" is columns 3-4
    expect(Math.abs(sq.x - value.x)).toBeLessThan(2);
    expect(Math.abs(sq.width - value.width)).toBeLessThan(2);
    const hover = await wb.hoverAt(value, 'index-out-of-range');
    await expect(hover).toContainText('48');
    await wb.shot('lanes-squiggle-hover');
  });

  test('the self-loop quick fix removes line 16 in the editor only, and Undo brings it back', async ({ workbench: wb }) => {
    const page = wb.page;
    const onDisk = readFileSync(join(wb.folder, 'lanes/lanes.csv'), 'utf8');
    await wb.openFile('lanes/lanes.csv');
    await page.locator('.monaco-editor .squiggly-warning').first().waitFor({ timeout: 60_000 });
    await wb.goToLine(16);
    expect(await wb.lineText(16)).toBe('17,17,35');
    expect(await wb.lineText(17)).toBe('2,19,168');
    await page.keyboard.press('Control+.');
    const fix = page.locator('.action-widget .monaco-list-row', { hasText: /self-loop/i }).first();
    await fix.waitFor({ state: 'visible' });
    await wb.shot('lanes-quick-fix');
    await fix.click();
    // The self-loop line is gone and the next line moved up; the file is dirty, not written.
    await expect.poll(() => wb.lineText(16)).toBe('2,19,168');
    await expect(page.locator('.part.editor .tab.active.dirty')).toBeVisible();
    expect(readFileSync(join(wb.folder, 'lanes/lanes.csv'), 'utf8')).toBe(onDisk);
    await page.locator('.part.editor .editor-group-container.active .monaco-editor .view-lines').first().click();
    await page.keyboard.press('Control+Z');
    await expect.poll(() => wb.lineText(16)).toBe('17,17,35');
    expect(await wb.lineText(17)).toBe('2,19,168');
    await expect(page.locator('.part.editor .tab.active.dirty')).toHaveCount(0);
  });
});
