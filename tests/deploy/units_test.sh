#!/usr/bin/env bash
# tests/deploy/units_test.sh SOURCE_DIR AMPLEDGER_BINARY
# `systemd-analyze verify` on the units in deploy/. verify also checks that each Exec*= program
# exists, and /usr/bin/ampledger is not installed on a build machine, so the units are checked
# as copies in which only that path is replaced by the freshly built binary. Any message from
# verify (it warns and still exits 0 for an unknown key or a bad value) fails the test.
# Exits 77 (skipped) only if systemd-analyze is missing or cannot run here at all.
set -euo pipefail

source_dir=$1
binary=$2
units=(ampledger.service ampledger-backup.service ampledger-backup.timer)

if ! command -v systemd-analyze > /dev/null; then
  echo "SKIP: systemd-analyze not installed (deploy/setup.sh test installs the systemd package)"
  exit 77
fi
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

# Can verify run here at all? A minimal unit must pass; if it does not, the container lacks
# what systemd-analyze needs, and that is no verdict on our units.
printf '[Service]\nType=oneshot\nExecStart=/bin/true\n' > "$work/probe.service"
if ! probe=$(systemd-analyze verify "$work/probe.service" 2>&1) || [ -n "$probe" ]; then
  echo "SKIP: systemd-analyze verify cannot run in this environment: $probe"
  exit 77
fi

for unit in "${units[@]}"; do
  sed "s|/usr/bin/ampledger|$binary|g" "$source_dir/deploy/$unit" > "$work/$unit"
done
# What the daemon's unit promises (deploy/OPERATIONS.md), line by line, so that a later edit
# cannot drop one unnoticed.
required=(
  'Type=notify' 'WatchdogSec=30' 'Restart=on-failure' 'User=ampledger'
  'StateDirectory=ampledger' 'ConfigurationDirectory=ampledger' 'UMask=0077'
  'ProtectSystem=strict' 'PrivateDevices=yes' 'NoNewPrivileges=yes' 'CapabilityBoundingSet='
  'RestrictAddressFamilies=AF_UNIX AF_INET AF_INET6' 'SystemCallFilter=@system-service'
  'MemoryMax=256M'
  'ExecStart=/usr/bin/ampledger serve --config /etc/ampledger/ampledger.toml'
)
for line in "${required[@]}"; do
  if ! grep -qxF "$line" "$source_dir/deploy/ampledger.service"; then
    echo "FAIL: deploy/ampledger.service lacks the line: $line"
    exit 1
  fi
done

cd "$work"
if ! output=$(systemd-analyze verify "${units[@]/#/$work/}" 2>&1) || [ -n "$output" ]; then
  echo "FAIL: systemd-analyze verify:"
  echo "$output"
  exit 1
fi
echo "systemd-analyze verify: ${units[*]}: no messages"

# The exposure score is printed for the record (systemd-analyze security; lower is better).
for unit in ampledger.service ampledger-backup.service; do
  systemd-analyze security --offline=yes "$work/$unit" 2>/dev/null | tail -n 1 || true
done
