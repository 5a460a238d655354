import { defineConfig } from 'vitest/config';

// Unit and integration tests run in parallel; browser tests start real servers and a
// real Chromium, so they run in their own project, one file at a time.
export default defineConfig({
  test: {
    projects: [
      {
        extends: true,
        test: {
          name: 'unit',
          include: [
            'test/unit/**/*.test.ts',
            'test/unit/**/*.test.tsx',
            'test/integration/**/*.test.ts',
            'test/integration/**/*.test.tsx',
          ],
          environment: 'node',
          testTimeout: 30_000,
        },
      },
      {
        extends: true,
        test: {
          name: 'browser',
          include: ['test/browser/**/*.test.ts'],
          environment: 'node',
          fileParallelism: false,
          testTimeout: 120_000,
          hookTimeout: 120_000,
        },
      },
    ],
  },
});
