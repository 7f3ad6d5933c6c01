import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    exclude: ['tests/e2e/**', 'tests/vscode/**', 'tests/python/**', 'node_modules/**', '.cache/**'],
    testTimeout: 60_000,
    pool: 'forks',
  },
});
