#!/usr/bin/env bash
# Installs what is missing on a fresh Debian machine with Node 20: npm packages from the lockfile and,
# when asked, Debian packages (chromium and poppler-utils for the browser and PDF tests).
#   scripts/setup.sh [--browser]
set -euo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
cd "$root"

log() { echo "[setup] $*" >&2; }

apt_install() {
  local missing=()
  for pkg in "$@"; do dpkg -s "$pkg" >/dev/null 2>&1 || missing+=("$pkg"); done
  [ ${#missing[@]} -eq 0 ] && return 0
  log "installing Debian packages: ${missing[*]}"
  local sudo=""
  [ "$(id -u)" != 0 ] && sudo="sudo"
  export DEBIAN_FRONTEND=noninteractive
  $sudo apt-get update -qq >/dev/null
  $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
}

if [ "${1:-}" = "--browser" ]; then
  apt_install chromium poppler-utils fonts-dejavu-core
fi

# npm ci when node_modules is missing or older than the lockfile.
if [ ! -d node_modules ] || [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
  log "npm ci"
  NUXT_TELEMETRY_DISABLED=1 npm ci --no-audit --no-fund --loglevel=error
fi
