// `npm run test:debug`: the tests that drive a real debugger and Python (Debian's /usr/bin/python3
// with python3-debugpy and python3-numpy; python3-torch optional). Kept out of `npm test`.
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

export default defineConfig({
  root: fileURLToPath(new URL('../..', import.meta.url)),
  test: {
    include: ['tests/debug/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
  },
});
