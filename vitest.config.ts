import { defineConfig } from 'vitest/config';

// Two groups: pure analysis checks need nothing, app checks get a throwaway PostgreSQL cluster.
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: 'analysis',
          include: ['tests/analysis/**/*.test.ts'],
          testTimeout: 60_000,
        },
      },
      {
        test: {
          name: 'app',
          include: ['tests/{api,browser,server}/**/*.test.ts'],
          globalSetup: ['tests/support/global-setup.ts'],
          testTimeout: 60_000,
          hookTimeout: 120_000,
          fileParallelism: false,
        },
      },
    ],
  },
});
