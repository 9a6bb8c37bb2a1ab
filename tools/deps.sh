#!/bin/sh
# Install the Debian packages named on the command line that are missing.
# As root with apt-get: installs them. Otherwise: prints the exact line.
missing=""
for pkg in "$@"; do
  dpkg-query -W -f='${Status}' "$pkg" 2>/dev/null | grep -q "install ok installed" ||
    missing="$missing $pkg"
done
[ -z "$missing" ] && exit 0
if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
  echo "plumb: installing$missing"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq >/dev/null || true
  apt-get install -y -qq --no-install-recommends $missing >/dev/null || {
    echo "plumb: apt-get could not install:$missing" >&2; exit 1; }
else
  echo "plumb: missing packages. Install them with:" >&2
  echo "  sudo apt-get install$missing" >&2
  exit 1
fi
