#!/bin/sh
# tests/fuzz/config_run.sh [seconds] [extra libFuzzer flags...]
# Builds the config and tariff loader fuzzer (tests/fuzz/config_fuzz.cpp) with clang++
# (libFuzzer, AddressSanitizer, UBSan), linked with Debian's compiled toml++ as the daemon is,
# seeds it with every TOML file of the repo and the TOML texts of the config tests, and runs it
# for `seconds` (default 60). Not part of the CMake build; ctest runs it for 30 s as the entry
# fuzz-config (exit 77, skipped, without clang++). The binary is rebuilt only when a source is
# newer than it.
# Needs: clang, libtomlplusplus-dev, libhowardhinnant-date-dev (libdate-tz).
# Output: build-fuzz/ under the repo root (binary, config-corpus, crash-* files).
set -eu
seconds=${1:-60}
[ $# -gt 0 ] && shift
root=$(cd "$(dirname "$0")/../.." && pwd)
out=${FUZZ_OUT:-$root/build-fuzz}
cxx=${CXX_FUZZ:-clang++}
command -v "$cxx" > /dev/null || { echo "fuzz: $cxx not found: skipped"; exit 77; }
mkdir -p "$out/config-corpus" "$out/config-seeds"

sources="$root/config/*.cpp $root/daemon/metering/*.cpp $root/tests/fuzz/config_fuzz.cpp"
binary="$out/config_fuzz"
# shellcheck disable=SC2086
if [ ! -x "$binary" ] || [ -n "$(find $sources "$root/config" "$root/daemon/metering" -newer "$binary" -name '*.[ch]*' | head -n 1)" ]; then
  # shellcheck disable=SC2086
  "$cxx" -std=c++20 -g -O1 -fsanitize=fuzzer,address,undefined -fno-sanitize-recover=undefined \
    -DHAS_STRING_VIEW=1 -DONLY_C_LOCALE=1 -DUSE_OS_TZDB=1 $(pkg-config --cflags tomlplusplus) \
    -I"$root" $sources $(pkg-config --libs tomlplusplus) -ldate-tz -o "$binary"
fi
# Why not toml++ compiled in from its headers: built so, without NDEBUG its parser asserts on
# input it then reports as an error (a control character where a key begins), and with NDEBUG
# under clang those assertions become __builtin_assume, undefined behaviour on such input. The
# compiled library (g++, NDEBUG) reports the error, which tests/config/config_loader_test.cpp
# checks.

# Seeds: every TOML file of the repo (the example site, the tariff library, the packaged
# config), and each raw-string TOML text in the config tests and the alert tests.
for f in $(find "$root/config" "$root/deploy" -name '*.toml'); do
  cp "$f" "$out/config-seeds/$(echo "$f" | sed "s|$root/||; s|/|-|g")"
done
for f in "$root"/tests/config/*.cpp "$root"/tests/metering/alert_*_test.cpp \
         "$root"/tests/storage/alert_recorder_test.cpp; do
  awk -v prefix="$out/config-seeds/$(basename "$f" .cpp)" '
    /R"\(/ { inside = 1; n++; sub(/.*R"\(/, ""); }
    inside && /\)"/ { sub(/\)".*/, ""); print > (prefix "-" n ".toml"); inside = 0; next }
    inside { print > (prefix "-" n ".toml") }' "$f"
done

cd "$out"
./config_fuzz -max_total_time="$seconds" -max_len=8192 -timeout=10 -rss_limit_mb=1024 \
  -print_final_stats=1 -error_exitcode=1 -artifact_prefix=config- "$@" config-corpus config-seeds
