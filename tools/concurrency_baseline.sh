#!/usr/bin/env bash
# How much a machine slows two independent runs that share it: runs the demo
# once alone and twice side by side (separate processes, nothing shared),
# TRIALS times, and prints the efficiency time(one) / time(two together).
# The sweep's parallel efficiency cannot exceed what this shows.
#
# usage: tools/concurrency_baseline.sh [STORMCHARGE_BINARY] [TRIALS]
set -euo pipefail
bin=${1:-target/release/stormcharge}
trials=${2:-3}
config=$(dirname "$0")/../configs/demo.toml
out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT
now() { date +%s.%N; }
for t in $(seq "$trials"); do
  s=$(now)
  "$bin" run "$config" -o "$out/a.nc" --quiet
  one=$(awk -v a="$s" -v b="$(now)" 'BEGIN { printf "%.3f", b - a }')
  s=$(now)
  "$bin" run "$config" -o "$out/b.nc" --quiet &
  "$bin" run "$config" -o "$out/c.nc" --quiet &
  wait
  two=$(awk -v a="$s" -v b="$(now)" 'BEGIN { printf "%.3f", b - a }')
  eff=$(awk -v a="$one" -v b="$two" 'BEGIN { printf "%.0f", 100 * a / b }')
  echo "trial $t: one $one s, two side by side $two s, efficiency $eff %"
done
