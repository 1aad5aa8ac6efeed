#!/usr/bin/env bash
# npm start: everything a newcomer needs, from a fresh clone, in one command. Ctrl-C stops it all.
source "$(dirname "$0")/lib.sh"

PORT="${PORT:-3000}"
SMTP_PORT="${SMTP_PORT:-2525}"
DB_NAME="${DB_NAME:-asterism}"

ensure_node_modules
ensure_data_dir
pg_start
ensure_database "$DB_NAME"

export DATABASE_URL="$(database_url "$DB_NAME")"
export AUTH_SECRET="$(cat "$DATA_DIR/auth-secret")"
export APP_URL="${APP_URL:-http://localhost:$PORT}"
export SMTP_HOST=127.0.0.1 SMTP_PORT SMTP_IGNORE_TLS=1
export DEV_MAIL_DIR="$DATA_DIR/mail"
export ASTERISM_DEMO_SEED="${ASTERISM_DEMO_SEED:-1}"

npx tsx scripts/migrate.ts
npx tsx --conditions=react-server db/seed.ts
build_if_needed

CHILDREN=()
cleanup() {
  trap - INT TERM EXIT
  log "stopping"
  # Each child leads its own process group (setsid), so the whole tree behind npx goes.
  for pid in "${CHILDREN[@]}"; do kill -TERM -- "-$pid" 2>/dev/null || true; done
  for pid in "${CHILDREN[@]}"; do wait "$pid" 2>/dev/null || true; done
  pg_stop_if_started_here
}
trap cleanup INT TERM EXIT

setsid npx tsx scripts/mail-sink.ts &
CHILDREN+=($!)
setsid npx next start -H 127.0.0.1 -p "$PORT" &
CHILDREN+=($!)
for _ in $(seq 1 "${WORKERS:-1}"); do
  setsid npx tsx --conditions=react-server scripts/worker.ts &
  CHILDREN+=($!)
done

wait_for_health "http://127.0.0.1:$PORT/api/health"

cat <<MSG

  Asterism is running at $APP_URL
    database   PostgreSQL on 127.0.0.1:$PGPORT (database $DB_NAME, data in .data/pg)
    mail sink  SMTP on 127.0.0.1:$SMTP_PORT; read the messages at $APP_URL/dev/mail
    workers    ${WORKERS:-1} projection worker(s) on the job queue in the same database

  Demo accounts (workspace "Larkspur Books"), password: ${DEMO_PASSWORD:-asterism-demo}
    owner@demo.test  analyst@demo.test  expert@demo.test
    presenter@demo.test  reviewer@demo.test  viewer@demo.test

  Press Ctrl-C to stop.

MSG

wait -n "${CHILDREN[@]}" || true
