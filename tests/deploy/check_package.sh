#!/usr/bin/env bash
# Builds the Debian package from a build directory and checks it with Debian's own tools:
#   dpkg-deb -c   the files land where docs/operations.md says (binary, site, unit, user, docs);
#   dpkg-deb -I   the control file names the shared libraries the binary links (found by
#                 dpkg-shlibdeps), marks the site file as a conffile and carries the maintainer
#                 scripts;
#   the packaged binary accepts the packaged example site (`spinward check-config`);
#   systemd-analyze verifies the packaged unit and rates its exposure (when systemd-analyze exists).
# usage: check_package.sh BUILD_DIR
set -euo pipefail
build=$(cd "$1" && pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
fail=0
problem() { echo "FAIL: $*" >&2; fail=1; }

(cd "$work" && cpack -G DEB --config "$build/CPackConfig.cmake" -B "$work/out" >"$work/cpack.log") \
  || { cat "$work/cpack.log" >&2; exit 1; }
deb=$(ls "$work"/out/*.deb)
echo "package: $(basename "$deb")"

contents=$(dpkg-deb -c "$deb" | awk '{print $6}')
for path in ./usr/bin/spinward ./etc/spinward/site.yaml ./lib/systemd/system/spinward.service \
            ./usr/lib/sysusers.d/spinward.conf ./usr/share/doc/spinward/README.md \
            ./usr/share/doc/spinward/operations.md ./usr/share/doc/spinward/configuration.md; do
  grep -qx "$path" <<<"$contents" || problem "$path missing from the package"
done
# Nothing else at the top of the tree: no build paths, no headers, no test programs.
while read -r path; do
  case "$path" in
    ./ | ./usr/* | ./etc/ | ./etc/spinward/* | ./lib/ | ./lib/systemd/*) ;;
    *) problem "unexpected path $path" ;;
  esac
done <<<"$contents"
grep -q 'test' <<<"$(grep '^./usr/bin/' <<<"$contents")" && problem "a test program in usr/bin"

info=$(dpkg-deb -I "$deb")
depends=$(dpkg-deb -f "$deb" Depends)
echo "depends: $depends"
# The libraries the daemon links (ldd of the packaged binary) must each be a dependency.
for lib in libsqlite3-0 libfftw3 libyaml-cpp libstdc++6 libc6 adduser procps; do
  grep -q "$lib" <<<"$depends" || problem "Depends lacks $lib"
done
if [[ -n $(pkg-config --modversion libsystemd 2>/dev/null) ]]; then
  grep -q libsystemd0 <<<"$depends" || problem "Depends lacks libsystemd0 (built with libsystemd)"
fi
grep -q '/etc/spinward/site.yaml' <<<"$(dpkg-deb --ctrl-tarfile "$deb" | tar -xO ./conffiles)" \
  || problem "site.yaml is not a conffile"
for script in postinst prerm postrm; do
  grep -qw "$script" <<<"$info" || problem "no $script"
done

root="$work/root"
dpkg-deb -x "$deb" "$root"
"$root/usr/bin/spinward" check-config "$root/etc/spinward/site.yaml" >"$work/check.log" \
  2>&1 || { cat "$work/check.log" >&2; problem "the packaged binary refuses the packaged site"; }

if command -v systemd-analyze >/dev/null; then
  unit="$root/lib/systemd/system/spinward.service"
  # verify checks every key and that each command exists: run it on a copy whose binary is the
  # unpacked one (the package is not installed here).
  sed "s#/usr/bin/spinward#$root/usr/bin/spinward#g" "$unit" >"$work/spinward.service"
  if ! systemd-analyze verify --man=no "$work/spinward.service" >"$work/verify.log" 2>&1 \
       || grep -q . "$work/verify.log"; then
    cat "$work/verify.log" >&2
    problem "systemd-analyze verify"
  fi
  security=$(systemd-analyze security --offline=yes "$work/spinward.service" 2>&1 | tail -1)
  echo "exposure: $security"
  level=$(grep -oE 'exposure level for .*: [0-9.]+' <<<"$security" | awk '{print $NF}')
  # systemd-analyze's own scale: below 2.0 is "OK" (0 = fully confined, 10 = unprotected).
  [[ -n $level ]] && awk -v l="$level" 'BEGIN{exit !(l < 2.0)}' \
    || problem "exposure '$security' is not below 2.0 (OK)"
fi
[[ $fail -eq 0 ]] && echo "package checks passed"
exit $fail
