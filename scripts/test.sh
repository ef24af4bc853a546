#!/usr/bin/env bash
# The test command: installs what the tests need, builds the app once, runs every suite.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh --with-browser
npx svelte-kit sync
npm run build
npx vitest run "$@"
