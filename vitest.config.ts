// Node tests: `tests/**/*.test.ts` (browser tests are `*_test.ts`, run by @web/test-runner).
import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    environment: 'node',
    include: ['tests/**/*.test.ts'],
    // Fails a test that writes to console.error / console.warn without expecting it.
    setupFiles: ['tests/setup/fail-on-console.ts'],
    // A stray `.only` must not silently skip the rest of the suite in CI.
    allowOnly: !process.env['CI'],
  },
});
