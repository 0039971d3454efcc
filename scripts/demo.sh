#!/usr/bin/env bash
# Builds and starts Kickdrift on the embedded defaults: PGlite under ./data, the local mail fake,
# and the demo studio (its sign-ins are printed when the server starts).
set -euo pipefail
cd "$(dirname "$0")/.."
[ -d node_modules ] || npm ci
npm run build
export KICKDRIFT_DEMO=1
export PORT="${PORT:-3000}"
export NEXTAUTH_URL="${NEXTAUTH_URL:-http://localhost:$PORT}"
echo "Kickdrift is starting on $NEXTAUTH_URL"
exec npx next start -p "$PORT"
