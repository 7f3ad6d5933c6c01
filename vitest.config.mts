import { defineConfig } from 'vitest/config';

/** Python helper files are imported as their text, as esbuild's text loader does in scripts/build.mjs. */
const pythonAsText = {
  name: 'python-as-text',
  enforce: 'pre' as const,
  transform(code: string, id: string) {
    return id.endsWith('.py') ? { code: `export default ${JSON.stringify(code)};`, map: null } : undefined;
  },
};

export default defineConfig({
  plugins: [pythonAsText],
  test: {
    include: ['tests/**/*.test.ts'],
    // tests/debug needs Debian's python3-debugpy and python3-numpy: `npm run test:debug`.
    exclude: ['tests/e2e/**', 'tests/vscode/**', 'tests/python/**', 'tests/debug/**', 'node_modules/**', '.cache/**'],
    testTimeout: 60_000,
    pool: 'forks',
  },
});
