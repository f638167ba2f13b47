#!/usr/bin/env bash
# Render a holdfast report headless to a PNG, for a person to look at.
# The automated check is `a_headless_browser_renders_the_page_without_errors`
# in tests/cli/report.rs (run by `cargo test --test cli report`); this script
# uses the same chromium flags.
#
# Usage: tests/browser/screenshot.sh REPORT.html OUT.png [WIDTH,HEIGHT]
# Needs Debian's chromium (apt-get install -y chromium).
set -euo pipefail
page=${1:?usage: screenshot.sh REPORT.html OUT.png [WIDTH,HEIGHT]}
png=${2:?usage: screenshot.sh REPORT.html OUT.png [WIDTH,HEIGHT]}
size=${3:-1200,3000}
browser=$(command -v chromium || command -v chromium-browser || true)
if [ -z "$browser" ]; then
  echo "skipped: no chromium on PATH (apt-get install -y chromium)" >&2
  exit 0
fi
profile=$(mktemp -d)
trap 'rm -rf "$profile"' EXIT
"$browser" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
  --disable-background-networking --disable-component-update --disable-sync \
  --user-data-dir="$profile" --screenshot="$png" --window-size="$size" \
  "file://$(realpath "$page")" 2>/dev/null
echo "wrote $png"
