#!/usr/bin/env bash
# Example CI step for a hardware repository: check every netlist's budget, and
# on a branch show what each netlist's change did to the response.
# Usage: check-netlists.sh [BASE_REVISION]   (default: origin/main)
# For pull requests from others: TACET_FLAGS="--confine-includes $PWD" (docs/specs.md).
set -euo pipefail
base="${1:-origin/main}"
status=0
read -r -a flags <<< "${TACET_FLAGS:-}"
while IFS= read -r netlist; do
  echo "== tacet check $netlist"
  tacet check "${flags[@]}" "$netlist" || status=1
  if git cat-file -e "$base:./$netlist" 2>/dev/null; then
    echo "== tacet diff $base:$netlist $netlist"
    limit=(--fail-above 0.1dB)
    if [ "${TACET_ALLOW_CHANGE:-0}" = 1 ]; then limit=(); fi
    tacet diff "$base:$netlist" "$netlist" "${limit[@]}" || status=1
  fi
done < <(git ls-files '*.tacet' | xargs grep -l '^spec ' || true)
exit $status
