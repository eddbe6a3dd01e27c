import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    // Monte Carlo and browser tests are slow on two cores; their own budgets live in the tests.
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: 'forks',
  },
});
