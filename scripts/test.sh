#!/usr/bin/env bash
# `npm test`: the same set-up as `npm start` on other ports with throwaway data, then
# every test (unit, reference, integration, end-to-end in Debian's chromium).
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/lib/ensure.sh
ensure_postgres always
ensure_test_tools
ensure_node_modules
ensure_native_engine
export NEXT_TELEMETRY_DISABLED=1
exec node --import tsx scripts/commands.ts test "$@"
