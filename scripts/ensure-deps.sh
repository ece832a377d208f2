#!/usr/bin/env bash
# Installs the npm dependencies when they are missing or older than the lock file.
# Called by `npm start` and `npm test` so a fresh clone needs nothing but Node.js.
set -euo pipefail
cd "$(dirname "$0")/.."
marker=node_modules/.package-lock.json
if [ ! -f "$marker" ] || [ package-lock.json -nt "$marker" ]; then
  echo "ebbgate: installing npm dependencies (npm ci)…"
  npm ci --no-audit --no-fund
fi
