#!/usr/bin/env bash
# npm run backup -- DIR     a consistent snapshot of the database and the file store, taken while
#                           the app keeps serving (scripts/backup.ts)
# npm run restore -- DIR [--force]
#                           restores one into an empty database and file store (scripts/restore.ts)
# The database is DATABASE_URL (default: the local cluster's, scripts/db.sh url); the file store
# is NUXT_FILES_DIR (default .data/files). With NUXT_FILES_DRIVER=s3 the bucket is not copied:
# back it up with the store's own versioning or replication (README).
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"
what="$1"; shift
export RATCHET_PG_BINDIR="${RATCHET_PG_BINDIR:-$(bash "$ROOT/scripts/db.sh" bindir)}"
export DATABASE_URL="${DATABASE_URL:-$(bash "$ROOT/scripts/db.sh" url)}"
export NUXT_FILES_DIR="${NUXT_FILES_DIR:-$ROOT/.data/files}"
# a folder given relative to where npm was run
export RATCHET_CALLER_DIR="${INIT_CWD:-$PWD}"
cd "$ROOT" && exec npx tsx "scripts/$what.ts" "$@"
