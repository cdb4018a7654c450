# Helpers to start and stop the project's servers from a script. Sourced, not run.
# Each started process is tracked by PID and stopped by stop_services (call it from a trap).
RATCHET_PIDS=()

# wait_http URL [seconds]: poll until the URL answers
wait_http() {
  local url="$1" secs="${2:-60}" i
  for ((i = 0; i < secs * 5; i++)); do
    if node -e "fetch(process.argv[1]).then(r=>process.exit(r.status<500||r.status===503?0:1)).catch(()=>process.exit(1))" "$url" 2>/dev/null; then
      return 0
    fi
    sleep 0.2
  done
  echo "timed out waiting for $url" >&2
  return 1
}

# start_maildev SMTP_PORT WEB_PORT DIR
start_maildev() {
  mkdir -p "$3"
  setsid node "$ROOT/node_modules/maildev/dist/bin/maildev.js" \
    --smtp "$1" --ip 127.0.0.1 --web "$2" --web-ip 127.0.0.1 \
    --mail-directory "$3" --silent >"$3/../maildev.log" 2>&1 &
  RATCHET_PIDS+=($!)
  MAILDEV_PID=$!
  wait_http "http://127.0.0.1:$2/api/healthz" 30
}

# start_app PORT LOGFILE: the built server, with the environment already exported
start_app() {
  HOST=127.0.0.1 PORT="$1" setsid node ${RATCHET_APP_NODE_FLAGS:-} "$ROOT/.output/server/index.mjs" >"$2" 2>&1 &
  RATCHET_PIDS+=($!)
  APP_PID=$!
  wait_http "http://127.0.0.1:$1/api/health" 60
}

stop_services() {
  local pid
  for pid in "${RATCHET_PIDS[@]}"; do
    kill -TERM -- "-$pid" 2>/dev/null || kill -TERM "$pid" 2>/dev/null || true
  done
  for pid in "${RATCHET_PIDS[@]}"; do
    for _ in $(seq 1 25); do kill -0 "$pid" 2>/dev/null || break; sleep 0.2; done
    kill -KILL -- "-$pid" 2>/dev/null || true
  done
  RATCHET_PIDS=()
}

# ensure_deps: npm ci when node_modules is missing or older than the lock file
ensure_deps() {
  if [ ! -f "$ROOT/node_modules/.package-lock.json" ] || [ "$ROOT/package-lock.json" -nt "$ROOT/node_modules/.package-lock.json" ]; then
    echo "== installing npm packages (npm ci)"
    (cd "$ROOT" && npm ci --no-audit --no-fund)
  fi
}

# scratch_db NAME: the cluster of RATCHET_PGDATA/RATCHET_PGPORT started, database NAME emptied
# and migrated; exports DATABASE_URL
scratch_db() {
  echo "== PostgreSQL (cluster on 127.0.0.1:$RATCHET_PGPORT, database $1)"
  bash "$ROOT/scripts/db.sh" start
  bash "$ROOT/scripts/db.sh" reset "$1" >/dev/null
  DATABASE_URL="$(bash "$ROOT/scripts/db.sh" url "$1")"
  export DATABASE_URL
  (cd "$ROOT" && npx tsx scripts/migrate.ts latest)
}

# built_app FORCE LOGFILE: builds .output when FORCE is 1 or no build exists, under the lock npm
# test takes (builds share .output)
built_app() {
  if [ "$1" = 1 ] || [ ! -f "$ROOT/.output/server/index.mjs" ]; then
    echo "== building the app"
    mkdir -p "$ROOT/.data"
    exec 9>"$ROOT/.data/test.lock"
    flock 9
    (cd "$ROOT" && npx nuxt build >"$2" 2>&1) || { tail -40 "$2"; exit 1; }
    flock -u 9
  fi
}

# throwaway_secret PREFIX: a session password for a scratch server
throwaway_secret() {
  echo "$1-session-password-$(node -e "process.stdout.write(require('crypto').randomBytes(16).toString('hex'))")"
}

# source_fingerprint: one hash over every file the build reads (tracked or new, not ignored),
# tests and prose left out; empty outside a git checkout, which then always builds
source_fingerprint() {
  (cd "$ROOT" && git rev-parse --git-dir >/dev/null 2>&1) || return 0
  (cd "$ROOT" && git ls-files -z --cached --others --exclude-standard -- . ':!tests' ':!*.md' ':!docs' \
    | xargs -0 -r sha1sum 2>/dev/null | sha1sum | cut -d' ' -f1)
}

# session_secret FILE: a stable random secret kept in an ignored file
session_secret() {
  local f="$1"
  if [ ! -s "$f" ]; then
    mkdir -p "$(dirname "$f")"
    node -e "process.stdout.write(require('crypto').randomBytes(32).toString('hex'))" >"$f"
    chmod 600 "$f"
  fi
  cat "$f"
}
