#!/usr/bin/env bash
# npm start: install what is missing, start the local services, migrate, seed the demo lab, build and serve.
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/lib.sh
ensure_node_modules
exec node_modules/.bin/tsx scripts/start.ts
