// End-to-end tests in a real VS Code: code-server from .cache/e2e/cs (scripts/e2e-setup.sh) with the
// packaged .vsix installed, driven through Debian's Chromium. Run with `npm run test:e2e`.
import { defineConfig } from '@playwright/test';
import { CHROMIUM, CHROMIUM_ARGS } from '../../scripts/code-server.mjs';

export default defineConfig({
  testDir: '.',
  testMatch: '*.spec.ts',
  // 2 cores: one code-server + one browser at a time.
  workers: 1,
  fullyParallel: false,
  timeout: 120_000,
  expect: { timeout: 30_000 },
  // One retry, as Playwright suggests for CI: a UI test in a headless browser on a loaded 2-core
  // machine can lose a race with the workbench; a real failure fails twice, and a pass on retry is
  // listed as flaky in the output.
  retries: 1,
  outputDir: '../../.cache/e2e/pw-results',
  reporter: [['list']],
  use: {
    browserName: 'chromium',
    headless: true,
    viewport: { width: 1400, height: 900 },
    launchOptions: { executablePath: CHROMIUM, args: CHROMIUM_ARGS },
    screenshot: 'only-on-failure',
    trace: 'retain-on-failure',
  },
});
