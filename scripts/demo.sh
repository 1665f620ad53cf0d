#!/usr/bin/env bash
# Installs what is missing, builds, and runs tinct's main job on the demo scenario
# (examples/aldery-marsh, invented data): generate the scenes and field data, survey
# a band file, pair the scenes with their composite colour and with the orthophoto,
# pretrain on the pairs, cut both label sets into label stores, fine-tune a habitat
# and a land-cover classifier from the pretrained encoder and from scratch, and print
# their test metrics. Re-running skips every stage whose output is complete and whose
# config and inputs did not change (an interrupted pretraining resumes); --fresh
# starts over. Prints the time of each stage. TINCT_THREADS=N limits tinct's threads
# (default: all cores), e.g. on a machine others are using.
set -euo pipefail
cd "$(dirname "$0")/.."
[[ ${1:-} == --fresh ]] && rm -rf demo-out
scripts/setup.sh
out=demo-out
example=examples/aldery-marsh
tinct="build/tinct${TINCT_THREADS:+ --threads $TINCT_THREADS}"
stamps=$out/.stamps
mkdir -p "$stamps"

# A stage's fingerprint: its config and generator files and the fingerprints of the
# stages it reads from (so a changed scene redoes everything downstream).
fingerprint() { cat "$@" | sha256sum | cut -c1-16; }

# stage NAME DONE_FILE FINGERPRINT COMMAND...: runs COMMAND unless DONE_FILE exists and
# the fingerprint recorded when the stage last finished equals FINGERPRINT.
stage() {
  local name=$1 done_file=$2 print=$3
  shift 3
  if [[ -f $done_file && -f $stamps/$name && $(cat "$stamps/$name") == "$print" ]]; then
    echo "demo: $name is up to date, skipped"
    return
  fi
  rm -f "$stamps/$name"
  local start=$SECONDS
  echo "demo: $name: $*"
  "$@"
  echo "$print" > "$stamps/$name"
  echo "demo: $name took $((SECONDS - start)) s"
}

# Pretraining resumes from its last checkpoint when it was interrupted with the same inputs.
pretrain() {
  local run=$out/runs/aldery-pretrain print=$1
  if [[ -f $run/run.yaml && -f $stamps/pretrain.started && $(cat "$stamps/pretrain.started") == "$print" ]] &&
     ls "$run"/checkpoints/* > /dev/null 2>&1; then
    $tinct pretrain "$example/pretrain.yaml" --resume
  else
    echo "$print" > "$stamps/pretrain.started"
    $tinct pretrain "$example/pretrain.yaml" --force
  fi
}

total=$SECONDS
gen=$(fingerprint "$example/make_scenes.py" "$example"/aldery/*.py)
stage generate "$out/aldery/generated.json" "$gen" /usr/bin/python3 "$example/make_scenes.py" "$out/aldery"
$tinct survey "$out/aldery/2026-06-14/B04.tif" "$out/aldery/2026-06-14/B05.tif" "$out/aldery/ortho-2026-06-14.tif"
$tinct --quiet check "$example/pair.yaml" > "$out/pair.resolved.yaml"

pairs=$(fingerprint "$example/pair.yaml" "$stamps/generate")
stage pair "$out/aldery.pairs/manifest.yaml" "$pairs" $tinct pair "$example/pair.yaml" --force
stage pair-ortho "$out/aldery-ortho.pairs/manifest.yaml" \
  "$(fingerprint "$example/pair-ortho.yaml" "$stamps/generate")" $tinct pair "$example/pair-ortho.yaml" --force
pretrained=$(fingerprint "$example/pretrain.yaml" "$stamps/pair")
stage pretrain "$out/runs/aldery-pretrain/encoder.pt" "$pretrained" pretrain "$pretrained"
for set in habitat landcover; do
  stage "label-$set" "$out/aldery-$set.labels/manifest.yaml" \
    "$(fingerprint "$example/label-$set.yaml" "$stamps/generate")" $tinct label "$example/label-$set.yaml" --force
  for init in "" -scratch; do
    config=$example/finetune-$set$init.yaml
    run=$out/runs/aldery-$set${init:--pretrained}
    stage "finetune-$set$init" "$run/metrics.json" \
      "$(fingerprint "$config" "$stamps/label-$set" "$stamps/pretrain")" $tinct finetune "$config" --force
  done
done

for run in aldery-habitat-pretrained aldery-habitat-scratch aldery-landcover-pretrained aldery-landcover-scratch; do
  echo "== $run: test metrics ($out/runs/$run/metrics.json)"
  /usr/bin/python3 -c 'import json,sys; m=json.load(open(sys.argv[1])); print("  macro F1 %.3f, kappa %.3f, accuracy %.3f on %d chips" % (m["macro_f1"], m["kappa"], m["accuracy"], m["count"]))' "$out/runs/$run/metrics.json"
done
echo "demo: one fold and one seed each; a difference between two such runs is not evidence either way."
echo "demo: done in $((SECONDS - total)) s; stores and runs are in $out/ (previews of the pretraining in"
echo "      $out/runs/aldery-pretrain/previews/, the generator's answer key in $out/aldery/truth/)"
echo "demo: the data are invented; real maps guide surveillance planning only, and field confirmation"
echo "      and the public-health authority's protocols come first."
