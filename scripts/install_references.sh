#!/usr/bin/env bash
# Installs the outside references the tests compare against when they are missing: ngspice (Debian package, needs
# root or sudo) and scikit-rf (PyPI). Under CI (CI=true) both must end up installed; elsewhere a failed install
# leaves the matching live check skipped with a message. The README's test command runs this, then cargo test.
set -euo pipefail
cd "$(dirname "$0")/.."
export DEBIAN_FRONTEND=noninteractive
as_root() { if [ "$(id -u)" = 0 ]; then "$@"; else sudo "$@"; fi; }
if ! command -v ngspice >/dev/null 2>&1; then
  as_root apt-get update -qq
  as_root apt-get install -y -qq ngspice >/dev/null
fi
# scikit-rf (a general-purpose RF library) is the outside reference of tests/integration/touchstone.rs.
if ! python3 -c 'import skrf' >/dev/null 2>&1; then
  if ! python3 -m pip --version >/dev/null 2>&1; then
    as_root apt-get update -qq && as_root apt-get install -y -qq python3-pip >/dev/null || true
  fi
  python3 -m pip install --quiet scikit-rf || python3 -m pip install --quiet --break-system-packages scikit-rf \
    || { [ "${CI:-}" = true ] && exit 1; echo "scikit-rf could not be installed: its live check will be skipped"; }
fi
