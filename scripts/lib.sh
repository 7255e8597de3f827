#!/usr/bin/env bash
# Shared steps of scripts/start.sh and scripts/test.sh.

# Install npm dependencies from the lockfile when node_modules is missing or older than the lockfile. No package's
# install script runs: the one that would matter (skia-canvas, optional, unused) downloads from outside the registry,
# and esbuild's only checks the binary its platform package already holds (tests/scripts/supplyChain.test.ts).
ensure_node_modules() {
  if [ ! -d node_modules ] || [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
    echo "[setup] installing npm dependencies (npm ci --ignore-scripts)"
    npm ci --ignore-scripts --no-audit --no-fund
  fi
}

# Debian's Chromium for browser tests and screenshots (never a downloaded browser).
ensure_chromium() {
  if [ ! -x /usr/bin/chromium ]; then
    if [ "$(id -u)" = 0 ]; then
      echo "[setup] installing Debian's chromium for the browser tests"
      apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null
    else
      echo "[setup] /usr/bin/chromium missing: browser tests will be skipped (sudo apt-get install chromium)" >&2
    fi
  fi
}
