#!/usr/bin/env bash
# npm run load: a load test on loopback against a throwaway cluster and the built app on their own ports
# (never the development data). The measuring itself is scripts/load.ts; this sets up and tears down.
#   LOAD_SECONDS (60)  LOAD_CONNECTIONS (50)  LOAD_PGPORT (54349)  LOAD_PORT (5200)  LOAD_SMTP_PORT (2546)
source "$(dirname "$0")/lib.sh"

export PGPORT="${LOAD_PGPORT:-54349}"
export PORT="${LOAD_PORT:-5200}"
export SMTP_SINK_PORT="${LOAD_SMTP_PORT:-2546}"
export HOST=127.0.0.1
export BODY_SIZE_LIMIT="${BODY_SIZE_LIMIT:-12M}"
export ORIGIN="http://127.0.0.1:$PORT"
export LOAD_BASE_URL="$ORIGIN"

port_in_use "$PORT" && die "port $PORT is in use; choose another with LOAD_PORT."

children=()
cleanup() {
  trap - INT TERM EXIT
  stop_children "${children[@]}"
  pg_stop load
}
trap cleanup INT TERM EXIT

ensure_node_modules
PG_FSYNC=off pg_start load "$PGPORT" escapement_load
pg_drop_create "$PGPORT" escapement_load
ensure_secret
(cd "$ROOT" && npx tsx scripts/migrate.ts >/dev/null && npx tsx scripts/seed.ts >/dev/null) || die "migrating or seeding the load database failed."
if needs_build; then build_app; else say "build is up to date"; fi

(cd "$ROOT" && exec node --import tsx scripts/mail-sink.ts) > "$ROOT/.data/load-mail-sink.log" 2>&1 &
children+=($!)
export SMTP_URL="smtp://127.0.0.1:$SMTP_SINK_PORT"
# the engine worker, as npm start runs one: audits past the work budget become its jobs
if [ -f "$ROOT/scripts/worker.ts" ]; then
  (cd "$ROOT" && exec node --import tsx scripts/worker.ts) > "$ROOT/.data/load-worker.log" 2>&1 &
  children+=($!)
fi
(cd "$ROOT" && exec node build) > "$ROOT/.data/load-server.log" 2>&1 &
server=$!; children+=($server)
for _ in $(seq 1 60); do port_in_use "$PORT" && break; kill -0 "$server" 2>/dev/null || break; sleep 0.5; done
port_in_use "$PORT" || { tail -20 "$ROOT/.data/load-server.log" >&2; die "the built server did not start."; }

(cd "$ROOT" && npx tsx scripts/load.ts)
