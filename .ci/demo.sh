#!/usr/bin/env bash
# Installs what is missing, builds tacet and sweeps the bundled demo chain.
set -euo pipefail
cd "$(dirname "$0")/.."
source .ci/deps.sh
cmake -S . -B build -DCMAKE_BUILD_TYPE=RelWithDebInfo
cmake --build build -j"$(nproc)" --target tacet
./build/tacet ac netlists/vibration_logger.tacet --probe adc_p,adc_n --probe buf_out \
  --from 1 --to 100k --per-decade 5
