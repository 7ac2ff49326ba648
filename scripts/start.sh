#!/usr/bin/env bash
# npm start: install what is missing, start PostgreSQL, migrate, load the demo scenario, build, serve on
# http://127.0.0.1:${PORT:-3000} with a local mail catcher. Ctrl-C stops the app, the mail catcher and the database.
set -euo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
cd "$root"
export NUXT_TELEMETRY_DISABLED=1

bash scripts/setup.sh
bash scripts/db.sh start
export DATABASE_URL="${DATABASE_URL:-postgres://postgres@127.0.0.1:${PGPORT_LOCAL:-54329}/isthmus}"
npx tsx db/migrate.ts
npx tsx db/seed-demo.ts

# The sealed-cookie secret: kept in .data so sessions survive a restart; never committed.
mkdir -p .data
if [ -z "${NUXT_SESSION_PASSWORD:-}" ]; then
  [ -f .data/session-secret ] || node -e "console.log(require('crypto').randomBytes(32).toString('hex'))" > .data/session-secret
  export NUXT_SESSION_PASSWORD="$(cat .data/session-secret)"
fi

# Rebuild only when the sources changed since the last build.
stamp=".output/.source-hash"
hash="$(git ls-files -s app server shared public db nuxt.config.ts tailwind.config.ts package-lock.json 2>/dev/null | sha1sum | cut -c1-40)$(git diff --stat 2>/dev/null | sha1sum | cut -c1-8)"
if [ ! -f .output/server/index.mjs ] || [ "$(cat "$stamp" 2>/dev/null)" != "$hash" ]; then
  echo "[start] building"
  npx nuxt build >/tmp/isthmus-build.log 2>&1 || { tail -40 /tmp/isthmus-build.log; exit 1; }
  echo "$hash" > "$stamp"
fi

pids=()
cleanup() {
  trap - INT TERM EXIT
  for p in "${pids[@]}"; do kill "$p" 2>/dev/null || true; done
  wait 2>/dev/null || true
  bash scripts/db.sh stop
}
trap cleanup INT TERM EXIT

# Local SMTP catcher with a web mailbox on 127.0.0.1:1080 (SMTP on 1025) when it is installed.
if [ -x node_modules/.bin/maildev ] && [ -z "${SMTP_URL:-}" ]; then
  node_modules/.bin/maildev --ip 127.0.0.1 --web-ip 127.0.0.1 --smtp 1025 --web 1080 --silent >/dev/null 2>&1 &
  pids+=($!)
  export SMTP_URL="smtp://127.0.0.1:1025"
  echo "[start] mailbox: http://127.0.0.1:1080"
fi

export HOST="${HOST:-127.0.0.1}" PORT="${PORT:-3000}"
echo "[start] Isthmus on http://$HOST:$PORT  (demo sign-ins: see README; password isthmus-demo)"
node .output/server/index.mjs &
pids+=($!)
wait "${pids[-1]}"
