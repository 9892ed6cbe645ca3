#!/usr/bin/env bash
# Part of `npm run bench`: job throughput with 1 and 2 worker processes, on a throwaway PostgreSQL cluster
# (.data/bench, port BENCH_PGPORT, default 54359) that it starts and stops itself.
source "$(dirname "$0")/lib.sh"
PORT_PG="${BENCH_PGPORT:-54359}"
started=""
pg_run "$PGBIN/pg_ctl" -D "$(pg_data_base)/bench" status >/dev/null 2>&1 || started=1
PG_FSYNC=off pg_start bench "$PORT_PG" escapement_bench >/dev/null
[ -n "$started" ] && trap 'pg_stop bench >/dev/null' EXIT
pg_drop_create "$PORT_PG" escapement_bench
(cd "$ROOT" && npx tsx scripts/migrate.ts >/dev/null) || die "migrating the bench database failed"
(cd "$ROOT" && npx tsx scripts/bench-jobs.ts)
