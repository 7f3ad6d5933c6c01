import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    // tests/debug needs Debian's python3-debugpy and python3-numpy: `npm run test:debug`.
    exclude: ['tests/e2e/**', 'tests/vscode/**', 'tests/python/**', 'tests/debug/**', 'node_modules/**', '.cache/**'],
    testTimeout: 60_000,
    pool: 'forks',
  },
});
