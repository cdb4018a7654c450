#!/usr/bin/env bash
# npm test: everything from a fresh clone. Its own PostgreSQL cluster, ports and servers,
# so it runs beside `npm start`. Extra arguments go to vitest (e.g. a file or -t "name").
set -euo pipefail
export RATCHET_PGDATA="${RATCHET_TEST_PGDATA:-$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)/.data/postgres-test}"
export RATCHET_PGPORT="${RATCHET_TEST_PGPORT:-54339}"
export RATCHET_PG_FAST=1
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
source "$ROOT/scripts/services.sh"
cd "$ROOT"

APP_PORT="${RATCHET_TEST_APP_PORT:-3100}"
SMTP_PORT="${RATCHET_TEST_SMTP_PORT:-1125}"
MAIL_WEB_PORT="${RATCHET_TEST_MAIL_WEB_PORT:-1180}"
START=$(date +%s)
step() { echo; echo "== $1 ($(( $(date +%s) - START ))s)"; }

# one run at a time per checkout: runs share .output and the test cluster
mkdir -p .data
exec 9>.data/test.lock
if ! flock -n 9; then
  echo "another npm test is running in this checkout; waiting for it…"
  flock 9
fi

# servers that tests restart themselves write their PIDs here
EXTRA_PIDS="$ROOT/.data/test/pids"
cleanup() {
  if [ -f "$EXTRA_PIDS" ]; then
    while read -r pid; do kill -TERM -- "-$pid" 2>/dev/null || kill -TERM "$pid" 2>/dev/null || true; done <"$EXTRA_PIDS"
    rm -f "$EXTRA_PIDS"
  fi
  stop_services
  bash scripts/db.sh stop || true
}
trap cleanup EXIT
trap 'exit 130' INT TERM

step "npm packages"
ensure_deps

if [ ! -x /usr/bin/chromium ]; then
  step "Chromium (Debian's package)"
  if [ "$(id -u)" = 0 ]; then
    apt-get update -qq >/dev/null
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq -o DPkg::Lock::Timeout=600 chromium >/dev/null
  else
    echo "Chromium is missing: install Debian's chromium package (sudo apt-get install chromium)" >&2
    exit 1
  fi
fi

step "PostgreSQL (test cluster on 127.0.0.1:$RATCHET_PGPORT)"
bash scripts/db.sh start
bash scripts/db.sh reset ratchet_test
bash scripts/db.sh reset ratchet_scratch
export DATABASE_URL="$(bash scripts/db.sh url ratchet_test)"
export RATCHET_SCRATCH_DATABASE_URL="$(bash scripts/db.sh url ratchet_scratch)"
npx tsx scripts/migrate.ts latest

step "lint"
npx eslint .

step "typecheck"
npx nuxt typecheck

step "build"
npx nuxt build >.data/test-build.log 2>&1 || { tail -60 .data/test-build.log; exit 1; }

step "maildev and the built server"
mkdir -p .data/test
rm -rf .data/test/mail "$EXTRA_PIDS"
start_maildev "$SMTP_PORT" "$MAIL_WEB_PORT" "$ROOT/.data/test/mail"
export NUXT_SESSION_PASSWORD="test-session-password-$(node -e "process.stdout.write(require('crypto').randomBytes(16).toString('hex'))")"
export NUXT_APP_URL="http://127.0.0.1:$APP_PORT"
export NUXT_SMTP_HOST=127.0.0.1 NUXT_SMTP_PORT="$SMTP_PORT"
# tests vary X-Forwarded-For to act as different clients for the sign-in throttle
export NUXT_AUTH_TRUST_PROXY=true
export NUXT_FILES_DIR="$ROOT/.data/test/files" NUXT_FILES_MAX_BYTES=60000000 NUXT_FILES_TEAM_QUOTA_BYTES=1000000000
start_app "$APP_PORT" .data/test/app.log

export RATCHET_TEST_BASE_URL="http://127.0.0.1:$APP_PORT"
export RATCHET_TEST_MAILDEV_URL="http://127.0.0.1:$MAIL_WEB_PORT"
export RATCHET_TEST_APP_PID="$APP_PID" RATCHET_TEST_MAILDEV_PID="$MAILDEV_PID"
export RATCHET_TEST_APP_PORT="$APP_PORT" RATCHET_TEST_SMTP_PORT="$SMTP_PORT" RATCHET_TEST_MAIL_WEB_PORT="$MAIL_WEB_PORT"
export RATCHET_TEST_PIDFILE="$EXTRA_PIDS"

step "vitest: unit, api, browser"
status=0
npx vitest run "$@" || status=$?
step "done (exit $status)"
exit $status
