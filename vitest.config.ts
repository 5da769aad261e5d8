import { defineConfig } from 'vitest/config';

// Sized for a shared two-core machine where other test runs compete for the cores: a CLI run of
// a demo scenario takes about a second alone and several under load, and server teardown waits
// for worker processes to leave. Speed goals live in `npm run bench`, not in these limits.
export default defineConfig({
  test: {
    testTimeout: 60_000,
    hookTimeout: 60_000,
    teardownTimeout: 30_000,
  },
});
