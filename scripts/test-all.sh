#!/usr/bin/env bash
# Every test Kickdrift has, in the order a reviewer would want them to fail:
# lint, typecheck, unit + integration (Vitest), production build, browser tests (Playwright + Debian chromium).
set -euo pipefail
cd "$(dirname "$0")/.."
mkdir -p .build

step() { printf '\n==> %s\n' "$*"; }

# The browser tests (Playwright, and the map's canvas test under Vitest) drive Debian's chromium.
if [ ! -x /usr/bin/chromium ]; then
  if [ "$(id -u)" = "0" ] && command -v apt-get >/dev/null; then
    echo "Debian chromium is missing: installing it (apt-get install -y chromium)"
    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq chromium >/dev/null
  else
    echo "Browser tests need Debian's chromium at /usr/bin/chromium: run 'sudo apt-get install -y chromium' and try again." >&2
    exit 1
  fi
fi

# The scale-out tests (tests/integration/scaleout) run worker processes against a real PostgreSQL:
# a throw-away cluster of Debian's postgresql on 127.0.0.1 and a free port, stopped on exit.
if [ -z "${KICKDRIFT_TEST_PG_URL:-}" ]; then
  if ! ls /usr/lib/postgresql/*/bin/initdb >/dev/null 2>&1; then
    if [ "$(id -u)" = "0" ] && command -v apt-get >/dev/null; then
      echo "Debian postgresql is missing: installing it (apt-get install -y postgresql)"
      apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql >/dev/null
    else
      echo "The scale-out tests need Debian's postgresql: run 'sudo apt-get install -y postgresql' and try again." >&2
      exit 1
    fi
  fi
  step "throw-away PostgreSQL for the scale-out tests"
  pg_env="$(npx tsx scripts/temp-postgres.ts start)"
  eval "$pg_env"
  export KICKDRIFT_TEST_PG_URL KICKDRIFT_TEST_PG_DIR
  trap 'npx tsx scripts/temp-postgres.ts stop "$KICKDRIFT_TEST_PG_DIR"' EXIT
  echo "PostgreSQL at $KICKDRIFT_TEST_PG_URL"
fi

step "lint"
npx eslint .

step "typecheck"
npx tsc --noEmit

step "module layers and import circles (dependency-cruiser, rules in .dependency-cruiser.cjs)"
npm run --silent check:deps

step "unused files, exports and dependencies (knip, knip.json)"
npm run --silent check:unused

step "OpenAPI document: generated from the route schemas, linted by Redocly"
npx tsx --import ./scripts/server-only-hook.mjs scripts/openapi.ts .build/openapi.json
npx redocly lint .build/openapi.json

step "unit and integration tests"
npx vitest run --reporter=default --reporter=json --outputFile.json=.build/vitest.json

step "production build"
npm run build

# The build above, started as a demo instance, behind Stoplight Prism's validating proxy: every operation
# of the OpenAPI document driven with seeded valid, boundary and mutated requests by each kind of caller.
# Fails on any 5xx, any request left unanswered, any response that differs from the document.
step "API campaign through a validating proxy (Prism)"
npx tsx --import ./scripts/server-only-hook.mjs scripts/api-campaign.ts --requests "${KD_CAMPAIGN_REQUESTS:-5200}" --seed "${KD_CAMPAIGN_SEED:-17}"

step "browser tests"
PLAYWRIGHT_JSON_OUTPUT_NAME=.build/playwright.json npx playwright test --reporter=list,json

node scripts/test-summary.mjs .build/vitest.json .build/playwright.json
