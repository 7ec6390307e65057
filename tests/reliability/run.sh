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
  short) kills=5 flood=100000 many_seconds=20 tmpfs_mib=3 cuts=20 days=7 ;;
  full) kills=20 flood=1000000 many_seconds=120 tmpfs_mib=6 cuts=100 days=365 ;;
  *) echo "run.sh: mode must be short or full, got $mode" >&2; exit 2 ;;
esac

{
  echo "# ampledger reliability report ($mode)"
  echo
  echo "$(date -u '+%Y-%m-%d %H:%M UTC'), $(nproc) cores, $(uname -sr), commit $(git -C "$(dirname "$0")" rev-parse --short HEAD 2>/dev/null || echo unknown)"
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

cat "$report"
exit $failed
