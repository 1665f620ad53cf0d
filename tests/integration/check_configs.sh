#!/usr/bin/env bash
# Every config shipped in configs/ passes `tinct check`, and the printed resolved
# config is itself a valid config that resolves to the same text.
set -euo pipefail
tinct=${TINCT:?set TINCT to the tinct binary}
source_dir=${TINCT_SOURCE:?}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
count=0
while IFS= read -r config; do
  "$tinct" --quiet check "$config" > "$work/resolved.yaml"
  "$tinct" --quiet check "$work/resolved.yaml" > "$work/again.yaml"
  cmp -s "$work/resolved.yaml" "$work/again.yaml" || { echo "FAIL: $config does not resolve stably"; exit 1; }
  echo "ok: $config"
  count=$((count + 1))
done < <(find "$source_dir/configs" -name '*.yaml' | sort)
[[ $count -gt 0 ]] || { echo "no configs found"; exit 1; }
echo "$count configs check"
