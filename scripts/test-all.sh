#!/usr/bin/env bash
# The whole test suite, from a fresh Debian machine with Node 20 to a verdict:
# installs what the tests need (mosquitto, InfluxDB and Chromium from Debian's
# packages; the npm dependencies), builds, runs every test, and prints one
# closing line "tests: N passed, N failed[, N skipped]".
set -euo pipefail
cd "$(dirname "$0")/.."

log() { printf '[test-all] %s\n' "$*"; }

# 1. System packages the integration and browser tests start themselves.
need=()
[ -x /usr/sbin/mosquitto ] || need+=(mosquitto)
[ -x /usr/bin/influxd ] || need+=(influxdb)
[ -x /usr/bin/chromium ] || need+=(chromium)
if [ ${#need[@]} -gt 0 ]; then
  sudo=""
  [ "$(id -u)" = 0 ] || sudo="sudo"
  log "installing Debian packages: ${need[*]}"
  $sudo apt-get update -q
  DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -q "${need[@]}"
fi

# 2. npm dependencies, exactly as locked (better-sqlite3 compiles from source: ~100 s the first time).
if [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  log "installing npm dependencies (npm ci)"
  npm ci --no-audit --no-fund
fi

# 3. Build (TypeScript + dashboard bundle): the CLI, benchmarks and browser tests use dist/.
log "building"
npm run build --silent

# 4. Every test. The JSON report gives the closing line.
mkdir -p test-artifacts
status=0
npx vitest run --reporter=default --reporter=json --outputFile.json=test-artifacts/vitest-report.json || status=$?
if [ -f test-artifacts/vitest-report.json ]; then
  node -e '
    const r = require("./test-artifacts/vitest-report.json");
    const skipped = (r.numPendingTests ?? 0) + (r.numTodoTests ?? 0);
    console.log(`tests: ${r.numPassedTests} passed, ${r.numFailedTests} failed` + (skipped ? `, ${skipped} skipped` : ""));
  '
fi
exit $status
