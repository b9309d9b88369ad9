#!/usr/bin/env bash
# The sanitizer build, its whole suite and the fuzz smoke test; run after .ci/deps.sh.
# The last step of .ci/test.sh (DEVELOPERS.md, "Build and test").
set -euo pipefail
cd "$(dirname "$0")/.."
# The same suite again under AddressSanitizer and UndefinedBehaviorSanitizer
# (assertions on, -O1 for speed), then a fuzz smoke test of every command on
# mutants of the bundled netlists: any crash, hang, exit outside 0..3 or
# sanitizer report fails CI. Run tests/fuzz/fuzz_netlists.py longer by hand.
cmake -S . -B build-sanitize -DCMAKE_BUILD_TYPE=Debug -DCMAKE_CXX_FLAGS_DEBUG="-O1 -g" \
  -DTACET_WERROR=ON -DTACET_SANITIZE=ON
cmake --build build-sanitize -j"$(nproc)"
ctest --test-dir build-sanitize --output-on-failure -j"$(nproc)"
/usr/bin/python3 tests/fuzz/fuzz_netlists.py --tacet build-sanitize/tacet --mutants 1500 --seed 1 \
  --keep build-sanitize/fuzz-failures
