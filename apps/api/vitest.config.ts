import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['src/**/*.test.ts', 'test/**/*.test.ts'],
    globalSetup: ['test/global-setup.ts'],
    // Each test file gets its own database cloned from a migrated, seeded template.
    pool: 'forks',
    testTimeout: 30_000,
    hookTimeout: 60_000,
  },
});
