#!/usr/bin/env bash
# npm test: the same preparation as npm start against a fresh test database, then type check,
# unit, integration and end-to-end tests, ending with one summary line.
source "$(dirname "$0")/lib.sh"

export TEST_PORT="${TEST_PORT:-3100}"
export SMTP_PORT="${TEST_SMTP_PORT:-2526}"
TEST_DB="${TEST_DB:-asterism_test}"

ensure_node_modules
ensure_chromium
ensure_data_dir
pg_start
trap pg_stop_if_started_here EXIT
log "creating a fresh test database ($TEST_DB)"
recreate_database "$TEST_DB"

export DATABASE_URL="$(database_url "$TEST_DB")"
export AUTH_SECRET="$(node -e "process.stdout.write(require('crypto').randomBytes(48).toString('base64url'))")"
export APP_URL="http://localhost:$TEST_PORT"
export SMTP_HOST=127.0.0.1 SMTP_IGNORE_TLS=1
export DEV_MAIL_DIR="$DATA_DIR/test-mail"
export ASTERISM_DEMO_SEED=1
# The demo's projection jobs would compete with the tests' own for the one test worker.
export ASTERISM_DEMO_PROJECTIONS=0
# A worker killed mid-job is noticed after the job's time limit; the test of that needs it short
# (every test projection finishes well within 30 s).
export JOB_EXPIRE_SECONDS="${JOB_EXPIRE_SECONDS:-30}" JOB_MAINTENANCE_SECONDS="${JOB_MAINTENANCE_SECONDS:-3}"
# The whole suite signs in from 127.0.0.1; the per-address limit is tested on its own.
export SIGN_IN_MAX_FAILURES_PER_ADDRESS="${SIGN_IN_MAX_FAILURES_PER_ADDRESS:-10000}"
rm -rf "$DEV_MAIL_DIR"

npx tsx scripts/migrate.ts
npx tsx --conditions=react-server db/seed.ts

RESULTS="$DATA_DIR/test-results"
rm -rf "$RESULTS" && mkdir -p "$RESULTS"

log "type check (tsc --noEmit)"
if npx tsc --noEmit; then echo pass >"$RESULTS/typecheck"; else echo fail >"$RESULTS/typecheck"; fi

# A failed build would leave the tests talking to an old one: count it and stop there.
if ! build_if_needed; then
  echo fail >"$RESULTS/build"
  node scripts/test-summary.mjs "$RESULTS"
fi

log "unit, integration and end-to-end tests (vitest)"
set +e
npx vitest run --reporter=default --reporter=json --outputFile.json="$RESULTS/vitest.json" "$@"
set -e

node scripts/test-summary.mjs "$RESULTS"
