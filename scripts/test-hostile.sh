#!/usr/bin/env bash
# The whole suite (`npm test`) under the two conditions that broke main once: another date, and a
# loaded machine. Not part of CI (it runs the suite twice, ~30-40 minutes on two cores).
#   bash scripts/test-hostile.sh            both runs, one after the other
#   bash scripts/test-hostile.sh date       only the clock shifted (+400 days by default)
#   bash scripts/test-hostile.sh load       only with a busy loop holding every core
# KICKDRIFT_HOSTILE_SHIFT sets the shift in faketime's syntax (e.g. '+3y', '-30d', '@2031-02-28 23:59:50').
set -euo pipefail
cd "$(dirname "$0")/.."
which="${1:-both}"
shift_by="${KICKDRIFT_HOSTILE_SHIFT:-+400d}"

if ! command -v faketime >/dev/null; then
  if [ "$(id -u)" = "0" ] && command -v apt-get >/dev/null; then
    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq faketime >/dev/null
  else
    echo "The date run needs Debian's faketime: run 'sudo apt-get install -y faketime' and try again." >&2
    exit 1
  fi
fi

run_date() {
  echo "==> npm test with every process's clock shifted by ${shift_by} (faketime; the throw-away PostgreSQL and chromium inherit it)"
  # faketime preloads libfaketime into npm and everything it starts: wall-clock dates (Date, now(),
  # cookies, tokens) are shifted; the monotonic clock moves by the same constant offset, so timers
  # keep their length. (FAKETIME_DONT_FAKE_MONOTONIC=1 makes Debian's chromium hang at launch.)
  # File times stay on the kernel's real clock: code that compares them with the process clock must
  # read the file system's own "now" (lib/queue/result-store.ts fileSystemNowMs).
  faketime -f "${shift_by}" npm test
}

run_load() {
  local cores pids=()
  cores="$(nproc)"
  echo "==> npm test with ${cores} busy loops holding every core for the whole run"
  for _ in $(seq "${cores}"); do
    node -e 'for (;;) {}' &
    pids+=("$!")
  done
  trap 'kill "${pids[@]}" 2>/dev/null || true' EXIT
  npm test
  kill "${pids[@]}" 2>/dev/null || true
  trap - EXIT
}

case "${which}" in
  date) run_date ;;
  load) run_load ;;
  both) run_date; run_load ;;
  *) echo "usage: bash scripts/test-hostile.sh [date|load|both]" >&2; exit 2 ;;
esac
