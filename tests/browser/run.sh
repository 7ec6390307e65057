#!/usr/bin/env bash
# tests/browser/run.sh BUILD_DIR AMPLEDGER: the dashboard end to end in headless Debian
# chromium, driven by playwright-core (pinned in package.json and package-lock.json, installed
# with `npm ci` into BUILD_DIR/browser). Exit 77 (skipped) when node, npm or chromium is missing.
# Leaves screenshots in BUILD_DIR/browser/*.png.
set -euo pipefail

here=$(cd "$(dirname "$0")" && pwd)
build_dir=$1
ampledger=$2
chromium=${CHROMIUM:-/usr/bin/chromium}

for tool in node npm; do
  command -v "$tool" > /dev/null || { echo "browser test skipped: $tool is not installed"; exit 77; }
done
[ -x "$chromium" ] || { echo "browser test skipped: no $chromium (apt-get install chromium)"; exit 77; }

work="$build_dir/browser"
mkdir -p "$work"
# npm ci only when the lock file changed since the last install.
if ! cmp -s "$here/package-lock.json" "$work/package-lock.json" \
    || [ ! -d "$work/node_modules/playwright-core" ]; then
  cp "$here/package.json" "$here/package-lock.json" "$work/"
  (cd "$work" && npm ci --no-audit --no-fund --loglevel=error)
fi

exec node "$here/dashboard_test.mjs" "$work" "$ampledger" "$chromium"
