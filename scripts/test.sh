#!/usr/bin/env bash
# npm test: set up what is missing (Debian packages, npm ci, PostgreSQL on loopback), make a fresh test
# database, migrate it, type-check, build, then run every test layer and end with a plain
# "N passed, N failed" line. Extra arguments go to vitest (e.g. `npm test -- --project unit`).
set -uo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
cd "$root"
export NUXT_TELEMETRY_DISABLED=1 CI="${CI:-}"
started=$(date +%s)

bash scripts/setup.sh --browser || { echo "0 passed, 1 failed"; exit 1; }

# The test cluster may skip fsync: its data is thrown away after the run.
db_was_running=0
bash scripts/db.sh status >/dev/null 2>&1 && db_was_running=1
ISTHMUS_PG_FSYNC=off ISTHMUS_PG_SYNC=off ISTHMUS_DB=isthmus_test bash scripts/db.sh start || { echo "0 passed, 1 failed"; exit 1; }
bash scripts/db.sh createdb isthmus_test --fresh >/dev/null
stop_db() { [ "$db_was_running" = 1 ] || bash scripts/db.sh stop; }
trap stop_db EXIT

export TEST_DATABASE_URL="postgres://postgres@127.0.0.1:${PGPORT_LOCAL:-54329}/isthmus_test"
DATABASE_URL="$TEST_DATABASE_URL" npx tsx db/migrate.ts >/dev/null || { echo "migrations failed"; echo "0 passed, 1 failed"; exit 1; }

checks_failed=0
echo "[test] typecheck"
if ! npx nuxt typecheck >/tmp/isthmus-typecheck.log 2>&1; then
  cat /tmp/isthmus-typecheck.log | tail -60
  echo "[test] typecheck FAILED"
  checks_failed=$((checks_failed + 1))
fi

echo "[test] build"
if ! npx nuxt build >/tmp/isthmus-build.log 2>&1; then
  tail -60 /tmp/isthmus-build.log
  echo "[test] build FAILED"
  echo "0 passed, $((checks_failed + 1)) failed"
  exit 1
fi

report="$root/.cache/vitest-report.json"
mkdir -p "$root/.cache"
rm -f "$report"
npx vitest run --reporter=default --reporter=json --outputFile.json="$report" "$@"
vitest_rc=$?

node -e '
  const fs = require("fs");
  const [file, extraFailed, secs] = process.argv.slice(1);
  let passed = 0, failed = Number(extraFailed), skipped = 0;
  try {
    const r = JSON.parse(fs.readFileSync(file, "utf8"));
    passed = r.numPassedTests; failed += r.numFailedTests; skipped = r.numPendingTests + (r.numTodoTests || 0);
    // a file that failed to load has no tests but is still a failure
    failed += r.testResults.filter((t) => t.status === "failed" && t.assertionResults.length === 0).length;
  } catch { failed += 1; }
  console.log(`[test] finished in ${secs} s`);
  console.log(`${passed} passed, ${failed} failed` + (skipped ? `, ${skipped} skipped` : ""));
' "$report" "$checks_failed" "$(( $(date +%s) - started ))"

[ "$vitest_rc" = 0 ] && [ "$checks_failed" = 0 ]
