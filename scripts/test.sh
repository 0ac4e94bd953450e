#!/usr/bin/env bash
# npm test: the whole suite. Installs what is missing and starts its own PostgreSQL cluster
# (.data/pg-test on 127.0.0.1:54339) and maildev (SMTP 1125, REST 1180), apart from npm start's.
set -euo pipefail
source "$(dirname "$0")/lib.sh"
cd "$ROOT"

ensure_postgres
ensure_chromium
ensure_node_modules

# Conventions first: an import across a boundary or a type error fails the run before any test starts.
say "lint (import boundaries, hooks, accessibility) and typecheck"
npm run lint --silent
npm run typecheck --silent

trap stop_services EXIT
trap 'exit 130' INT TERM

# Test data is thrown away, so the test cluster skips fsync.
PG_FSYNC=off pg_up pg-test 54339 evenhand_e2e
maildev_up 1125 1180
export TEST_DATABASE_URL="$(database_url 54339 postgres)"
export SMTP_PORT=1125 MAILDEV_URL=http://127.0.0.1:1180

failed=0
say "unit and API integration tests (vitest)"
npx vitest run "$@" || failed=1

if [ -z "${SKIP_E2E:-}" ]; then
  say "end-to-end tests (Playwright, Debian's Chromium)"
  npm run build --silent -w apps/web
  # The journeys' API signs in through the fake district identity provider (its OIDC_* settings are exported here).
  identity_provider_up 1190 "http://127.0.0.1:${E2E_PORT:-3100}"
  # The journeys' server runs as the application's role, which owns nothing; postgres migrates and resets.
  export E2E_DATABASE_URL="$(app_database_url 54339 evenhand_e2e)"
  export MIGRATION_DATABASE_URL="$(database_url 54339 evenhand_e2e)"
  DATABASE_URL="$E2E_DATABASE_URL" npm run migrate --silent -w apps/api
  DATABASE_URL="$E2E_DATABASE_URL" npm run seed --silent -w apps/api -- --reset
  (cd apps/web && PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD=1 npx playwright test) || failed=1
fi

if [ "$failed" = 0 ]; then say "all tests passed"; else say "some tests failed"; fi
exit "$failed"
