import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    environment: 'node',
    pool: 'forks',
    // Two cores: integration tests start real servers; keep parallelism modest.
    maxWorkers: 2,
    testTimeout: 30_000,
    // Integration and browser tests run real brokers, databases and a browser on a noisy 2-core
    // machine; a test that fails on timing alone gets up to two more tries. Failures that repeat
    // still fail the run.
    retry: 2,
    hookTimeout: 60_000,
    reporters: ['default'],
  },
});
