// `npm run test:debug`: the tests that drive a real debugger and Python (Debian's /usr/bin/python3
// with python3-debugpy and python3-numpy; python3-torch optional). Kept out of `npm test`.
import { fileURLToPath } from 'node:url';
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
  root: fileURLToPath(new URL('../..', import.meta.url)),
  test: {
    include: ['tests/debug/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
  },
});
