#!/usr/bin/env bash
# npm test: the whole suite against a throwaway PostgreSQL cluster (never the development data).
#   1. svelte-kit sync + svelte-check   2. vitest: unit and integration, then the fault tests alone   3. browser tests on the built app
# The last line is "N passed, N failed" with the totals of every suite.
source "$(dirname "$0")/lib.sh"
set +e

export PGPORT="${TEST_PGPORT:-54339}"
export PORT="${TEST_PORT:-5190}"
export SMTP_SINK_PORT="${TEST_SMTP_PORT:-2536}"
export HOST=127.0.0.1
export BODY_SIZE_LIMIT="${BODY_SIZE_LIMIT:-12M}"  # rate tables up to 10 MB (the import refuses larger ones itself)
export ORIGIN="http://127.0.0.1:$PORT"
export E2E_BASE_URL="$ORIGIN"
export ESCAPEMENT_ENV=test
OUT="$ROOT/test-results"
rm -rf "$OUT"; mkdir -p "$OUT"

passed=0; failed=0
children=()
cleanup() {
  trap - INT TERM EXIT
  stop_children "${children[@]}"
  pg_stop test
}
trap cleanup INT TERM EXIT
tally() { passed=$((passed + $1)); failed=$((failed + $2)); }
count_vitest() {
  # count_vitest REPORT.json : adds the report's totals; a missing report counts as one failure.
  if [ -f "$1" ]; then
    read -r p f < <(node -e "const r=require('$1');console.log(r.numPassedTests+' '+(r.numFailedTests+(r.numRuntimeErrorTestSuites||0)+(r.numFailedTestSuites&&!r.numFailedTests?r.numFailedTestSuites:0)))")
    tally "$p" "$f"
  else
    tally 0 1
  fi
}

( set -e; ensure_node_modules; ensure_postgres_binaries; ensure_chromium ) || { echo "0 passed, 1 failed"; exit 1; }
PG_FSYNC=off pg_start test "$PGPORT" escapement_test || { echo "0 passed, 1 failed"; exit 1; }
pg_drop_create "$PGPORT" escapement_test
ensure_secret

say "migrating the test database"
if ! (cd "$ROOT" && npx tsx scripts/migrate.ts); then echo "0 passed, 1 failed"; exit 1; fi

say "mail sink on 127.0.0.1:$SMTP_SINK_PORT"
(cd "$ROOT" && exec node --import tsx scripts/mail-sink.ts) > "$OUT/mail-sink.log" 2>&1 &
children+=($!)
export SMTP_URL="smtp://127.0.0.1:$SMTP_SINK_PORT"

say "1/3 type check (svelte-check)"
if (cd "$ROOT" && npx svelte-kit sync && npx svelte-check --tsconfig ./tsconfig.json --threshold error --output machine > "$OUT/svelte-check.log" 2>&1); then
  tally 1 0; tail -1 "$OUT/svelte-check.log"
else
  tally 0 1; grep -E 'ERROR|COMPLETED' "$OUT/svelte-check.log" | head -40
fi

say "2/3 unit and integration tests (vitest)"
(cd "$ROOT" && npx vitest run --reporter=default --reporter=json --outputFile.json="$OUT/vitest.json")
count_vitest "$OUT/vitest.json"

# On their own: the fault tests restart the cluster, which would cut the connections of any test beside them.
say "2b/3 fault tests (PostgreSQL restarted mid-test)"
(cd "$ROOT" && npx vitest run --config tests/faults/vitest.config.ts --reporter=default --reporter=json --outputFile.json="$OUT/faults.json")
count_vitest "$OUT/faults.json"

say "3/3 browser tests on the built app (chromium)"
if (cd "$ROOT" && npx svelte-kit sync >/dev/null && npx vite build --logLevel error > "$OUT/build.log" 2>&1); then
  touch "$ROOT/build/.escapement-stamp"
  pg_drop_create "$PGPORT" escapement_e2e >/dev/null
  db_urls "$PGPORT" escapement_e2e
  (cd "$ROOT" && npx tsx scripts/migrate.ts >/dev/null && npx tsx scripts/seed.ts >/dev/null) || { tally 0 1; say "seeding the browser-test database failed"; }
  # The browser tests' own mail sink, storing into their database (lab leads read it on the Caught mail page).
  export SMTP_SINK_PORT=$((SMTP_SINK_PORT + 1))
  export SMTP_URL="smtp://127.0.0.1:$SMTP_SINK_PORT"
  (cd "$ROOT" && exec node --import tsx scripts/mail-sink.ts) > "$OUT/mail-sink-e2e.log" 2>&1 &
  children+=($!)
  (cd "$ROOT" && exec node build) > "$OUT/server.log" 2>&1 &
  server=$!; children+=($server)
  for _ in $(seq 1 60); do port_in_use "$PORT" && break; sleep 0.5; done
  if port_in_use "$PORT"; then
    (cd "$ROOT" && npx vitest run --config tests/e2e/vitest.config.ts --reporter=default --reporter=json --outputFile.json="$OUT/e2e.json")
    count_vitest "$OUT/e2e.json"
  else
    say "the built server did not start:"; tail -20 "$OUT/server.log"; tally 0 1
  fi
else
  say "vite build failed:"; tail -30 "$OUT/build.log"; tally 0 1
fi

cleanup  # before the totals, so that they are the last line
echo
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ] && [ "$passed" -gt 0 ]
