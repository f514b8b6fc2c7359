#!/usr/bin/env bash
# Build nec2c 1.3 from Debian's source with the project's one-line fix (nec2c-fbar.patch) into tests/nec/engine/
# (ignored by git).  Run by hand, before make_long.py; CI does not need it (the results it gives are stored).
#
# The fix: in somnec.c, fbar() (the Sommerfeld attenuation function of a numerical distance) computes its series
# value and then falls through into the asymptotic branch, which overwrites it.  The patch adds the missing
# return.  The packaged engine's results go wrong once a structure spans about a wavelength; the patched one
# matches it below that (make_long.py checks both on the stored short decks).
#
# Needs: a Debian or Ubuntu machine with deb-src entries for apt (apt-get source), gcc, make, patch.
# Or set NEC2C_ORIG to a local copy of nec2c_1.3.orig.tar.bz2.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
dest="$here/engine"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
cd "$work"
if [ -n "${NEC2C_ORIG:-}" ]; then
  cp "$NEC2C_ORIG" nec2c_1.3.orig.tar.bz2
else
  apt-get source --download-only nec2c >/dev/null 2>&1 || {
    echo "apt-get source nec2c failed: add a deb-src entry for your distribution (or set NEC2C_ORIG)" >&2
    exit 1
  }
fi
tar xjf nec2c_1.3.orig.tar.bz2
cd nec2c-1.3
patch -p1 < "$here/nec2c-fbar.patch"
./configure -q >/dev/null
make -s >/dev/null 2>&1
mkdir -p "$dest"
cp nec2c "$dest/nec2c-fbar"
echo "built $dest/nec2c-fbar"
