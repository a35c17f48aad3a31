#!/usr/bin/env bash
# Sets up and runs Railwise with the demo shop: install, build, migrate + seed (at start-up), serve.
set -euo pipefail
cd "$(dirname "$0")/.."
npm ci --no-audit --no-fund
npm run build
export SEED_DEMO=1
export PORT="${PORT:-3000}"
exec node server.mjs
