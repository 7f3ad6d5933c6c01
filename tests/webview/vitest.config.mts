import { defineConfig } from 'vitest/config';

// `npm run test:webview`: the panel webview in headless Chromium (Debian's /usr/bin/chromium,
// driven by playwright-core). Not part of `npm test`, which needs nothing beyond npm.
export default defineConfig({
  test: {
    include: ['tests/webview/**/*.spec.ts'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: 'forks',
  },
});
