#!/usr/bin/env bash
# `npm run dev`: the demo services and worker, with `next dev` on 127.0.0.1:3000.
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/lib/ensure.sh
ensure_postgres
ensure_node_modules
ensure_native_engine
export NEXT_TELEMETRY_DISABLED=1
exec node --import tsx scripts/commands.ts dev
