#!/bin/sh
# Makes sure `m4` is available: the GMP/MPFR build behind the `rug` crate needs it.
# Installs it with apt-get when running as root; otherwise stops with one line.
set -e
if command -v m4 >/dev/null 2>&1; then
    exit 0
fi
if [ "$(id -u)" = "0" ] && command -v apt-get >/dev/null 2>&1; then
    echo "kzero setup: installing m4 (needed to build GMP/MPFR)" >&2
    apt-get update -qq >/dev/null
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq m4 >/dev/null
    command -v m4 >/dev/null 2>&1 && exit 0
fi
echo "kzero setup: m4 is missing; install it first (for example: sudo apt-get install -y m4)" >&2
exit 1
