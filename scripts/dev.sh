#!/usr/bin/env bash
# npm run dev: the same services as npm start, then the API in watch mode and Vite's dev server
# (http://127.0.0.1:5173, proxying /api to the API on :3000).
set -euo pipefail
source "$(dirname "$0")/lib.sh"
cd "$ROOT"

ensure_postgres
ensure_node_modules
trap stop_services EXIT
trap 'exit 130' INT TERM

pg_up pg 54329 evenhand
maildev_up 1025 1080
# The API runs as a role that owns nothing; migrations (and the seed's reset) as postgres, the schema's owner.
if [ -z "${DATABASE_URL:-}" ]; then
  export DATABASE_URL="$(app_database_url 54329 evenhand)" MIGRATION_DATABASE_URL="${MIGRATION_DATABASE_URL:-$(database_url 54329 evenhand)}"
fi
export APP_URL="${APP_URL:-http://127.0.0.1:5173}"
# "Sign in with your district account" goes to a local fake provider that lists the demo accounts (shared with npm start).
identity_provider_up 1090 "$APP_URL" "http://127.0.0.1:${PORT:-3000}"

npm run migrate --silent -w apps/api
npm run seed --silent -w apps/api
npm run dev -w apps/api &
STARTED_PIDS+=("$!")
npm run dev -w apps/web &
STARTED_PIDS+=("$!")
wait -n
