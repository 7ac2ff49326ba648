#!/usr/bin/env bash
# Back up the database to one file (pg_dump custom format: compressed, read by pg_restore).
#   scripts/backup.sh [FILE]
#   DATABASE_URL   the database to back up; default the local development database
#                  postgres://postgres@127.0.0.1:${PGPORT_LOCAL:-54329}/isthmus
#   FILE           default .data/backups/isthmus-YYYYMMDDTHHMMSSZ.dump (.data is git-ignored)
# The file is written beside FILE first and renamed only once pg_restore can read it back, so a failed
# run never leaves a file that looks whole. It is readable by its owner only: it holds patient data.
# Restore with scripts/restore.sh FILE TARGET_DB.
set -euo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
url="${DATABASE_URL:-postgres://postgres@127.0.0.1:${PGPORT_LOCAL:-54329}/isthmus}"
file="${1:-$root/.data/backups/isthmus-$(date -u +%Y%m%dT%H%M%SZ).dump}"

log() { echo "[backup] $*" >&2; }

# pg_dump must be at least as new as the server: take the newest installed (Debian keeps each major
# version in /usr/lib/postgresql/N/bin, as scripts/db.sh expects), else whatever is on PATH.
find_bindir() {
  local d
  d="$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | while read -r b; do [ -x "$b/pg_dump" ] && echo "$b"; done | tail -1)"
  if [ -n "$d" ]; then echo "$d"; return 0; fi
  command -v pg_dump >/dev/null 2>&1 && { dirname "$(command -v pg_dump)"; return 0; }
  return 1
}
bindir="$(find_bindir)" || { log "pg_dump not found: install PostgreSQL's client (apt-get install postgresql-client)"; exit 1; }

umask 077
mkdir -p "$(dirname "$file")"
partial="$file.partial"
trap 'rm -f "$partial"' EXIT

"$bindir/pg_dump" --format=custom --compress=6 --file="$partial" --dbname="$url"
# prove the archive is complete and readable before it takes the real name
"$bindir/pg_restore" --list "$partial" >/dev/null
mv -f "$partial" "$file"
trap - EXIT
log "wrote $file ($(du -h "$file" | cut -f1))"
echo "$file"
