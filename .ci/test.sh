#!/usr/bin/env bash
# Builds tacet with warnings as errors and runs the whole test suite.
set -euo pipefail
cd "$(dirname "$0")/.."
source .ci/deps.sh
cmake -S . -B build -DCMAKE_BUILD_TYPE=RelWithDebInfo -DTACET_WERROR=ON
cmake --build build -j"$(nproc)"
ctest --test-dir build --output-on-failure -j"$(nproc)"
# The second build under AddressSanitizer and UndefinedBehaviorSanitizer, its whole
# suite and the fuzz smoke test of every command (about a quarter of an hour).
bash .ci/sanitize.sh
