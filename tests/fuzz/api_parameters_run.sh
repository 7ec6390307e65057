#!/bin/sh
# tests/fuzz/api_parameters_run.sh [seconds] [extra libFuzzer flags...]
# Builds the API parameter fuzzer (tests/fuzz/api_parameters_fuzz.cpp) with clang++ (libFuzzer,
# AddressSanitizer, UBSan), seeds it with query strings of the API's documented forms and the
# times of the RFC 3339 tests, and runs it for `seconds` (default 60); ctest entry fuzz-api
# runs it 30 s. Exits 77 (skipped) without clang++. The binary is rebuilt only when a source is
# newer than it.
# Needs: clang, libcpp-httplib-dev, nlohmann-json3-dev, libhowardhinnant-date-dev, libssl-dev.
# Output: build-fuzz/ under the repo root (binary, api-corpus, crash-* files).
set -eu
seconds=${1:-60}
[ $# -gt 0 ] && shift
root=$(cd "$(dirname "$0")/../.." && pwd)
out=${FUZZ_OUT:-$root/build-fuzz}
cxx=${CXX_FUZZ:-clang++}
command -v "$cxx" > /dev/null || { echo "fuzz: $cxx not found: skipped"; exit 77; }
mkdir -p "$out/api-corpus" "$out/api-seeds"

sources="$root/api/query_parameters.cpp $root/api/rfc3339.cpp $root/api/energy_series.cpp \
  $root/api/http_server.cpp $root/api/connection_pool.cpp $root/api/content_coding.cpp \
  $root/api/problem.cpp $root/config/status.cpp \
  $root/config/listen_address.cpp \
  $root/daemon/metering/local_time.cpp $root/daemon/metering/bucket.cpp \
  $root/daemon/metering/energy.cpp $root/tests/fuzz/api_parameters_fuzz.cpp"
binary="$out/api_parameters_fuzz"
# shellcheck disable=SC2086
if [ ! -x "$binary" ] || [ -n "$(find $sources "$root/api" "$root/daemon/metering" -newer "$binary" -name '*.[ch]*' | head -n 1)" ]; then
  # shellcheck disable=SC2086
  "$cxx" -std=c++20 -g -O1 -fsanitize=fuzzer,address,undefined -fno-sanitize-recover=undefined \
    -DHAS_STRING_VIEW=1 -DONLY_C_LOCALE=1 -DUSE_OS_TZDB=1 \
    $(pkg-config --cflags cpp-httplib) -I"$root" $sources \
    $(pkg-config --libs cpp-httplib) -lssl -lcrypto -ldate-tz -lpthread -o "$binary"
fi

# Seeds: the forms the API documents (DEVELOPERS.md, api/openapi.json), DST days, and the
# RFC 3339 strings the api tests use (each quoted time-like string).
n=0
for seed in \
  'from=2026-03-08&to=2026-03-09&step=hour' \
  'from=2026-03-08T00:00:00-06:00&to=2026-03-08T06:00:00-05:00&step=15m&format=csv' \
  'from=2026-11-01&to=2026-12-01&step=day&format=json' \
  'from=2025-01-01T00:00:00Z&to=2026-01-01T00:00:00Z&step=month' \
  'from=2026-04-05T01:30:00+10:30&to=2026-04-05T03:00:00+11:00&step=hour' \
  'from=2026-03-08t00:00:00.250z&to=2026-03-08&step=raw' \
  'after=41&wait=55&limit=100'; do
  n=$((n + 1))
  printf '%s' "$seed" > "$out/api-seeds/doc-$n"
done
grep -ho '"[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9][^"]*"' "$root"/tests/api/*.cpp | sort -u | \
  while read -r quoted; do
    n=$((n + 1))
    printf '%s' "$quoted" | tr -d '"' > "$out/api-seeds/test-$n"
  done

cd "$out"
./api_parameters_fuzz -max_total_time="$seconds" -max_len=512 -timeout=10 -rss_limit_mb=1024 \
  -print_final_stats=1 -error_exitcode=1 -artifact_prefix=api- "$@" api-corpus api-seeds
