#!/usr/bin/env bash
# npm run seed [-- --reset]: (re)load the demo district into the development database.
set -euo pipefail
source "$(dirname "$0")/lib.sh"
cd "$ROOT"

ensure_postgres
ensure_node_modules
trap stop_services EXIT
pg_up pg 54329 evenhand
export DATABASE_URL="${DATABASE_URL:-$(database_url 54329 evenhand)}"
npm run migrate --silent -w apps/api
npm run seed --silent -w apps/api -- "$@"
