#!/usr/bin/env bash
# npm run backup [-- FILE] : a consistent snapshot of the database as a pg_dump custom-format archive (-Fc), taken
# while the app runs. Default FILE: .data/backups/escapement-<UTC time>.dump. The database is PGDATABASE (escapement)
# on 127.0.0.1:PGPORT (54329, the one `npm start` runs); a cluster that is not running is started and stopped again.
source "$(dirname "$0")/lib.sh"

export PGPORT="${PGPORT:-54329}"
DBNAME="${PGDATABASE:-escapement}"
FILE="${1:-$ROOT/.data/backups/escapement-$(date -u +%Y%m%dT%H%M%SZ).dump}"
case "$FILE" in /*) ;; *) FILE="$PWD/$FILE" ;; esac
mkdir -p "$(dirname "$FILE")"

ensure_postgres_binaries
started=""
if ! port_in_use "$PGPORT"; then
  [ -f "$(pg_data_base)/dev/PG_VERSION" ] || die "no database answers on 127.0.0.1:$PGPORT and there is no development cluster to start; set PGPORT to the cluster to back up."
  pg_start dev "$PGPORT" "$DBNAME" >/dev/null; started=1
fi
trap '[ -n "$started" ] && pg_stop dev' EXIT

pg_run "$PGBIN/psql" -h 127.0.0.1 -p "$PGPORT" -U postgres -Atqc "select 1 from pg_database where datname='$DBNAME'" postgres | grep -q 1 \
  || die "there is no database \"$DBNAME\" on 127.0.0.1:$PGPORT."
# Written by this shell, not by the postgres user, so FILE may be anywhere we can write.
tmp="$FILE.partial"
if ! pg_run "$PGBIN/pg_dump" -h 127.0.0.1 -p "$PGPORT" -U postgres -Fc -d "$DBNAME" > "$tmp"; then
  rm -f "$tmp"; die "pg_dump failed (see above); no backup was written."
fi
mv "$tmp" "$FILE"
say "backup of $DBNAME written to $FILE ($(du -h "$FILE" | cut -f1)); restore it with: npm run restore -- $FILE"
