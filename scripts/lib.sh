# Shared shell functions for start, dev, test and reset. Sourced, not run.
# Every install step of the project lives here, so a fresh machine needs only Node 20 and the package registries.
set -euo pipefail

ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
PGBIN=/usr/lib/postgresql/15/bin

say() { printf '\033[1m[escapement]\033[0m %s\n' "$*"; }
die() { printf '[escapement] error: %s\n' "$*" >&2; exit 1; }

as_root() { [ "$(id -u)" = 0 ]; }

apt_install() {
  # apt_install PACKAGE... : install Debian packages, refreshing the lists once if needed.
  as_root || die "missing Debian packages ($*): run 'sudo apt-get install -y $*' and try again."
  say "installing Debian packages: $* (first run only)"
  if ! DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "$@" >/dev/null 2>&1; then
    apt-get update -qq >/dev/null 2>&1 || die "apt-get update failed; check the package mirror."
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "$@" >/dev/null || die "apt-get install $* failed."
  fi
}

ensure_node_modules() {
  # npm ci when node_modules is missing or older than the lock file's content.
  local want have=""
  want=$(sha256sum "$ROOT/package-lock.json" | cut -c1-64)
  [ -f "$ROOT/node_modules/.escapement-lock" ] && have=$(cat "$ROOT/node_modules/.escapement-lock")
  if [ "$want" != "$have" ]; then
    say "installing npm packages (npm ci)…"
    (cd "$ROOT" && npm ci --no-audit --no-fund --loglevel=error) || die "npm ci failed (see above)."
    echo "$want" > "$ROOT/node_modules/.escapement-lock"
  fi
}

ensure_postgres_binaries() {
  [ -x "$PGBIN/initdb" ] || apt_install postgresql
  [ -x "$PGBIN/initdb" ] || die "PostgreSQL 15 binaries not found in $PGBIN after install."
}

ensure_chromium() {
  command -v chromium >/dev/null 2>&1 || [ -x /usr/bin/chromium ] || apt_install chromium
}

pg_data_base() {
  # The clusters live in .data/ of the project unless the postgres user cannot reach it (a 700 parent folder):
  # then under /var/tmp, in a folder named after the project path.
  if as_root && ! runuser -u postgres -- test -x "$ROOT" 2>/dev/null; then
    echo "/var/tmp/escapement-$(echo -n "$ROOT" | sha256sum | cut -c1-12)"
  else
    echo "$ROOT/.data"
  fi
}

pg_run() {
  # Run a PostgreSQL binary as the postgres user when we are root (root may not run the server).
  # From / : the postgres user may not be allowed into the current folder.
  if as_root; then (cd / && runuser -u postgres -- "$@"); else "$@"; fi
}

port_in_use() { (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }

pg_start() {
  # pg_start NAME PORT DBNAME : create (once) and start a cluster on 127.0.0.1:PORT, create DBNAME (once).
  local name=$1 port=$2 db=$3 base data sock
  ensure_postgres_binaries
  base=$(pg_data_base)
  data="$base/$name"; sock="$base/$name-sock"
  mkdir -p "$data" "$sock"
  if as_root; then chown postgres:postgres "$data" "$sock"; chmod 700 "$data"; chmod 755 "$base"; fi
  if [ ! -f "$data/PG_VERSION" ]; then
    say "creating PostgreSQL cluster in $data"
    pg_run "$PGBIN/initdb" -D "$data" -U postgres --auth=trust --encoding=UTF8 --locale=C.UTF-8 >"$base/$name-initdb.log" 2>&1 \
      || die "initdb failed; see $base/$name-initdb.log"
  fi
  if pg_run "$PGBIN/pg_ctl" -D "$data" status >/dev/null 2>&1; then
    say "PostgreSQL ($name) already running on port $port"
  else
    if port_in_use "$port"; then die "port $port is in use by another program (another cluster?); stop it, or choose a free port with PGPORT (npm start, dev) or TEST_PGPORT (npm test)."; fi
    say "starting PostgreSQL ($name) on 127.0.0.1:$port"
    pg_run "$PGBIN/pg_ctl" -D "$data" -l "$data/server.log" -w -t 30 \
      -o "-c listen_addresses=127.0.0.1 -p $port -c unix_socket_directories=$sock -c fsync=${PG_FSYNC:-on}" start >/dev/null \
      || die "PostgreSQL did not start; see $data/server.log"
  fi
  if ! pg_run "$PGBIN/psql" -h 127.0.0.1 -p "$port" -U postgres -Atqc "select 1 from pg_database where datname='$db'" postgres | grep -q 1; then
    pg_run "$PGBIN/createdb" -h 127.0.0.1 -p "$port" -U postgres "$db" || die "createdb $db failed."
  fi
  db_urls "$port" "$db"
  PG_STARTED_DATA="$data"
}

APP_DB_ROLE=escapement_app

db_urls() {
  # db_urls PORT DBNAME : the app connects as a least-privilege role (DATABASE_URL); migrations and pg-boss's schema
  # run as the owner of the tables (DATABASE_OWNER_URL, the cluster's postgres user). scripts/migrate.ts creates the
  # role and its grants.
  export DATABASE_OWNER_URL="postgres://postgres@127.0.0.1:$1/$2"
  export DATABASE_URL="postgres://$APP_DB_ROLE@127.0.0.1:$1/$2"
}

pg_stop() {
  # pg_stop NAME
  local data
  data="$(pg_data_base)/$1"
  if [ -f "$data/postmaster.pid" ]; then
    say "stopping PostgreSQL ($1)"
    pg_run "$PGBIN/pg_ctl" -D "$data" -m fast -w stop >/dev/null 2>&1 || true
  fi
}

pg_drop_create() {
  # pg_drop_create PORT DBNAME : a fresh empty database.
  pg_run "$PGBIN/dropdb" -h 127.0.0.1 -p "$1" -U postgres --if-exists --force "$2"
  pg_run "$PGBIN/createdb" -h 127.0.0.1 -p "$1" -U postgres "$2"
}

ensure_secret() {
  # A stable random AUTH_SECRET per data folder.
  local f="$ROOT/.data/auth-secret"
  mkdir -p "$ROOT/.data"
  # Readable by its owner only: whoever reads it can mint session cookies.
  [ -s "$f" ] || (umask 077; node -e "process.stdout.write(require('crypto').randomBytes(32).toString('base64url'))" > "$f")
  chmod 600 "$f"
  export AUTH_SECRET="${AUTH_SECRET:-$(cat "$f")}"
  ensure_signing_key
}

ensure_signing_key() {
  # The server's Ed25519 key for signed audit records: a file outside the database, readable by its owner only.
  local f="$ROOT/.data/signing-key.pem"
  mkdir -p "$ROOT/.data"
  if [ ! -s "$f" ]; then
    (umask 077 && node -e "const { generateKeyPairSync } = require('crypto'); process.stdout.write(generateKeyPairSync('ed25519').privateKey.export({ type: 'pkcs8', format: 'pem' }))" > "$f") \
      || die "could not create the signing key $f"
  fi
  chmod 600 "$f"
  export SIGNING_KEY_FILE="${SIGNING_KEY_FILE:-$f}"
}

needs_build() {
  [ -f "$ROOT/build/.escapement-stamp" ] || return 0
  [ -n "$(cd "$ROOT" && find src static drizzle package-lock.json svelte.config.js vite.config.ts tailwind.config.ts \
      -newer build/.escapement-stamp -print -quit 2>/dev/null)" ]
}

build_app() {
  say "building the app (vite build)…"
  local log="$ROOT/.data/build.log"
  mkdir -p "$ROOT/.data"
  if ! (cd "$ROOT" && npx svelte-kit sync && npx vite build) > "$log" 2>&1; then
    tail -30 "$log" >&2
    die "the build failed; the whole log is in $log"
  fi
  touch "$ROOT/build/.escapement-stamp"
}

stop_children() {
  # stop_children PID... : SIGTERM, up to 10 s for a graceful exit, then SIGKILL. Never hangs.
  local pid
  for pid in "$@"; do kill "$pid" 2>/dev/null || true; done
  for _ in $(seq 1 20); do
    local alive=0
    for pid in "$@"; do kill -0 "$pid" 2>/dev/null && alive=1; done
    [ "$alive" = 0 ] && return 0
    sleep 0.5
  done
  for pid in "$@"; do kill -9 "$pid" 2>/dev/null || true; done
}
