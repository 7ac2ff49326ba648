#!/usr/bin/env bash
# Restore a backup made by scripts/backup.sh into a new database.
#   scripts/restore.sh FILE TARGET_DB [--replace]
#   TARGET_DB      a database name on the server of DATABASE_URL (default the local development server,
#                  postgres://postgres@127.0.0.1:${PGPORT_LOCAL:-54329}/), or a full postgres:// URL
#   --replace      drop TARGET_DB first if it exists; without it an existing database is never touched
# The database is created empty, then filled in one transaction (pg_restore --single-transaction
# --exit-on-error); a restore that fails drops the database it created, so it never leaves half a one
# that could be mistaken for a whole one. Objects are owned
# by the user who restores (--no-owner), so a backup from another server restores here as well.
# Point the app at it with DATABASE_URL=<server>/TARGET_DB once the restore says it is done.
set -euo pipefail

log() { echo "[restore] $*" >&2; }
usage() { echo "usage: $0 FILE TARGET_DB [--replace]" >&2; exit 2; }

[ $# -ge 2 ] || usage
file="$1"; target="$2"; replace="${3:-}"
[ -z "$replace" ] || [ "$replace" = "--replace" ] || usage
[ -r "$file" ] || { log "cannot read $file"; exit 1; }

find_bindir() {
  local d
  d="$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | while read -r b; do [ -x "$b/pg_restore" ] && echo "$b"; done | tail -1)"
  if [ -n "$d" ]; then echo "$d"; return 0; fi
  command -v pg_restore >/dev/null 2>&1 && { dirname "$(command -v pg_restore)"; return 0; }
  return 1
}
bindir="$(find_bindir)" || { log "pg_restore not found: install PostgreSQL's client (apt-get install postgresql-client)"; exit 1; }

# Split "postgres://user@host:port/db?options" into the server part, the database and the options.
if [[ "$target" == postgres://* || "$target" == postgresql://* ]]; then
  url="$target"
else
  base="${DATABASE_URL:-postgres://postgres@127.0.0.1:${PGPORT_LOCAL:-54329}/isthmus}"
  query=""; [[ "$base" == *\?* ]] && query="?${base#*\?}"
  noquery="${base%%\?*}"
  url="${noquery%/*}/$target$query"
fi
query=""; [[ "$url" == *\?* ]] && query="?${url#*\?}"
noquery="${url%%\?*}"
name="${noquery##*/}"
admin="${noquery%/*}/postgres$query" # CREATE and DROP DATABASE run from the maintenance database

# the name goes into SQL below: letters, digits, _ and - only
[[ "$name" =~ ^[A-Za-z0-9_-]{1,63}$ ]] || { log "not a database name I will create: '$name'"; exit 1; }

psql() { "$bindir/psql" -X -q -v ON_ERROR_STOP=1 "$@"; }
exists="$(psql -d "$admin" -tAc "SELECT 1 FROM pg_database WHERE datname = '$name'")"
if [ "$exists" = 1 ]; then
  if [ "$replace" != "--replace" ]; then
    log "database $name already exists; not touching it (add --replace to drop it and restore into a new one)"
    exit 1
  fi
  log "dropping the existing database $name"
  psql -d "$admin" -c "DROP DATABASE \"$name\" WITH (FORCE)"
fi
psql -d "$admin" -c "CREATE DATABASE \"$name\""
trap 'log "restore failed; dropping $name"; psql -d "$admin" -c "DROP DATABASE IF EXISTS \"$name\" WITH (FORCE)" || true' EXIT

"$bindir/pg_restore" --no-owner --single-transaction --exit-on-error --dbname="$url" "$file"
trap - EXIT
log "restored $file into $name"
