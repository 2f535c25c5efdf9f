import { defineConfig } from 'vitest/config';

// Unit tests (model, shared schemas, client pieces). Integration and browser
// tests have their own configs because they need the test database and a build.
export default defineConfig({
  test: {
    include: ['tests/sim/**/*.test.ts', 'tests/shared/**/*.test.ts', 'tests/reference/**/*.test.ts', 'tests/client/**/*.test.{ts,tsx}', 'tests/lint/**/*.test.ts'],
    environment: 'node',
    setupFiles: ['tests/support/fast-check-setup.ts'],
    testTimeout: 60_000,
  },
});
