#!/usr/bin/env bash
# Makes the pictures the README and the docs show, with the tacet binary on the
# bundled demo. Run from anywhere after a build:
#
#   bash docs/make-images.sh [TACET]            # rewrites docs/images/*.svg
#   bash docs/make-images.sh --check [TACET]    # exit 1 if a committed picture is stale
#
# TACET defaults to build/tacet. The test suite runs the --check form, so a change
# to the plots or the demo that moves a picture fails until this script is re-run.
set -euo pipefail
cd "$(dirname "$0")/.."

check=0
if [ "${1:-}" = "--check" ]; then check=1; shift; fi
tacet="${1:-build/tacet}"
demo=netlists/vibration_logger.tacet

# name, then the tacet arguments that draw it
pictures=(
  "vibration_logger_ac.svg|ac $demo --probe adc_p,adc_n --probe buf_out --probe gain_out --from 1 --to 100k --per-decade 40"
  "vibration_logger_noise.svg|noise $demo --probe adc_p,adc_n --band 2..4k --from 1 --to 100k --per-decade 20"
  "turbidity_loop.svg|loop netlists/examples/turbidity_frontend.tacet"
)

scratch="$(mktemp -d)"
trap 'rm -rf "$scratch"' EXIT
stale=0
for entry in "${pictures[@]}"; do
  name="${entry%%|*}"
  read -r -a args <<< "${entry#*|}"
  "$tacet" "${args[@]}" --format svg --output "$scratch/$name"
  if [ "$check" = 1 ]; then
    if ! cmp -s "$scratch/$name" "docs/images/$name"; then
      echo "docs/images/$name differs from what 'tacet ${args[*]} --format svg' draws today;"
      echo "  run: bash docs/make-images.sh"
      stale=1
    fi
  else
    cp "$scratch/$name" "docs/images/$name"
    echo "wrote docs/images/$name"
  fi
done
exit "$stale"
