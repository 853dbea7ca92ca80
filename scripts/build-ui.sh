#!/usr/bin/env bash
# Builds the web UI into ui/dist (the folder the desktop app embeds), from
# ui/package-lock.json. With --test, also runs the UI unit tests (vitest).
# Before the UI project exists (no ui/package.json), ui/index.html is copied
# as a placeholder so that the app still compiles.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/common.sh"
cd "$root/ui"

if [ ! -f package.json ]; then
  say "no ui/package.json yet: placeholder ui/dist"
  mkdir -p dist
  cp index.html dist/index.html
  exit 0
fi
say "npm ci (ui)"
npm ci --no-audit --no-fund
say "npm run build (ui)"
npm run build
if [ "${1:-}" = "--test" ]; then
  say "vitest (ui)"
  npx vitest run
fi
