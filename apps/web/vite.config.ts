/// <reference types="vitest/config" />
import { fileURLToPath } from 'node:url';
import tailwindcss from '@tailwindcss/vite';
import react from '@vitejs/plugin-react';
import { defineConfig } from 'vite';

export default defineConfig({
  plugins: [react(), tailwindcss()],
  resolve: {
    alias: { '@': fileURLToPath(new URL('./src', import.meta.url)) },
  },
  build: {
    rolldownOptions: {
      output: {
        // Libraries change far less often than the app: separate chunks stay cached across releases.
        codeSplitting: {
          groups: [
            { name: 'react', test: /node_modules[\\/](react|react-dom|scheduler)[\\/]/ },
            // Only the lazily loaded chart pages use these, so they stay out of the first download.
            { name: 'charts', test: /node_modules[\\/](@observablehq|d3|d3-[^\\/]+|internmap|delaunator|robust-predicates|interval-tree-1d|binary-search-bounds|isoformat)[\\/]/ },
            { name: 'vendor', test: /node_modules[\\/]/ },
          ],
        },
      },
    },
  },
  server: {
    host: '127.0.0.1',
    port: 5173,
    strictPort: true,
    proxy: { '/api': 'http://127.0.0.1:3000' },
  },
  test: {
    environment: 'jsdom',
    // Playwright specs live in e2e/ and the build in dist/: keep both out of the unit run.
    include: ['src/**/*.test.{ts,tsx}'],
    setupFiles: ['src/test-setup.ts'],
    // A test that opens a lazily loaded page compiles that page's modules on first import, which a busy machine makes slow.
    testTimeout: 15_000,
  },
});
