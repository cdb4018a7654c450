# Shared settings for the project's scripts. Sourced, not run.
# Every value can be overridden from the environment.
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
export RATCHET_PGDATA="${RATCHET_PGDATA:-$ROOT/.data/postgres}"
export RATCHET_PGPORT="${RATCHET_PGPORT:-54329}"
export RATCHET_DB_USER="${RATCHET_DB_USER:-ratchet}"
export RATCHET_DB_PASSWORD="${RATCHET_DB_PASSWORD:-ratchet-local}"
export RATCHET_DB_NAME="${RATCHET_DB_NAME:-ratchet}"
export RATCHET_DB_TEST_NAME="${RATCHET_DB_TEST_NAME:-ratchet_test}"
export NUXT_TELEMETRY_DISABLED=1
