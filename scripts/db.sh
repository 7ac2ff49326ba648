#!/usr/bin/env bash
# Local PostgreSQL on loopback for development and tests.
#   scripts/db.sh start        install (apt-get) if missing, init the cluster once, start it, create the databases
#   scripts/db.sh stop         stop it cleanly (fast shutdown: open transactions roll back)
#   scripts/db.sh status
#   scripts/db.sh createdb NAME [--fresh]
# Settings: PGPORT_LOCAL (default 54329). The cluster lives in .data/pg (git-ignored).
set -euo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
port="${PGPORT_LOCAL:-54329}"
cmd="${1:-start}"

log() { echo "[db] $*" >&2; }

find_bindir() {
  local d
  for d in /usr/lib/postgresql/*/bin; do
    [ -x "$d/initdb" ] && { echo "$d"; return 0; }
  done
  return 1
}

ensure_installed() {
  if ! bindir="$(find_bindir)"; then
    log "PostgreSQL not found; installing Debian's postgresql package"
    local sudo=""
    [ "$(id -u)" != 0 ] && sudo="sudo"
    $sudo env DEBIAN_FRONTEND=noninteractive apt-get update -qq >/dev/null
    $sudo env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql >/dev/null
    bindir="$(find_bindir)"
  fi
}

# The server must not run as root; when we are root, run it as the postgres user.
as_pg() {
  if [ "$(id -u)" = 0 ]; then runuser -u postgres -- "$@"; else "$@"; fi
}

# The postgres user must be able to enter every folder above the data folder. A checkout under a 0700
# home (e.g. /root) fails that test; then we keep the cluster outside the checkout and say so.
choose_datadir() {
  local wanted="$root/.data/pg"
  mkdir -p "$root/.data"
  if [ "$(id -u)" = 0 ] && ! runuser -u postgres -- test -x "$root/.data" 2>/dev/null; then
    local alt="/var/tmp/isthmus-pg-$(echo -n "$root" | md5sum | cut -c1-8)"
    log "the postgres user cannot enter $root (a parent folder is not searchable); using $alt instead"
    echo "$alt"
  else
    echo "$wanted"
  fi
}

datadir="$(choose_datadir)"
pgctl() { as_pg "$bindir/pg_ctl" -D "$datadir" "$@"; }
psql_local() { as_pg "$bindir/psql" -h 127.0.0.1 -p "$port" -U postgres -X -q -v ON_ERROR_STOP=1 "$@"; }

init_cluster() {
  if [ -f "$datadir/PG_VERSION" ]; then return 0; fi
  log "creating a cluster in $datadir"
  mkdir -p "$datadir"
  [ "$(id -u)" = 0 ] && chown postgres:postgres "$datadir"
  chmod 700 "$datadir"
  # trust on loopback only: this cluster is for one developer's machine or a CI run, never for patient data.
  as_pg "$bindir/initdb" -D "$datadir" -U postgres --auth=trust --encoding=UTF8 --locale=C.UTF-8 >/dev/null
  local sockdir="$datadir"
  # Unix socket paths are limited to 107 bytes; fall back to TCP only when the folder is too deep.
  if [ ${#sockdir} -gt 90 ]; then sockdir=""; fi
  cat >> "$datadir/postgresql.conf" <<CONF
listen_addresses = '127.0.0.1'
port = $port
unix_socket_directories = '$sockdir'
max_connections = 200
shared_buffers = 256MB
fsync = ${ISTHMUS_PG_FSYNC:-on}
synchronous_commit = ${ISTHMUS_PG_SYNC:-on}
log_min_messages = warning
CONF
}

start() {
  ensure_installed
  init_cluster
  if pgctl status >/dev/null 2>&1; then
    log "already running on 127.0.0.1:$port"
  else
    pgctl -l "$datadir/server.log" -w -t 60 -o "-p $port" start >/dev/null
    log "started on 127.0.0.1:$port"
  fi
  createdb_named "${ISTHMUS_DB:-isthmus}"
}

createdb_named() {
  local name="$1" fresh="${2:-}"
  if [ "$fresh" = "--fresh" ]; then
    psql_local -d postgres -c "DROP DATABASE IF EXISTS \"$name\" WITH (FORCE)"
  fi
  if ! psql_local -d postgres -tAc "SELECT 1 FROM pg_database WHERE datname='$name'" | grep -q 1; then
    psql_local -d postgres -c "CREATE DATABASE \"$name\""
    log "database $name created"
  fi
}

stop() {
  if bindir="$(find_bindir)" && [ -f "$datadir/PG_VERSION" ] && pgctl status >/dev/null 2>&1; then
    pgctl -m fast -w stop >/dev/null
    log "stopped"
  fi
}

case "$cmd" in
  start) start ;;
  stop) stop ;;
  restart) stop; start ;;
  status) ensure_installed; pgctl status ;;
  createdb) ensure_installed; createdb_named "$2" "${3:-}" ;;
  datadir) echo "$datadir" ;;
  psql) ensure_installed; shift; psql_local "$@" ;;
  *) echo "usage: $0 start|stop|restart|status|createdb NAME [--fresh]|psql ARGS" >&2; exit 2 ;;
esac
