#!/bin/sh
# tests/fuzz/run.sh [seconds] [extra libFuzzer flags...]
# Builds the datagram fuzzer with clang++ (libFuzzer, AddressSanitizer, UBSan) from the ingest
# sources, seeds it from tests/reference/data/senml and cose plus a few packs of our own
# format, and runs it for `seconds` (default 60). Not part of the CMake build; ctest runs it for
# 45 s as the entry fuzz-datagram (exit 77, skipped, without clang++ or xxd).
# Needs: clang (Debian: apt-get install clang), libssl-dev, nlohmann-json3-dev, xxd.
# Output: build-fuzz/ under the repo root (binary, corpus, crash-* files).
set -eu
seconds=${1:-60}
[ $# -gt 0 ] && shift
root=$(cd "$(dirname "$0")/../.." && pwd)
out=${FUZZ_OUT:-$root/build-fuzz}
cxx=${CXX_FUZZ:-clang++}
for tool in "$cxx" xxd; do
  command -v "$tool" > /dev/null || { echo "fuzz: $tool not found: skipped"; exit 77; }
done
mkdir -p "$out/corpus" "$out/seeds"

# The decoder's sources: daemon/ingest without its sockets.
sources=$(ls "$root"/daemon/ingest/*.cpp | grep -v -e udp_receiver -e node_client)
# shellcheck disable=SC2086
"$cxx" -std=c++20 -g -O1 -fsanitize=fuzzer,address,undefined -fno-sanitize-recover=undefined \
  -I"$root" $sources "$root/config/status.cpp" \
  "$root/tests/fuzz/datagram_fuzz.cpp" -lcrypto -o "$out/datagram_fuzz"

# Seeds: the RFC 8428 examples as they are, the COSE WG messages (output.cbor, hex -> bytes),
# and packs of our own wire format for the configured fuzz nodes.
cp "$root"/tests/reference/data/senml/*.json "$root"/tests/reference/data/senml/*.cbor "$out/seeds/"
for f in "$root"/tests/reference/data/cose/*/*.json; do
  sed -n 's/.*"cbor":"\([0-9A-Fa-f]*\)".*/\1/p' "$f" | xxd -r -p > "$out/seeds/cose-$(basename "$f" .json).cbor"
done
printf '%s' '[{"bn":"shed/","bt":1764633590,"n":"boot","v":3},{"n":"seq","v":12,"ut":10},{"n":"ct1/i","u":"A","v":4.25},{"n":"ct1/p","u":"W","v":512.5,"s":3600000},{"n":"ct1/pf","u":"/","v":0.9,"t":-10}]' > "$out/seeds/shed.json"
printf '%s' '[{"bver":26,"bn":"shed/","n":"boot","v":1},{"n":"seq","v":2,"ut":10},{"n":"ct1/p","u":"kW","v":1.5,"s":2.5,"t":-5},{"n":"ct1/i","u":"mA","v":250}]' > "$out/seeds/shed-secondary.json"
# [{-2:"shed/",0:"boot",2:1},{0:"seq",2:2,7:10},{0:"ct1/i",1:"A",2:0.5}], 0.5 as a half float.
printf '%s' '83a32165736865642f0064626f6f740201a300637365710202070aa300656374312f6901614102f93800' \
  | xxd -r -p > "$out/seeds/shed.cbor"

cd "$out"
# -error_exitcode=1: libFuzzer's own default (77) is ctest's "skipped" code.
./datagram_fuzz -max_total_time="$seconds" -max_len=2048 -timeout=10 -print_final_stats=1 \
  -error_exitcode=1 "$@" corpus seeds
