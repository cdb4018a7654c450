#!/usr/bin/env bash
# npm start: PostgreSQL, migrations, demo seed, maildev, build, and the app on http://127.0.0.1:3000
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
source "$ROOT/scripts/services.sh"
cd "$ROOT"

APP_PORT="${PORT:-3000}"
SMTP_PORT="${RATCHET_SMTP_PORT:-1025}"
MAIL_WEB_PORT="${RATCHET_MAIL_WEB_PORT:-1080}"

trap 'echo; echo "stopping…"; stop_services; bash scripts/db.sh stop' EXIT
trap 'exit 130' INT TERM

ensure_deps
echo "== PostgreSQL"
bash scripts/db.sh start
export DATABASE_URL="$(bash scripts/db.sh url "$RATCHET_DB_NAME")"
echo "== migrations and demo data"
npx tsx scripts/migrate.ts latest
npx tsx scripts/migrate.ts seed
echo "== maildev"
start_maildev "$SMTP_PORT" "$MAIL_WEB_PORT" "$ROOT/.data/maildev/mail"
# rebuild only when the sources, the lock file or the build settings changed since the last build
BUILD_STAMP=.output/.source-fingerprint
fingerprint="$(source_fingerprint)"
if [ "${RATCHET_SKIP_BUILD:-0}" = 1 ] && [ -f .output/server/index.mjs ]; then
  echo "== RATCHET_SKIP_BUILD=1: the last build is used as it is"
elif [ -f .output/server/index.mjs ] && [ -n "$fingerprint" ] && [ "$(cat "$BUILD_STAMP" 2>/dev/null)" = "$fingerprint" ]; then
  echo "== the app is built from these sources already"
else
  echo "== building the app"
  npx nuxt build >.data/build.log 2>&1 || { tail -40 .data/build.log; exit 1; }
  [ -n "$fingerprint" ] && printf '%s\n' "$fingerprint" >"$BUILD_STAMP"
fi
export NUXT_SESSION_PASSWORD="${NUXT_SESSION_PASSWORD:-$(session_secret .data/session-secret)}"
export NUXT_SESSION_COOKIE_SECURE="${NUXT_SESSION_COOKIE_SECURE:-true}"
export NUXT_APP_URL="${NUXT_APP_URL:-http://127.0.0.1:$APP_PORT}"
export NUXT_SMTP_HOST="${NUXT_SMTP_HOST:-127.0.0.1}"
export NUXT_SMTP_PORT="${NUXT_SMTP_PORT:-$SMTP_PORT}"
echo "== starting Ratchet"
start_app "$APP_PORT" .data/app.log

cat <<TXT

  Ratchet      http://127.0.0.1:$APP_PORT
  Mail inbox   http://127.0.0.1:$MAIL_WEB_PORT   (maildev: every e-mail the app sends lands here)

  Demo sign-ins (demo data only), password: ratchet-demo
    owner@demo.test       Owner     Northwind Mobility Lab
    engineer@demo.test    Engineer  Northwind Mobility Lab
    engineer2@demo.test   Engineer  Northwind Mobility Lab
    reviewer@demo.test    Reviewer  Northwind Mobility Lab
    outsider@demo.test    Owner     Quarry Works

  Logs: .data/app.log   Stop: Ctrl-C
TXT
wait "$APP_PID"
