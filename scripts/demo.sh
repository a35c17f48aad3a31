#!/usr/bin/env bash
# Sets up and runs Railwise with the demo shop: install, build, migrate + seed (at start-up), serve.
set -euo pipefail
cd "$(dirname "$0")/.."
npm ci --no-audit --no-fund
npm run build
export SEED_DEMO=1
export PORT="${PORT:-3000}"
# A local demo over plain http: captured mail (readable at /dev/outbox) and cookies without Secure, on this
# machine only. Never use these settings for a shop's real server.
export HOST="${HOST:-127.0.0.1}"
export MAIL_CAPTURE=1
export SECURE_COOKIES=0
exec node server.mjs
