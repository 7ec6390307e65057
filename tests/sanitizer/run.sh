#!/bin/sh
# tests/sanitizer/run.sh address|thread BUILD_DIR [suites]
# Builds the test binary (and the daemon it starts) with a sanitizer in BUILD_DIR, a build
# folder of its own, and runs doctest suites under it; exits non-zero on the first finding.
#   address: AddressSanitizer + UndefinedBehaviorSanitizer (CMake AMPLEDGER_SANITIZE), every
#            unit suite. ctest runs it as the entry sanitizer-address (so CI does), in
#            build/sanitizer-address; a clean build of it takes about 20 minutes on 2 cores.
#   thread:  ThreadSanitizer (AMPLEDGER_TSAN), the suites with threads of their own: ingest
#            (UDP receiver), storage (writer thread), api (HTTP pool, long-polls, webhooks),
#            daemon (the whole service); tests/reliability/run.sh full runs it.
# Only the test binary and the daemon are built (no benches, reliability tools or fuzzers),
# at -O1 with line tables only (-g1): enough for the sanitizers' stack traces, and the build
# is the slow part.
# Environment: JOBS (default: nproc), CMAKE_ARGS (extra configure arguments, e.g. ccache).
set -eu
kind=${1:?usage: run.sh address|thread BUILD_DIR [suites]}
build=${2:?usage: run.sh address|thread BUILD_DIR [suites]}
root=$(cd "$(dirname "$0")/../.." && pwd)
jobs=${JOBS:-$(nproc)}

case "$kind" in
  address)
    option=-DAMPLEDGER_SANITIZE=ON
    suites=${3:-config,metering,ingest,espi,storage,api,daemon,reference,node}
    # halt_on_error: the first finding fails the run (the build also has
    # -fno-sanitize-recover=all); detect_leaks: LeakSanitizer at exit.
    export ASAN_OPTIONS="halt_on_error=1:detect_leaks=1"
    export UBSAN_OPTIONS="halt_on_error=1:print_stacktrace=1"
    ;;
  thread)
    option=-DAMPLEDGER_TSAN=ON
    suites=${3:-ingest,storage,api,daemon}
    # tsan.supp: a lock-order report inside libmosquitto that cannot deadlock here (it says why).
    export TSAN_OPTIONS="halt_on_error=1:second_deadlock_stack=1:suppressions=$root/tests/sanitizer/tsan.supp"
    ;;
  *) echo "run.sh: the sanitizer must be address or thread, got $kind" >&2; exit 2 ;;
esac

# shellcheck disable=SC2086
cmake -S "$root" -B "$build" -DCMAKE_BUILD_TYPE=Sanitize -DCMAKE_CXX_FLAGS_SANITIZE="-O1 -g1" \
  -DCMAKE_C_FLAGS_SANITIZE="-O1 -g1" "$option" ${CMAKE_ARGS:-} > /dev/null
cmake --build "$build" -j "$jobs" --target ampledger_tests
# The tests start the daemon from the same build (AMPLEDGER_BINARY), so it runs sanitized too;
# a finding there makes it exit non-zero and fails the test that started it.
cd "$build/tests"
exec ./ampledger_tests --test-suite="$suites"
