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

cleanup() { stop_services; bash scripts/db.sh stop || true; }
trap cleanup EXIT
trap 'exit 130' INT TERM

ensure_deps
scratch_db ratchet_bench
built_app "${RATCHET_BENCH_BUILD:-0}" .data/bench-build.log

echo "== the built server on 127.0.0.1:$APP_PORT"
mkdir -p .data/bench
NUXT_SESSION_PASSWORD="$(throwaway_secret bench)"
export NUXT_SESSION_PASSWORD
export NUXT_APP_URL="http://127.0.0.1:$APP_PORT"
start_app "$APP_PORT" .data/bench/app.log

RATCHET_BENCH_BASE_URL="http://127.0.0.1:$APP_PORT" npx tsx scripts/bench.ts "$@"
