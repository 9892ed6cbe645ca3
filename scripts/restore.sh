#!/usr/bin/env bash
# npm run restore -- FILE [DBNAME] : restores a backup from `npm run backup` into DBNAME (default PGDATABASE, else
# escapement) on 127.0.0.1:PGPORT (54329), then recomputes and checks the hash of every signed audit.
# DBNAME must not exist yet, unless RESTORE_REPLACE=1: then it is dropped first (stop the app before).
source "$(dirname "$0")/lib.sh"

export PGPORT="${PGPORT:-54329}"
FILE="${1:-}"; DBNAME="${2:-${PGDATABASE:-escapement}}"
[ -n "$FILE" ] || die "say which backup to restore: npm run restore -- .data/backups/escapement-….dump [DBNAME]"
[ -r "$FILE" ] || die "cannot read the backup $FILE."
[[ "$DBNAME" =~ ^[A-Za-z_][A-Za-z0-9_]*$ ]] || die "the database name \"$DBNAME\" may hold only letters, digits and _."

ensure_postgres_binaries
started=""
if ! port_in_use "$PGPORT"; then
  pg_start dev "$PGPORT" postgres >/dev/null; started=1
fi
trap '[ -n "$started" ] && pg_stop dev' EXIT

psql_q() { pg_run "$PGBIN/psql" -h 127.0.0.1 -p "$PGPORT" -U postgres -Atqc "$1" postgres; }
if psql_q "select 1 from pg_database where datname='$DBNAME'" | grep -q 1; then
  [ "${RESTORE_REPLACE:-}" = 1 ] || die "the database \"$DBNAME\" exists; restore into a new name (npm run restore -- FILE NEWNAME) or set RESTORE_REPLACE=1 to drop it first."
  say "dropping the database $DBNAME"
  pg_run "$PGBIN/dropdb" -h 127.0.0.1 -p "$PGPORT" -U postgres --force "$DBNAME" || die "dropdb $DBNAME failed."
fi
pg_run "$PGBIN/createdb" -h 127.0.0.1 -p "$PGPORT" -U postgres "$DBNAME" || die "createdb $DBNAME failed."
# Read by this shell and piped in, so the postgres user needs no access to FILE; one transaction: all or nothing.
if ! pg_run "$PGBIN/pg_restore" -h 127.0.0.1 -p "$PGPORT" -U postgres --no-owner --single-transaction --exit-on-error -d "$DBNAME" < "$FILE"; then
  pg_run "$PGBIN/dropdb" -h 127.0.0.1 -p "$PGPORT" -U postgres --if-exists "$DBNAME" >/dev/null 2>&1
  die "pg_restore failed (see above); the half-made database $DBNAME was dropped."
fi
say "restored $FILE into $DBNAME; checking the signed audits"
# The server's signing key is kept outside the database (and the backup): the one of this installation.
export SIGNING_KEY_FILE="${SIGNING_KEY_FILE:-$ROOT/.data/signing-key.pem}"
[ -r "$SIGNING_KEY_FILE" ] || die "the signing key $SIGNING_KEY_FILE is missing: copy the original installation's .data/signing-key.pem here (or set SIGNING_KEY_FILE) and run the restore again."
(cd "$ROOT" && DATABASE_URL="postgres://postgres@127.0.0.1:$PGPORT/$DBNAME" npx tsx scripts/verify-audits.ts) \
  || die "the restored database $DBNAME holds signed audits that do not verify (above); do not use it."
