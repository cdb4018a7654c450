#!/usr/bin/env bash
# npm run dev: the same services as npm start, with Nuxt's hot-reloading dev server.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
source "$ROOT/scripts/services.sh"
cd "$ROOT"
trap 'stop_services' EXIT
trap 'exit 130' INT TERM
ensure_deps
bash scripts/db.sh start
export DATABASE_URL="$(bash scripts/db.sh url "$RATCHET_DB_NAME")"
npx tsx scripts/migrate.ts latest
npx tsx scripts/migrate.ts seed
start_maildev "${RATCHET_SMTP_PORT:-1025}" "${RATCHET_MAIL_WEB_PORT:-1080}" "$ROOT/.data/maildev/mail"
export NUXT_SESSION_PASSWORD="${NUXT_SESSION_PASSWORD:-$(session_secret .data/session-secret)}"
npx nuxt dev --host 127.0.0.1 --port "${PORT:-3000}"
