#!/usr/bin/env bash
# Local PostgreSQL from Debian's packages, on 127.0.0.1:$PG_PORT (default 55432), cluster under .data/pg.
#   scripts/postgres.sh start   install if missing, initdb once, start, create the role and both databases
#   scripts/postgres.sh stop    stop the cluster (data kept)
#   scripts/postgres.sh status  exit 0 when running
# Idempotent: a second start reuses the running cluster. Not used when DATABASE_URL points elsewhere.
set -euo pipefail
ROOT=$(cd "$(dirname "$0")/.." && pwd)
PG_PORT=${PG_PORT:-55432}
DB_USER=remanence
DBS=(remanence remanence_test)

AS=()
if [ "$(id -u)" = 0 ]; then AS=(runuser -u postgres --); fi

ensure_installed() {
  if ! ls /usr/lib/postgresql/*/bin/initdb >/dev/null 2>&1; then
    echo "[postgres] server binaries missing: installing Debian's postgresql package"
    if [ "$(id -u)" != 0 ]; then
      echo "[postgres] run as root, or: sudo apt-get install -y postgresql" >&2
      exit 1
    fi
    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql >/dev/null
  fi
  PGBIN=$(ls -d /usr/lib/postgresql/*/bin | sort -V | tail -1)
}

# As root the cluster belongs to the postgres user, who must be able to reach the folder: every parent needs o+x.
# A checkout under a private home folder fails that, so the cluster then lives in /var/tmp (printed below).
choose_data_dir() {
  PGROOT="$ROOT/.data/pg"
  if [ "$(id -u)" = 0 ]; then
    local dir="$ROOT"
    while [ "$dir" != "/" ]; do
      local mode; mode=$(stat -c '%a' "$dir")
      if (( (${mode: -1} & 1) == 0 )); then
        PGROOT="/var/tmp/remanence-pg-$(printf '%s' "$ROOT" | md5sum | cut -c1-10)"
        break
      fi
      dir=$(dirname "$dir")
    done
  fi
  PGDATA="$PGROOT/data"
}

is_running() { [ -f "$PGDATA/PG_VERSION" ] && "${AS[@]}" "$PGBIN/pg_ctl" -D "$PGDATA" status >/dev/null 2>&1; }

psql_admin() { psql -h 127.0.0.1 -p "$PG_PORT" -U postgres -v ON_ERROR_STOP=1 -qtA "$@"; }

start() {
  ensure_installed
  choose_data_dir
  mkdir -p "$PGROOT"
  if [ "$(id -u)" = 0 ]; then chown postgres:postgres "$PGROOT"; fi
  if [ ! -f "$PGDATA/PG_VERSION" ]; then
    echo "[postgres] creating a cluster in $PGDATA"
    "${AS[@]}" "$PGBIN/initdb" -D "$PGDATA" -U postgres --auth=trust -E UTF8 --locale=C.UTF-8 >"$PGROOT/initdb.log"
  fi
  if is_running; then
    echo "[postgres] already running on 127.0.0.1:$PG_PORT ($PGDATA)"
  else
    echo "[postgres] starting on 127.0.0.1:$PG_PORT ($PGDATA)"
    "${AS[@]}" "$PGBIN/pg_ctl" -D "$PGDATA" -l "$PGROOT/server.log" -w -t 60 \
      -o "-p $PG_PORT -k $PGROOT -c listen_addresses=127.0.0.1 -c max_connections=200" start >/dev/null
  fi
  if [ -z "$(psql_admin -c "SELECT 1 FROM pg_roles WHERE rolname='$DB_USER'")" ]; then
    psql_admin -c "CREATE ROLE $DB_USER LOGIN CREATEDB PASSWORD '$DB_USER'"
  fi
  for db in "${DBS[@]}"; do
    if [ -z "$(psql_admin -c "SELECT 1 FROM pg_database WHERE datname='$db'")" ]; then
      psql_admin -c "CREATE DATABASE $db OWNER $DB_USER"
    fi
  done
}

stop() {
  ensure_installed
  choose_data_dir
  if is_running; then "${AS[@]}" "$PGBIN/pg_ctl" -D "$PGDATA" -m fast -w stop >/dev/null && echo "[postgres] stopped"; fi
}

case "${1:-start}" in
  start) start ;;
  stop) stop ;;
  status) ensure_installed; choose_data_dir; is_running ;;
  *) echo "usage: $0 start|stop|status" >&2; exit 2 ;;
esac
