#!/usr/bin/env bash
# The benchmark (npm run bench). Builds when needed, starts the local PostgreSQL, generates the bench
# database once, runs every part and writes bench/REPORT.md + bench/report.json.
#   bash bench/run.sh                 full run (isthmus_bench, 500k cases / 2M items)
#   bash bench/run.sh --regenerate    make the bench database again first
#   bash bench/run.sh --smoke         tiny data and short runs (CI): ends with "bench smoke: ok"
# Other options go to bench/run.ts (--seconds N, --scale N, --seed S).
set -euo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
cd "$root"
export NUXT_TELEMETRY_DISABLED=1

fail() { echo "bench: $*" >&2; exit 1; }

command -v node >/dev/null || fail "node is missing: install Node.js 20 or 22 (bash scripts/setup.sh)"
[ -x node_modules/.bin/tsx ] && [ -d node_modules/autocannon ] && [ -d node_modules/playwright-core ] \
  || fail "node_modules is incomplete (tsx, autocannon, playwright-core): run npm ci"
chromium="${CHROMIUM_PATH:-/usr/bin/chromium}"
[ -x "$chromium" ] || fail "chromium not found at $chromium: run bash scripts/setup.sh --browser (or set CHROMIUM_PATH)"

# PostgreSQL on 127.0.0.1 (installs Debian's package when missing); pgbench comes with it
bash scripts/db.sh start >/dev/null || fail "the local PostgreSQL did not start (bash scripts/db.sh start)"
ls /usr/lib/postgresql/*/bin/pgbench >/dev/null 2>&1 || [ -n "${PG_BIN:-}" ] || fail "pgbench not found under /usr/lib/postgresql/*/bin"

# Someone else's build in this checkout: wait for it (bounded) rather than build over it.
for _ in $(seq 1 120); do
  busy=0
  for pid in $(pgrep -f "nuxt.*build" 2>/dev/null || true); do
    [ "$(readlink "/proc/$pid/cwd" 2>/dev/null)" = "$root" ] && busy=1
  done
  [ "$busy" = 0 ] && break
  [ "${waited:-0}" = 0 ] && echo "[bench] a build is running in $root; waiting for it" && waited=1
  sleep 5
done

# The built server, made again when a source is newer than the build: the figures are for this code.
stamp=.output/nitro.json
if [ ! -f .output/server/index.mjs ] || [ ! -f "$stamp" ] \
   || [ -n "$(find app server shared db nuxt.config.ts package.json package-lock.json -newer "$stamp" -type f -print -quit 2>/dev/null)" ]; then
  echo "[bench] building (npx nuxt build)…"
  mkdir -p bench/.cache
  if ! npx nuxt build >bench/.cache/build.log 2>&1; then
    tail -40 bench/.cache/build.log >&2
    fail "the build failed (full log: bench/.cache/build.log)"
  fi
fi

# Benchmark a private copy, so a rebuild during the run (another session, an editor) cannot swap files
# under the running server. The stamp must not change while copying, or the copy is mixed.
copy=bench/.cache/output
mkdir -p bench/.cache
for try in 1 2 3; do
  before="$(stat -c %Y "$stamp" 2>/dev/null || echo none)"
  rm -rf "$copy" && cp -a .output "$copy" 2>/dev/null || true
  after="$(stat -c %Y "$stamp" 2>/dev/null || echo none)"
  [ "$before" != none ] && [ "$before" = "$after" ] && [ -f "$copy/server/index.mjs" ] && break
  [ "$try" = 3 ] && fail "could not take a stable copy of .output (it keeps changing: another build?)"
  sleep 10
done
export BENCH_OUTPUT="$root/$copy"

exec npx tsx bench/run.ts "$@"
