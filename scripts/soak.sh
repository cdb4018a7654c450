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
SOAK_DB=ratchet_soak

cleanup() { stop_services; bash scripts/db.sh stop || true; }
trap cleanup EXIT
trap 'exit 130' INT TERM

ensure_deps
echo "== PostgreSQL (soak cluster on 127.0.0.1:$RATCHET_PGPORT, database $SOAK_DB)"
bash scripts/db.sh start
bash scripts/db.sh reset "$SOAK_DB" >/dev/null
export DATABASE_URL="$(bash scripts/db.sh url "$SOAK_DB")"
npx tsx scripts/migrate.ts latest

if [ "${RATCHET_SOAK_BUILD:-0}" = 1 ] || [ ! -f .output/server/index.mjs ]; then
  echo "== building the app"
  mkdir -p .data
  # the same lock as npm test: builds share .output
  exec 9>.data/test.lock
  flock 9
  npx nuxt build >.data/soak-build.log 2>&1 || { tail -40 .data/soak-build.log; exit 1; }
  flock -u 9
fi

echo "== maildev and the built server on 127.0.0.1:$APP_PORT"
mkdir -p .data/soak
rm -rf .data/soak/mail
start_maildev "$SMTP_PORT" "$MAIL_WEB_PORT" "$ROOT/.data/soak/mail"
export NUXT_SESSION_PASSWORD="soak-session-password-$(node -e "process.stdout.write(require('crypto').randomBytes(16).toString('hex'))")"
export NUXT_APP_URL="http://127.0.0.1:$APP_PORT"
export NUXT_SMTP_HOST=127.0.0.1 NUXT_SMTP_PORT="$SMTP_PORT"
export NUXT_FILES_DIR="$ROOT/.data/soak/files"
start_app "$APP_PORT" .data/soak/app.log

RATCHET_SOAK_BASE_URL="http://127.0.0.1:$APP_PORT" RATCHET_SOAK_MAILDEV_URL="http://127.0.0.1:$MAIL_WEB_PORT" \
  RATCHET_SOAK_SMTP_PORT="$SMTP_PORT" RATCHET_SOAK_MAIL_WEB_PORT="$MAIL_WEB_PORT" RATCHET_SOAK_MAILDEV_PID="$MAILDEV_PID" \
  npx tsx scripts/soak.ts
