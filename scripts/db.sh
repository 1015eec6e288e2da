#!/usr/bin/env bash
# The project's own PostgreSQL cluster, on 127.0.0.1 and a short Unix socket, on a port of ours.
#   scripts/db.sh start            initdb if needed, start, create the app role and database (idempotent)
#   scripts/db.sh stop             stop the cluster
#   scripts/db.sh status           say whether it answers
#   scripts/db.sh psql [args]      a superuser psql on the cluster
# See docs/decisions/003-database-layout.md.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/env.sh"

pgbin="$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1 || true)"
if [ -z "$pgbin" ] || [ ! -x "$pgbin/initdb" ]; then
  echo "PostgreSQL server binaries not found under /usr/lib/postgresql/*/bin: run scripts/bootstrap.sh (or apt-get install -y postgresql)." >&2
  exit 1
fi

# initdb and pg_ctl refuse to run as root: as root, run them as the postgres user.
as_owner() {
  if [ "$(id -u)" -eq 0 ]; then (cd / && runuser -u postgres -- "$@"); else "$@"; fi
}

# The data folder: .data/pg inside the clone when its owner can reach it; otherwise (a clone under
# a 0700 home, run as root) a folder of ours under /var/lib that the postgres user owns.
data_dir() {
  if [ -n "${LOWSTAND_PG_DATA:-}" ]; then echo "$LOWSTAND_PG_DATA"; return; fi
  local inside="$LOWSTAND_ROOT/.data/pg"
  if [ "$(id -u)" -ne 0 ]; then echo "$inside"; return; fi
  mkdir -p "$LOWSTAND_ROOT/.data"
  if runuser -u postgres -- test -x "$LOWSTAND_ROOT/.data" 2>/dev/null; then
    echo "$inside"
  else
    local key; key="$(printf '%s' "$LOWSTAND_ROOT" | cksum | cut -d' ' -f1)"
    echo "/var/lib/lowstand-pg/$key"
  fi
}

admin_psql() {
  PGPASSWORD="$LOWSTAND_PG_SUPERPASS" "$pgbin/psql" -X -q -v ON_ERROR_STOP=1 \
    -h "$LOWSTAND_PG_SOCKET_DIR" -p "$LOWSTAND_PG_PORT" -U postgres "$@"
}

is_ready() { "$pgbin/pg_isready" -q -h "$LOWSTAND_PG_SOCKET_DIR" -p "$LOWSTAND_PG_PORT"; }

cmd="${1:-start}"; shift || true
DATA="$(data_dir)"

case "$cmd" in
start)
  mkdir -p "$LOWSTAND_PG_SOCKET_DIR" "$(dirname "$DATA")"
  if [ "$(id -u)" -eq 0 ]; then chown postgres:postgres "$LOWSTAND_PG_SOCKET_DIR" "$(dirname "$DATA")"; fi
  if [ ! -s "$DATA/PG_VERSION" ]; then
    echo "[db] creating a cluster in $DATA"
    pwfile="$(mktemp)"; printf '%s\n' "$LOWSTAND_PG_SUPERPASS" > "$pwfile"; chmod 644 "$pwfile"
    mkdir -p "$DATA"; [ "$(id -u)" -eq 0 ] && chown postgres:postgres "$DATA"
    as_owner "$pgbin/initdb" -D "$DATA" -U postgres --pwfile="$pwfile" --auth=scram-sha-256 \
      --encoding=UTF8 --locale=C.UTF-8 >/dev/null
    rm -f "$pwfile"
  fi
  if is_ready; then
    # Something answers on our port: make sure it is this cluster, not another clone's.
    other="$(admin_psql -At -c 'show data_directory' 2>/dev/null || true)"
    if [ -n "$other" ] && [ "$(readlink -f "$other")" != "$(readlink -f "$DATA")" ]; then
      echo "[db] port $LOWSTAND_PG_PORT is already used by another PostgreSQL cluster ($other). Set LOWSTAND_PG_PORT to a free port." >&2
      exit 1
    fi
  else
    as_owner "$pgbin/pg_ctl" -D "$DATA" -l "$DATA/server.log" -w -t 60 start -o \
      "-c listen_addresses=127.0.0.1 -c port=$LOWSTAND_PG_PORT -c unix_socket_directories=$LOWSTAND_PG_SOCKET_DIR -c max_connections=200 -c fsync=${LOWSTAND_PG_FSYNC:-on}" >/dev/null
    for _ in $(seq 1 60); do is_ready && break; sleep 0.5; done
    is_ready || { echo "[db] PostgreSQL did not start; see $DATA/server.log" >&2; tail -n 20 "$DATA/server.log" >&2 || true; exit 1; }
  fi
  # The application's role and database (idempotent).
  admin_psql -d postgres <<SQL
SELECT 'CREATE ROLE "$LOWSTAND_DB_USER" LOGIN CREATEDB PASSWORD ''$LOWSTAND_DB_PASS'''
 WHERE NOT EXISTS (SELECT FROM pg_roles WHERE rolname = '$LOWSTAND_DB_USER') \gexec
SELECT 'CREATE DATABASE "$LOWSTAND_DB_NAME" OWNER "$LOWSTAND_DB_USER"'
 WHERE NOT EXISTS (SELECT FROM pg_database WHERE datname = '$LOWSTAND_DB_NAME') \gexec
SQL
  echo "[db] PostgreSQL ready on 127.0.0.1:$LOWSTAND_PG_PORT (data: $DATA)"
  ;;
stop)
  if [ -s "$DATA/postmaster.pid" ]; then as_owner "$pgbin/pg_ctl" -D "$DATA" -m fast -w stop >/dev/null && echo "[db] stopped"; else echo "[db] not running"; fi
  ;;
status)
  if is_ready; then echo "[db] running on 127.0.0.1:$LOWSTAND_PG_PORT (data: $DATA)"; else echo "[db] not running"; exit 3; fi
  ;;
psql)
  admin_psql "$@"
  ;;
*)
  echo "usage: scripts/db.sh start|stop|status|psql" >&2; exit 2 ;;
esac
