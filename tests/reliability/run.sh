#!/bin/sh
# tests/reliability/run.sh BUILD_DIR [short|full]
# Runs the reliability tools built from tests/reliability/*.cpp against BUILD_DIR's ampledger
# and writes their figures to BUILD_DIR/reliability-report.md (markdown, one section per
# tool, each naming the command that produced it). `short` (what ctest runs in CI) uses
# fewer repetitions; `full` (the default) is the suite's whole length. Exits non-zero if any
# tool reports a failure; the report keeps every section either way. `full` also runs the
# three libFuzzer targets for 5 minutes each, and the test suites built with ThreadSanitizer
# and with ASan + UBSan (tests/sanitizer/run.sh), in BUILD_DIR/sanitizer-thread and -address.
set -u
build=$(cd "${1:?usage: run.sh BUILD_DIR [short|full]}" && pwd)
mode=${2:-full}
report="$build/reliability-report.md"
binary="$build/daemon/ampledger"
tools="$build/tests"

case "$mode" in
  short) kills=5 flood=100000 many_seconds=20 tmpfs_mib=3 cuts=20 days=7 soak_minutes=
    http_seconds=5 fuzz_seconds= ;;
  full) kills=20 flood=1000000 many_seconds=120 tmpfs_mib=6 cuts=100 days=365 soak_minutes=30
    http_seconds=20 fuzz_seconds=300 ;;
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

# full: the three libFuzzer targets for minutes each (ctest runs them for 30 to 45 s).
if [ "$mode" = full ]; then
  source_dir=$(cd "$(dirname "$0")/../.." && pwd)
  for fuzzer in run config_run api_parameters_run; do
    log="$build/fuzz-$fuzzer.log"
    {
      echo "### Fuzzer \`tests/fuzz/$fuzzer.sh $fuzz_seconds\` (started $(date -u '+%H:%M UTC'), load: $(cut -d' ' -f1-3 /proc/loadavg))"
      echo
    } >> "$report"
    FUZZ_OUT="$build/fuzz" sh "$source_dir/tests/fuzz/$fuzzer.sh" "$fuzz_seconds" > "$log" 2>&1
    code=$?
    {
      if [ $code -eq 77 ]; then
        echo "- skipped: $(tail -1 "$log")"
      else
        echo "- exit $code ($([ $code -eq 0 ] && echo 'no crash, leak or timeout' || echo 'a finding: see the log and its crash-* input'))"
        echo "- $(grep -E '^stat::number_of_executed_units|^stat::peak_rss_mb' "$log" | tr '\n' ' ')"
        echo "- $(grep -E '^#[0-9]+.*(DONE|cov:)' "$log" | tail -1)"
      fi
      echo "- log: $log"
      echo
    } >> "$report"
    [ $code -eq 0 ] || [ $code -eq 77 ] || failed=1
  done
fi

# full: the concurrent test suites built with ThreadSanitizer in a build dir of their own
# (tests/sanitizer/run.sh thread), and the unit suites under ASan + UBSan as CI runs them
# (the same folder as ctest's sanitizer-address entry, so a built one is reused).
if [ "$mode" = full ]; then
  for kind in thread address; do
    {
      echo "### Sanitizer: $kind (\`tests/sanitizer/run.sh $kind $build/sanitizer-$kind\`)"
      echo
      echo "Started $(date -u '+%H:%M UTC'), \`uptime\`: $(uptime)"
      echo
    } >> "$report"
    started=$(date +%s)
    "$source_dir/tests/sanitizer/run.sh" "$kind" "$build/sanitizer-$kind" > "$build/sanitizer-$kind.log" 2>&1
    code=$?
    {
      echo "- exit $code after $(( $(date +%s) - started )) s (build and run); $(grep -c -E 'WARNING: ThreadSanitizer|ERROR: AddressSanitizer|runtime error:|ERROR: LeakSanitizer' "$build/sanitizer-$kind.log") sanitizer reports; $(grep -E '^\[doctest\] (test cases|assertions)' "$build/sanitizer-$kind.log" | tr '\n' ' ')"
      echo "- log: $build/sanitizer-$kind.log"
      echo
    } >> "$report"
    [ $code -eq 0 ] || failed=1
  done
fi

echo "Load at the end: \`uptime\`: $(uptime)" >> "$report"

cat "$report"
exit $failed
