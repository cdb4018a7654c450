#!/usr/bin/env bash
# npm run bench: performance figures on scratch data in a PostgreSQL cluster of its own.
# Prints figures and asserts nothing. Extra arguments pick sections (e.g. `npm run bench -- scoreboard`).
# RATCHET_BENCH_BUILD=1 rebuilds the app first (otherwise the existing .output is used, or built when missing).
set -euo pipefail
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
export RATCHET_PGDATA="${RATCHET_BENCH_PGDATA:-$ROOT/.data/postgres-bench}"
export RATCHET_PGPORT="${RATCHET_BENCH_PGPORT:-54359}"
export RATCHET_PG_FAST=1
source "$ROOT/scripts/env.sh"
source "$ROOT/scripts/services.sh"
cd "$ROOT"

APP_PORT="${RATCHET_BENCH_APP_PORT:-3200}"
BENCH_DB=ratchet_bench

cleanup() { stop_services; bash scripts/db.sh stop || true; }
trap cleanup EXIT
trap 'exit 130' INT TERM

ensure_deps
echo "== PostgreSQL (bench cluster on 127.0.0.1:$RATCHET_PGPORT, database $BENCH_DB)"
bash scripts/db.sh start
bash scripts/db.sh reset "$BENCH_DB" >/dev/null
export DATABASE_URL="$(bash scripts/db.sh url "$BENCH_DB")"
npx tsx scripts/migrate.ts latest

if [ "${RATCHET_BENCH_BUILD:-0}" = 1 ] || [ ! -f .output/server/index.mjs ]; then
  echo "== building the app"
  mkdir -p .data
  # the same lock as npm test: builds share .output
  exec 9>.data/test.lock
  flock 9
  npx nuxt build >.data/bench-build.log 2>&1 || { tail -40 .data/bench-build.log; exit 1; }
  flock -u 9
fi

echo "== the built server on 127.0.0.1:$APP_PORT"
mkdir -p .data/bench
export NUXT_SESSION_PASSWORD="bench-session-password-$(node -e "process.stdout.write(require('crypto').randomBytes(16).toString('hex'))")"
export NUXT_APP_URL="http://127.0.0.1:$APP_PORT"
start_app "$APP_PORT" .data/bench/app.log

RATCHET_BENCH_BASE_URL="http://127.0.0.1:$APP_PORT" npx tsx scripts/bench.ts "$@"
