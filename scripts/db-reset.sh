#!/usr/bin/env bash
# npm run db:reset: wipe the development database and seed the demo lab again (asks first).
source "$(dirname "$0")/lib.sh"
export PGPORT="${PGPORT:-54329}"
if [ "${1:-}" != "--yes" ]; then
  [ -t 0 ] || die "not a terminal: run 'npm run db:reset -- --yes' to confirm."
  read -r -p "This deletes every scheme, audit and user in the development database. Type 'reset' to go on: " answer
  [ "$answer" = reset ] || { say "nothing changed."; exit 0; }
fi
ensure_node_modules
started=""
if ! pg_run "$PGBIN/pg_ctl" -D "$(pg_data_base)/dev" status >/dev/null 2>&1; then started=1; fi
pg_start dev "$PGPORT" escapement
pg_drop_create "$PGPORT" escapement
ensure_secret
(cd "$ROOT" && npx tsx scripts/migrate.ts && npx tsx scripts/seed.ts) || die "migrate or seed failed."
[ -n "$started" ] && pg_stop dev
say "development database reset and seeded."
