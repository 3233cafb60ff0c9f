#!/usr/bin/env bash
# `npm start`: installs what is missing, starts PostgreSQL, s3rver and the mail sink on
# loopback, migrates, seeds the demo lab, builds and serves on 127.0.0.1:3000.
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/lib/ensure.sh
ensure_postgres
ensure_node_modules
ensure_native_engine
export NEXT_TELEMETRY_DISABLED=1
exec node --import tsx scripts/commands.ts start
