#!/usr/bin/env bash
# Runs a command with the benchmark's own cluster (.data/pg-bench on 127.0.0.1:54349) up and BENCH_DATABASE_URL
# set, apart from the test cluster so a benchmark and a test run never share a server. Stops it afterwards.
set -euo pipefail
source "$(dirname "$0")/lib.sh"
ensure_postgres
ensure_node_modules
trap stop_services EXIT
PG_FSYNC=off pg_up pg-bench 54349 evenhand_bench
export BENCH_DATABASE_URL="$(database_url 54349 evenhand_bench)"
"$@"
