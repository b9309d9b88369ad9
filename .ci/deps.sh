#!/usr/bin/env bash
# Installs the Debian 12 packages tacet needs, skipping what is already there.
# Sourced by demo.sh and test.sh so a fresh machine needs nothing by hand.
set -euo pipefail
TACET_PACKAGES=(g++ cmake make libeigen3-dev libboost-dev libcli11-dev catch2
                libsuitesparse-dev libfmt-dev nlohmann-json3-dev python3 python3-scipy
                python3-numpy git chromium)
missing=()
for p in "${TACET_PACKAGES[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if ((${#missing[@]})); then
  echo "tacet: installing missing packages: ${missing[*]}"
  SUDO=""
  if [ "$(id -u)" -ne 0 ]; then SUDO="sudo"; fi
  $SUDO apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "${missing[@]}"
fi
