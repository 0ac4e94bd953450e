import { defineConfig } from 'vitest/config';

// `npm test` runs every workspace's own vitest project in one run.
export default defineConfig({
  test: { projects: ['packages/*', 'apps/*'] },
});
