#!/usr/bin/env bash
# npm run seed [-- --reset]: (re)load the demo district into the development database.
set -euo pipefail
source "$(dirname "$0")/lib.sh"
cd "$ROOT"

ensure_postgres
ensure_node_modules
trap stop_services EXIT
pg_up pg 54329 evenhand
# The API runs as a role that owns nothing; migrations (and the seed's reset) as postgres, the schema's owner.
if [ -z "${DATABASE_URL:-}" ]; then
  export DATABASE_URL="$(app_database_url 54329 evenhand)" MIGRATION_DATABASE_URL="${MIGRATION_DATABASE_URL:-$(database_url 54329 evenhand)}"
fi
npm run migrate --silent -w apps/api
npm run seed --silent -w apps/api -- "$@"
