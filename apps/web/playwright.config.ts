import { defineConfig } from '@playwright/test';

const port = Number(process.env.E2E_PORT ?? 3100);
const databaseUrl = process.env.E2E_DATABASE_URL;
if (!databaseUrl) throw new Error('E2E_DATABASE_URL is not set: run the end-to-end tests with `npm test`');

// Debian's Chromium, never a downloaded browser; flags keep it off this machine's closed network.
export default defineConfig({
  testDir: 'e2e',
  fullyParallel: false,
  workers: 1,
  retries: 0,
  reporter: [['list']],
  timeout: 30_000,
  use: {
    baseURL: `http://127.0.0.1:${port}`,
    trace: 'retain-on-failure',
    launchOptions: {
      executablePath: '/usr/bin/chromium',
      args: [
        '--no-sandbox',
        '--headless',
        '--disable-gpu',
        '--disable-dev-shm-usage',
        '--disable-background-networking',
        '--disable-component-update',
        '--disable-sync',
        '--no-first-run',
      ],
    },
  },
  webServer: {
    command: 'node --import tsx src/server.ts',
    cwd: '../api',
    url: `http://127.0.0.1:${port}/api/health`,
    reuseExistingServer: false,
    timeout: 60_000,
    env: {
      NODE_ENV: 'test',
      PORT: String(port),
      DATABASE_URL: databaseUrl,
      WEB_DIST: new URL('./dist', import.meta.url).pathname,
      APP_URL: `http://127.0.0.1:${port}`,
      SMTP_PORT: process.env.SMTP_PORT ?? '1025',
      LOG_LEVEL: 'warn',
      // The fake district identity provider that scripts/test.sh starts (identity_provider_up); unset, no district sign-in.
      ...(process.env.OIDC_ISSUER_URL && {
        OIDC_ISSUER_URL: process.env.OIDC_ISSUER_URL,
        OIDC_CLIENT_ID: process.env.OIDC_CLIENT_ID ?? '',
        OIDC_CLIENT_SECRET: process.env.OIDC_CLIENT_SECRET ?? '',
      }),
    },
  },
});
