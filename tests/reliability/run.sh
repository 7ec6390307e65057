#!/bin/sh
# tests/reliability/run.sh BUILD_DIR [short|full]
# Runs the reliability tools built from tests/reliability/*.cpp against BUILD_DIR's ampledger
# and writes their figures to BUILD_DIR/reliability-report.md (markdown, one section per
# tool, each naming the command that produced it). `short` (what ctest runs in CI) uses
# fewer repetitions; `full` (the default) is the suite's whole length. Exits non-zero if any
# tool reports a failure; the report keeps every section either way.
set -u
build=$(cd "${1:?usage: run.sh BUILD_DIR [short|full]}" && pwd)
mode=${2:-full}
report="$build/reliability-report.md"
binary="$build/daemon/ampledger"
tools="$build/tests"

case "$mode" in
  short) kills=5 flood=100000 many_seconds=20 tmpfs_mib=3 cuts=20 days=7 soak_minutes=
    http_seconds=5 ;;
  full) kills=20 flood=1000000 many_seconds=120 tmpfs_mib=6 cuts=100 days=365 soak_minutes=30
    http_seconds=20 ;;
  *) echo "run.sh: mode must be short or full, got $mode" >&2; exit 2 ;;
esac

{
  echo "# ampledger reliability report ($mode)"
  echo
  echo "$(date -u '+%Y-%m-%d %H:%M UTC'), $(nproc) cores, $(uname -sr), commit $(git -C "$(dirname "$0")" rev-parse --short HEAD 2>/dev/null || echo unknown)"
  echo
  echo "Load at the start: \`uptime\`: $(uptime)"
  echo
} > "$report"

failed=0
run() {
  echo "run.sh: $*" >&2
  "$@" >> "$report"
  code=$?
  if [ $code -eq 77 ]; then
    echo "run.sh: skipped (see the report): $*" >&2
  elif [ $code -ne 0 ]; then
    failed=1
    echo "run.sh: FAILED: $*" >&2
  fi
}

run "$tools/kill_restart" "$binary" "$kills"
run "$tools/hostile_flood" "$binary" "$flood"
run "$tools/many_circuits" "$binary" "$many_seconds"
run "$tools/disk_full" "$binary" "$tmpfs_mib"
run "$tools/power_cut" "$cuts"
run "$tools/query_scale" "$binary" "$days"
run "$tools/http_hostile" "$binary" "$http_seconds"
# The soak needs minutes of warm-up before growth means anything: full only.
[ -z "$soak_minutes" ] || run "$tools/soak" "$binary" "$soak_minutes"

# full: the concurrent test suites built with ThreadSanitizer in a build dir of their own.
if [ "$mode" = full ]; then
  source_dir=$(cd "$(dirname "$0")/../.." && pwd)
  tsan="$build-tsan"
  suites=ingest,storage,api,daemon
  {
    echo "### ThreadSanitizer (\`cmake -DAMPLEDGER_TSAN=ON -B $tsan\`; \`$tsan/tests/ampledger_tests -ts=$suites\`)"
    echo
  } >> "$report"
  if cmake -S "$source_dir" -B "$tsan" -DCMAKE_BUILD_TYPE=RelWithDebInfo -DAMPLEDGER_TSAN=ON \
       > "$build/tsan-build.log" 2>&1 &&
     cmake --build "$tsan" -j "$(nproc)" --target ampledger_tests >> "$build/tsan-build.log" 2>&1; then
    TSAN_OPTIONS="second_deadlock_stack=1" \
      "$tsan/tests/ampledger_tests" -ts=$suites > "$build/tsan-tests.log" 2>&1
    code=$?
    echo "- exit $code; $(grep -c 'WARNING: ThreadSanitizer' "$build/tsan-tests.log") ThreadSanitizer reports; summary: $(grep -E '^\[doctest\] (test cases|assertions)' "$build/tsan-tests.log" | tr '\n' ' ')" >> "$report"
    [ $code -eq 0 ] || failed=1
  else
    echo "- the ThreadSanitizer build failed: see $build/tsan-build.log" >> "$report"
    failed=1
  fi
  echo >> "$report"
fi

echo "Load at the end: \`uptime\`: $(uptime)" >> "$report"

cat "$report"
exit $failed
