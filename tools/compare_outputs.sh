#!/usr/bin/env bash
# Compare the output of two stormcharge binaries on every shipped
# configuration, variable by variable and flash by flash, at full precision
# (17 significant digits round-trip a double exactly).
#
#   tools/compare_outputs.sh OLD_BINARY NEW_BINARY
#
# Needs `ncdump` (Debian package netcdf-bin). Only the file name line and the
# `history` attribute (which holds the command line and wall-clock time) are
# ignored. Exit 0 when every configuration is identical, 1 otherwise.
set -euo pipefail
old=$1
new=$2
cd "$(dirname "$0")/.."
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
status=0
for cfg in configs/*.toml; do
  name=$(basename "$cfg" .toml)
  "$old" run "$cfg" -o "$work/old_$name.nc" --quiet
  "$new" run "$cfg" -o "$work/new_$name.nc" --quiet
  ncdump -p 9,17 "$work/old_$name.nc" | sed 1d | grep -v ':history = ' >"$work/old_$name.cdl"
  ncdump -p 9,17 "$work/new_$name.nc" | sed 1d | grep -v ':history = ' >"$work/new_$name.cdl"
  if diff "$work/old_$name.cdl" "$work/new_$name.cdl" >"$work/$name.diff"; then
    echo "identical  $cfg"
  else
    # Name the variables (or global attributes) whose text differs.
    which=$(grep -E '^[0-9]+' "$work/$name.diff" | while read -r hunk; do
      line=${hunk%%[acd,]*}
      head -n "$line" "$work/old_$name.cdl" | grep -E '^ [a-z_0-9]+ =|^[[:space:]]+:[a-z_]+ =' | tail -1 | sed -E 's/^[ \t:]*([a-z_0-9]+) =.*/\1/' || true
    done | sort -u | tr '\n' ' ')
    echo "DIFFERENT  $cfg: $which"
    status=1
  fi
done
exit $status
