#!/usr/bin/env bash
# tests/deploy/package_test.sh BUILD_DIR
# Builds the .deb with CPack from BUILD_DIR, inspects it (dpkg-deb -I / -c), then installs it,
# upgrades it to a later version (the same build, repackaged), removes and purges it with dpkg
# in a throwaway root (dpkg --root with --force-script-chrootless: the maintainer scripts run on
# this machine with $DPKG_ROOT set, and touch nothing outside that root). systemd is not running there, so the
# scripts' systemctl calls are skipped; what is checked is the files, the conffile handling,
# the system user the postinst creates, and the operations guide's first steps with the
# installed program: add a node, check the config, serve it, send a reading as the node and
# see it in the API.
set -euo pipefail

build_dir=$(cd "$1" && pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
fail() { echo "FAIL: $*"; exit 1; }
# dpkg looks for ldconfig and start-stop-daemon in PATH, which for a normal user may lack sbin.
export PATH="$PATH:/usr/sbin:/sbin"

# dpkg must own files as root inside the throwaway root; fakeroot stands in when not root.
as_root=()
if [ "$(id -u)" -ne 0 ]; then
  command -v fakeroot > /dev/null || { echo "SKIP: not root and no fakeroot"; exit 77; }
  as_root=(fakeroot)
fi

echo "== cpack -G DEB"
(cd "$build_dir" && cpack -G DEB -B "$work/out" > "$work/cpack.log") \
  || { cat "$work/cpack.log"; fail "cpack"; }
debs=("$work"/out/ampledger_*.deb)
[ -f "${debs[0]}" ] || fail "no .deb in $work/out"
deb=${debs[0]}
echo "built $(basename "$deb")"

echo "== dpkg-deb -I"
dpkg-deb -I "$deb" > "$work/info"
grep -q '^ Package: ampledger$' "$work/info" || fail "package name"
grep -q '^ Depends: .*libsqlite3-0' "$work/info" || fail "shlibs dependencies"
grep -q '^ Depends: .*systemd' "$work/info" || fail "systemd dependency"
grep -q '^ Depends: .*libmosquitto1' "$work/info" || fail "libmosquitto dependency (MQTT)"
for member in conffiles postinst prerm postrm; do
  grep -qE "^ +[0-9]+ bytes, +[0-9]+ lines +\*? *$member" "$work/info" || fail "control: $member"
done
[ "$(dpkg-deb -f "$deb" Version)" != "" ] || fail "version"
dpkg-deb --ctrl-tarfile "$deb" | tar -xO ./conffiles > "$work/conffiles"
grep -qx /etc/ampledger/ampledger.toml "$work/conffiles" || fail "conffile not marked"

echo "== dpkg-deb -c"
dpkg-deb -c "$deb" > "$work/contents"
for path in ./usr/bin/ampledger ./etc/ampledger/ampledger.toml \
    ./usr/lib/systemd/system/ampledger.service ./usr/lib/systemd/system/ampledger-backup.service \
    ./usr/lib/systemd/system/ampledger-backup.timer ./usr/lib/sysusers.d/ampledger.conf \
    ./usr/share/doc/ampledger/OPERATIONS.md ./usr/share/doc/ampledger/CONFIG.md; do
  grep -q " $path\$" "$work/contents" || fail "missing $path"
done
if awk '{print $2}' "$work/contents" | grep -qv '^root/root$'; then fail "files not owned by root"; fi
grep -E ' \./usr/bin/ampledger$' "$work/contents" | grep -q '^-rwxr-xr-x' || fail "binary mode"

echo "== dpkg -i into a throwaway root"
root="$work/root"
mkdir -p "$root/var/lib/dpkg/info" "$root/var/lib/dpkg/updates" "$root/var/log" \
  "$root/etc" "$root/usr/lib/sysusers.d"
touch "$root/var/lib/dpkg/status" "$root/var/lib/dpkg/available"
dpkg_root() {
  "${as_root[@]}" dpkg --root="$root" --force-script-chrootless --force-depends \
    --force-confold --log=/dev/null "$@"
}
dpkg_root -i "$deb" > "$work/dpkg.log" 2>&1 || { cat "$work/dpkg.log"; fail "dpkg -i"; }
dpkg-query --admindir="$root/var/lib/dpkg" -W -f='${Status}\n' ampledger | grep -qx 'install ok installed' \
  || fail "not installed"
"$root/usr/bin/ampledger" --version | grep -q . || fail "installed binary does not run"
grep -q '^ampledger:' "$root/etc/passwd" || fail "postinst did not create the ampledger user"

echo "== the guide's first steps on the installed config"
config="$root/etc/ampledger/ampledger.toml"
"$root/usr/bin/ampledger" node add --config "$config" --id board-test --channels 2 > "$work/node"
[ "$(stat -c %a "$root/etc/ampledger/board-test.key")" = 600 ] || fail "key file mode"
{
  sed -n '/^\[\[node\]\]/,$p' "$work/node"
  printf '\n[[circuit]]\nid = "kitchen"\nchannels = ["board-test/ct1"]\n'
} >> "$config"
"$root/usr/bin/ampledger" check --config "$config" > "$work/check" || { cat "$work/check"; fail "check"; }

echo "== the guide: serve the installed config, send a reading as the node, see it in the API"
# The installed config, with the database inside the throwaway root and free loopback ports
# (port 0; the daemon logs the ports it got). It sits beside the key file it names.
serve_config="$root/etc/ampledger/serve-test.toml"
sed -e "s|^path = \"/var/lib/ampledger/|path = \"$root/var/lib/ampledger/|" \
    -e 's|^listen = "[^"]*"|listen = "127.0.0.1:0"|' "$config" > "$serve_config"
mkdir -p "$root/var/lib/ampledger"
"$root/usr/bin/ampledger" serve --config "$serve_config" 2> "$work/serve.log" &
serve_pid=$!
for _ in $(seq 100); do grep -q 'api on http' "$work/serve.log" && break; sleep 0.1; done
udp_port=$(sed -n 's/.*on udp 127.0.0.1:0 (port \([0-9]*\)).*/\1/p' "$work/serve.log")
http_port=$(sed -n 's/.*on http 127.0.0.1:0 (port \([0-9]*\)).*/\1/p' "$work/serve.log")
[ -n "$udp_port" ] && [ -n "$http_port" ] || { cat "$work/serve.log"; fail "serve did not start"; }
"$root/usr/bin/ampledger" send --to "127.0.0.1:$udp_port" --config "$serve_config" \
  --node board-test --channel ct1 --amps 4.25 --volts 229 --watts 961 > "$work/send" 2>&1 \
  || { cat "$work/send"; fail "send (no acknowledgement)"; }
token=$("$root/usr/bin/ampledger" token create --scope viewer --config "$serve_config" 2> /dev/null)
# No curl on a minimal system: HTTP/1.1 by hand over bash's /dev/tcp.
exec 3<> "/dev/tcp/127.0.0.1/$http_port"
printf 'GET /v1/live HTTP/1.1\r\nHost: 127.0.0.1\r\nAuthorization: Bearer %s\r\nConnection: close\r\n\r\n' \
  "$token" >&3
live=$(cat <&3)
exec 3<&-
kill -TERM "$serve_pid"
wait "$serve_pid" || fail "serve did not exit cleanly"
echo "$live" | grep -q '"id":"kitchen"' || { echo "$live"; fail "live: no kitchen circuit"; }
echo "$live" | grep -q '"watts":961' || { echo "$live"; fail "live: the reading sent is not there"; }
rm "$serve_config"

echo "== upgrade to a later version of the same build"
version=$(dpkg-deb -f "$deb" Version)
(cd "$build_dir" && cpack -G DEB -B "$work/next" -D CPACK_PACKAGE_VERSION="$version+next" \
  > "$work/cpack.log") || { cat "$work/cpack.log"; fail "cpack (next version)"; }
next_debs=("$work"/next/ampledger_*.deb)
dpkg_root -i "${next_debs[0]}" > "$work/dpkg.log" 2>&1 \
  || { cat "$work/dpkg.log"; fail "dpkg -i (upgrade)"; }
[ "$(dpkg-query --admindir="$root/var/lib/dpkg" -W -f='${Version}' ampledger)" = "$version+next" ] \
  || fail "version after upgrade"
grep -q 'board-test' "$config" || fail "upgrade replaced the edited conffile"
[ -f "$root/etc/ampledger/board-test.key" ] || fail "upgrade lost the key file"
"$root/usr/bin/ampledger" check --config "$config" > /dev/null || fail "check after upgrade"

echo "== remove: program gone, config and keys kept"
dpkg_root -r ampledger > "$work/dpkg.log" 2>&1 || { cat "$work/dpkg.log"; fail "dpkg -r"; }
[ ! -e "$root/usr/bin/ampledger" ] || fail "binary left after remove"
[ ! -e "$root/usr/lib/systemd/system/ampledger.service" ] || fail "unit left after remove"
[ -f "$config" ] && [ -f "$root/etc/ampledger/board-test.key" ] || fail "remove deleted the config"

echo "== purge: config and keys gone"
dpkg_root -P ampledger > "$work/dpkg.log" 2>&1 || { cat "$work/dpkg.log"; fail "dpkg -P"; }
[ ! -e "$config" ] && [ ! -e "$root/etc/ampledger/board-test.key" ] || fail "purge left the config"
if dpkg-query --admindir="$root/var/lib/dpkg" -W ampledger > /dev/null 2>&1; then
  dpkg-query --admindir="$root/var/lib/dpkg" -W -f='${Status}\n' ampledger | grep -q 'not-installed' \
    || fail "still known to dpkg after purge"
fi
echo "OK: built, inspected, installed, upgraded, removed and purged $(basename "$deb")"
