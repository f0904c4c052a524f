import { defineConfig } from 'vitest/config';

// Two suites: `engine` needs no database (pure code, sharp, PDFs, CLI); `app` runs against a real
// PostgreSQL cluster started by tests/global-setup.ts and drives real Chromium.
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: 'engine',
          environment: 'node',
          include: ['shared/**/*.test.ts', 'jobs/**/*.test.ts', 'cli/**/*.test.ts', 'tests/engine/**/*.test.ts'],
          testTimeout: 120_000,
          hookTimeout: 120_000,
        },
      },
      {
        test: {
          name: 'app',
          environment: 'node',
          include: ['server/**/*.test.ts', 'tests/app/**/*.test.ts'],
          globalSetup: ['tests/global-setup.ts'],
          fileParallelism: false,
          testTimeout: 120_000,
          hookTimeout: 180_000,
        },
      },
    ],
  },
});
