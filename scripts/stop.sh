#!/usr/bin/env bash
# `npm run stop`: stops, by PID, what `npm start` started.
set -euo pipefail
cd "$(dirname "$0")/.."
exec node --import tsx scripts/commands.ts stop
