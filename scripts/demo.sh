#!/usr/bin/env bash
# Installs what is missing, builds, and runs tinct's main job on the demo scenario
# (examples/aldery-marsh, invented data): pair the scenes, pretrain on the pairs,
# cut the field sites into a label store, fine-tune from the pretrained encoder and
# from scratch, and print both runs' test metrics.
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/setup.sh
out=demo-out
example=examples/aldery-marsh
tinct=build/tinct
/usr/bin/python3 "$example/make_scenes.py" "$out"
$tinct survey "$out/aldery-2026-06-14.tif"
$tinct --quiet check "$example/pair.yaml" > "$out/pair.resolved.yaml"
$tinct pair "$example/pair.yaml" --force
$tinct pretrain "$example/pretrain.yaml" --force
$tinct label "$example/label.yaml" --force
$tinct finetune "$example/finetune.yaml" --force
$tinct finetune "$example/finetune-scratch.yaml" --force
for run in aldery-finetune aldery-scratch; do
  echo "== $run: test metrics ($out/runs/$run/metrics.json)"
  /usr/bin/python3 -c 'import json,sys; m=json.load(open(sys.argv[1])); print("  macro F1 %.3f, kappa %.3f, accuracy %.3f on %d chips" % (m["macro_f1"], m["kappa"], m["accuracy"], m["count"]))' "$out/runs/$run/metrics.json"
done
echo "demo: stores and runs are in $out/ (previews of the pretraining in $out/runs/aldery-pretrain/previews/)"
echo "demo: the data are invented; real maps guide surveillance planning only, and field confirmation"
echo "      and the public-health authority's protocols come first."
