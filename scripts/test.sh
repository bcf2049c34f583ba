#!/usr/bin/env bash
# The one test command (README): installs ngspice when missing (it is the outside reference), then runs every test.
set -euo pipefail
cd "$(dirname "$0")/.."
if ! command -v ngspice >/dev/null 2>&1; then
  if [ "$(id -u)" = 0 ]; then SUDO=; else SUDO=sudo; fi
  $SUDO env DEBIAN_FRONTEND=noninteractive apt-get update -qq
  $SUDO env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq ngspice >/dev/null
fi
cargo test --all-targets
