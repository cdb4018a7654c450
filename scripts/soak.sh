#!/usr/bin/env bash
# npm run soak: 50 signed-in keep-alive connections of mixed reads and writes against the built
# server for 60 s, a PostgreSQL restart under load and an SMTP outage, then the figures (see
# scripts/soak.ts). Everything on 127.0.0.1, in a PostgreSQL cluster of its own; it stops by itself.
# RATCHET_SOAK_BUILD=1 rebuilds the app first (otherwise the existing .output is used, or built when missing).
set -euo pipefail
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
export RATCHET_PGDATA="${RATCHET_SOAK_PGDATA:-$ROOT/.data/postgres-soak}"
export RATCHET_PGPORT="${RATCHET_SOAK_PGPORT:-54379}"
export RATCHET_PG_FAST=1
source "$ROOT/scripts/env.sh"
source "$ROOT/scripts/services.sh"
cd "$ROOT"

APP_PORT="${RATCHET_SOAK_APP_PORT:-3220}"
SMTP_PORT="${RATCHET_SOAK_SMTP_PORT:-1145}"
MAIL_WEB_PORT="${RATCHET_SOAK_MAIL_WEB_PORT:-1190}"

cleanup() { stop_services; bash scripts/db.sh stop || true; }
trap cleanup EXIT
trap 'exit 130' INT TERM

ensure_deps
scratch_db ratchet_soak
built_app "${RATCHET_SOAK_BUILD:-0}" .data/soak-build.log

echo "== maildev and the built server on 127.0.0.1:$APP_PORT"
mkdir -p .data/soak
rm -rf .data/soak/mail
start_maildev "$SMTP_PORT" "$MAIL_WEB_PORT" "$ROOT/.data/soak/mail"
NUXT_SESSION_PASSWORD="$(throwaway_secret soak)"
export NUXT_SESSION_PASSWORD
export NUXT_APP_URL="http://127.0.0.1:$APP_PORT"
export NUXT_SMTP_HOST=127.0.0.1 NUXT_SMTP_PORT="$SMTP_PORT"
export NUXT_FILES_DIR="$ROOT/.data/soak/files"
start_app "$APP_PORT" .data/soak/app.log

RATCHET_SOAK_BASE_URL="http://127.0.0.1:$APP_PORT" RATCHET_SOAK_MAILDEV_URL="http://127.0.0.1:$MAIL_WEB_PORT" \
  RATCHET_SOAK_SMTP_PORT="$SMTP_PORT" RATCHET_SOAK_MAIL_WEB_PORT="$MAIL_WEB_PORT" RATCHET_SOAK_MAILDEV_PID="$MAILDEV_PID" \
  npx tsx scripts/soak.ts
