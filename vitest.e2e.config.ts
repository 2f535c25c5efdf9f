import { defineConfig } from 'vitest/config';

// Browser tests: Debian's Chromium through playwright-core, against the built client.
export default defineConfig({
  test: {
    include: ['tests/e2e/**/*.test.ts'],
    environment: 'node',
    setupFiles: ['tests/support/fast-check-setup.ts'],
    testTimeout: 180_000,
    hookTimeout: 180_000,
    pool: 'forks',
    fileParallelism: false,
  },
});
