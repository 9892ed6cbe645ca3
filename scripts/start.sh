#!/usr/bin/env bash
# npm start: install what is missing, start PostgreSQL and the mail sink on loopback, migrate, seed the demo lab,
# build and serve the app with one engine worker beside it. Ctrl-C stops everything this script started.
# A child that exits (the web server, the worker, the mail sink) is started again after a pause; the others go on.
source "$(dirname "$0")/lib.sh"

export PORT="${PORT:-5180}"
export PGPORT="${PGPORT:-54329}"
export SMTP_SINK_PORT="${SMTP_SINK_PORT:-2526}"
export HOST=127.0.0.1
export BODY_SIZE_LIMIT="${BODY_SIZE_LIMIT:-12M}"  # rate tables up to 10 MB (the import refuses larger ones itself)
export ORIGIN="${ORIGIN:-http://127.0.0.1:$PORT}"

port_in_use "$PORT" && die "port $PORT is in use; stop the other program or run 'PORT=5181 npm start'."

started_pg=""
children=()
cleanup() {
  trap - INT TERM EXIT
  stop_children "${children[@]}"
  [ -n "$started_pg" ] && pg_stop dev
  say "stopped."
}
trap 'cleanup; exit 130' INT
trap 'cleanup; exit 143' TERM
trap cleanup EXIT

ensure_node_modules
if ! pg_run "$PGBIN/pg_ctl" -D "$(pg_data_base)/dev" status >/dev/null 2>&1; then started_pg=1; fi
pg_start dev "$PGPORT" escapement
ensure_secret
say "applying database migrations"
(cd "$ROOT" && npx tsx scripts/migrate.ts) || die "migrations failed (see above)."
say "seeding the demo lab (kept if already there)"
(cd "$ROOT" && npx tsx scripts/seed.ts) || die "seeding failed (see above)."
if needs_build; then build_app; else say "build is up to date"; fi

# supervise NAME COMMAND : run COMMAND in the background as child NAME; keep_alive starts it again when it exits.
declare -A child_pid child_cmd child_restarts
supervise() {
  local name=$1; shift
  child_cmd[$name]="$*"
  (cd "$ROOT" && exec bash -c "exec $*") &
  child_pid[$name]=$!
  children+=("${child_pid[$name]}")
}
keep_alive() {
  # Once a second: a child that exited is started again, after 1, 2, 4 … up to 30 s when it keeps failing.
  local name pid wait_s
  while sleep 1; do
    for name in "${!child_pid[@]}"; do
      pid=${child_pid[$name]}
      kill -0 "$pid" 2>/dev/null && continue
      local rc=0
      wait "$pid" 2>/dev/null || rc=$?
      child_restarts[$name]=$(( ${child_restarts[$name]:-0} + 1 ))
      wait_s=$(( 1 << (child_restarts[$name] < 5 ? child_restarts[$name] - 1 : 5) )); [ "$wait_s" -gt 30 ] && wait_s=30
      say "the $name exited (status $rc); starting it again in $wait_s s (the rest keeps running)"
      sleep "$wait_s"
      supervise "$name" "${child_cmd[$name]}"
    done
  done
}

say "starting the mail sink on 127.0.0.1:$SMTP_SINK_PORT"
supervise "mail sink" node --import tsx scripts/mail-sink.ts
export SMTP_URL="${SMTP_URL:-smtp://127.0.0.1:$SMTP_SINK_PORT}"

say "starting the engine worker (more: 'DATABASE_URL=$DATABASE_URL npm run worker', see README)"
supervise "worker" node --import tsx scripts/worker.ts

say "starting the web server"
supervise "web server" node build
server=${child_pid[web server]}
for _ in $(seq 1 60); do
  if port_in_use "$PORT"; then break; fi
  kill -0 "$server" 2>/dev/null || die "the web server exited during start-up (see above)."
  sleep 0.5
done
port_in_use "$PORT" || die "the web server did not open port $PORT within 30 s."

cat <<MSG

  Escapement is running at  $ORIGIN
  Database: $DATABASE_URL   (data in $(pg_data_base)/dev)
  Caught e-mail: $ORIGIN/mail (each person reads the messages to their own address)

  Demo sign-ins (password for all: $(cd "$ROOT" && npx tsx scripts/seed.ts --print-password)):
$(cd "$ROOT" && npx tsx scripts/seed.ts --print-users | sed 's/^/    /')

  Press Ctrl-C to stop the server, the worker, the mail sink and PostgreSQL.
MSG
keep_alive
