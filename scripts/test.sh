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

mkdir -p "$root/.cache"
rm -f "$root"/.cache/vitest-*.json
if [ "$#" -gt 0 ]; then
  npx vitest run --reporter=default --reporter=json --outputFile.json="$root/.cache/vitest-1.json" "$@"
  vitest_rc=$?
else
  # every layer but the fault tests at once; then the fault tests alone (they restart servers and PostgreSQL)
  npx vitest run --project unit --project nuxt --project db --project api --project browser \
    --reporter=default --reporter=json --outputFile.json="$root/.cache/vitest-1.json"
  vitest_rc=$?
  if ls tests/faults/*.test.ts >/dev/null 2>&1; then
    npx vitest run --project faults --reporter=default --reporter=json --outputFile.json="$root/.cache/vitest-2.json"
    rc2=$?
    [ "$rc2" = 0 ] || vitest_rc=$rc2
  fi
  if [ -z "${ISTHMUS_SKIP_BENCH_SMOKE:-}" ] && [ -f bench/run.sh ]; then
    echo "[test] benchmark smoke run"
    if bash bench/run.sh --smoke >/tmp/isthmus-bench-smoke.log 2>&1; then
      tail -1 /tmp/isthmus-bench-smoke.log
    else
      tail -40 /tmp/isthmus-bench-smoke.log
      echo "[test] benchmark smoke run FAILED"
      checks_failed=$((checks_failed + 1))
    fi
  fi
fi

node -e '
  const fs = require("fs");
  const [dir, extraFailed, secs] = process.argv.slice(1);
  let passed = 0, failed = Number(extraFailed), skipped = 0;
  const files = fs.readdirSync(dir).filter((f) => /^vitest-\d+\.json$/.test(f));
  if (!files.length) failed += 1;
  for (const f of files) {
    try {
      const r = JSON.parse(fs.readFileSync(dir + "/" + f, "utf8"));
      passed += r.numPassedTests; failed += r.numFailedTests; skipped += r.numPendingTests + (r.numTodoTests || 0);
      // a file that failed to load has no tests but is still a failure
      failed += r.testResults.filter((t) => t.status === "failed" && t.assertionResults.length === 0).length;
    } catch { failed += 1; }
  }
  console.log(`[test] finished in ${secs} s`);
  console.log(`${passed} passed, ${failed} failed` + (skipped ? `, ${skipped} skipped` : ""));
' "$root/.cache" "$checks_failed" "$(( $(date +%s) - started ))"

[ "$vitest_rc" = 0 ] && [ "$checks_failed" = 0 ]
