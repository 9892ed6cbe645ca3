#!/usr/bin/env bash
# npm run dev: the same database as npm start, with Vite's hot reload.
source "$(dirname "$0")/lib.sh"
export PGPORT="${PGPORT:-54329}"
export SMTP_SINK_PORT="${SMTP_SINK_PORT:-2526}"
started_pg=""; children=()
cleanup() {
  trap - INT TERM EXIT
  stop_children "${children[@]}"
  [ -n "$started_pg" ] && pg_stop dev
}
trap cleanup INT TERM EXIT
ensure_node_modules
if ! pg_run "$PGBIN/pg_ctl" -D "$(pg_data_base)/dev" status >/dev/null 2>&1; then started_pg=1; fi
pg_start dev "$PGPORT" escapement
ensure_secret
(cd "$ROOT" && npx tsx scripts/migrate.ts && npx tsx scripts/seed.ts) || die "migrate or seed failed."
(cd "$ROOT" && exec node --import tsx scripts/mail-sink.ts) &
children+=($!)
export SMTP_URL="${SMTP_URL:-smtp://127.0.0.1:$SMTP_SINK_PORT}"
export ORIGIN="http://127.0.0.1:${PORT:-5173}"
cd "$ROOT" && npx vite dev --port "${PORT:-5173}" --strictPort
