#!/usr/bin/env bash
# deploy/setup.sh: install what is missing, build, then run the demo or the test suite.
#   deploy/setup.sh demo    build and run `ampledger demo`
#   deploy/setup.sh test    build and run the whole test suite (what CI runs)
#   deploy/setup.sh build   build only
# Debian/Ubuntu only. Installs packages with apt-get (through sudo when not root).
set -euo pipefail

cd "$(dirname "$0")/.."
action=${1:-build}
build_dir=${AMPLEDGER_BUILD_DIR:-build}

packages=(
  build-essential cmake pkg-config git ca-certificates tzdata
  libsqlite3-dev sqlite3 nlohmann-json3-dev libspdlog-dev libcpp-httplib-dev doctest-dev
  libtomlplusplus-dev libhowardhinnant-date-dev libssl-dev libcli11-dev
  libxml2-dev libmosquitto-dev
)
if [ "$action" = test ]; then
  # Tools the test suite drives: clang and xxd for the fuzz target; systemd-analyze for the units;
  # dpkg-dev and file (CPack's shared-library dependencies) and fakeroot (dpkg as non-root)
  # for the .deb test; promtool (prometheus) for /metrics; npm for the OpenAPI validator
  # (Node.js builds that ship their own npm conflict with Debian's npm package); openssl for
  # the TLS test's certificate.
  packages+=(clang xxd systemd dpkg-dev file fakeroot prometheus openssl)
  # The dashboard's browser test: Debian's chromium, driven by playwright-core from npm.
  packages+=(chromium)
  # xmllint checks the ESPI (Green Button) exports from outside.
  packages+=(libxml2-utils)
  # A real MQTT broker for the publisher's tests (started by them on 127.0.0.1).
  packages+=(mosquitto)
  # node and npm from Debian unless the machine already has them (e.g. from another source).
  command -v node > /dev/null || packages+=(nodejs)
  command -v npm > /dev/null || packages+=(npm)
fi

missing=()
for package in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$package" 2>/dev/null | grep -q "install ok installed" \
    || missing+=("$package")
done
if [ ${#missing[@]} -gt 0 ]; then
  sudo=""
  [ "$(id -u)" -eq 0 ] || sudo="sudo"
  echo "setup: installing ${missing[*]}"
  $sudo apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}"
fi

cmake -S . -B "$build_dir" -DCMAKE_BUILD_TYPE=RelWithDebInfo > /dev/null
cmake --build "$build_dir" -j "$(nproc)"

case "$action" in
  demo) exec "$build_dir/ampledger" demo ;;
  test) cd "$build_dir" && exec ctest --output-on-failure --timeout 600 ;;
  build) ;;
  *) echo "usage: deploy/setup.sh demo|test|build" >&2; exit 2 ;;
esac
