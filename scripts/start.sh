#!/usr/bin/env bash
# npm start: install what is missing, start PostgreSQL and maildev, migrate, seed the demo,
# build the web app and serve web + API on http://127.0.0.1:${PORT:-3000}. Ctrl-C stops it all.
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
export PORT="${PORT:-3000}"
export APP_URL="${APP_URL:-http://127.0.0.1:$PORT}"
# "Sign in with your district account" goes to a local fake provider that lists the demo accounts (shared with npm run dev).
identity_provider_up 1090 "$APP_URL" http://127.0.0.1:5173
export WEB_DIST="$ROOT/apps/web/dist"

say "building"
npm run build --silent
npm run migrate --silent -w apps/api
npm run seed --silent -w apps/api

say "Evenhand: http://127.0.0.1:$PORT   (mail inbox: http://127.0.0.1:1080; Ctrl-C stops everything)"
(cd apps/api && exec node --import tsx src/server.ts) &
STARTED_PIDS+=("$!")
wait "$!"
