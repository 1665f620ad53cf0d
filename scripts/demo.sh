#!/usr/bin/env bash
# Installs what is missing, builds, and runs tinct's main job on the demo scenario
# (examples/aldery-marsh, invented data): generate the scenes and field data, survey
# a band file, pair the scenes with their composite colour and with the orthophoto,
# pretrain on the pairs, cut both label sets into label stores, fine-tune a habitat
# and a land-cover classifier from the pretrained encoder, run the habitat study
# (pretrained against scratch against two pixel baselines over seeds, label budgets
# and spatial folds) and map habitat on one date. `tinct study` and `tinct map` run
# only when the build has them. Re-running skips every stage whose output is complete
# and whose config and inputs did not change (an interrupted pretraining or study
# resumes); --fresh starts over. Prints the wall-clock and CPU time of each stage.
# TINCT_THREADS=N limits tinct's threads (default: all cores), e.g. on a machine
# others are using.
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
  echo "demo: $name: $*"
  local TIMEFORMAT="demo: $name took %0R s (CPU %0U s user, %0S s system)"
  time "$@"
  echo "$print" > "$stamps/$name"
}

# resumable NAME FINGERPRINT FOLDER FRESH_COMMAND RESUME_COMMAND: a long stage that can be
# interrupted. With the same inputs as when it started it resumes; else it starts afresh.
resumable() {
  local name=$1 print=$2 folder=$3 fresh=$4 resume=$5
  if [[ -d $folder && -f $stamps/$name.started && $(cat "$stamps/$name.started") == "$print" ]]; then
    $resume
  else
    echo "$print" > "$stamps/$name.started"
    $fresh
  fi
}

# Pretraining resumes from its last checkpoint when it was interrupted with the same inputs.
pretrain_fresh() { $tinct pretrain "$example/pretrain.yaml" --force; }
pretrain_resume() {
  if ls "$out"/runs/aldery-pretrain/checkpoints/* > /dev/null 2>&1; then
    $tinct pretrain "$example/pretrain.yaml" --resume
  else
    pretrain_fresh
  fi
}
pretrain() { resumable pretrain "$1" "$out/runs/aldery-pretrain" pretrain_fresh pretrain_resume; }

# A study skips the runs it finished before (same resolved config); with other inputs
# (a new pretraining, other labels) its folder is removed first, since the runs' configs
# name the same paths.
study_fresh() { rm -rf "$out/studies/aldery-habitat"; study_resume; }
study_resume() { $tinct study "$example/study-habitat.yaml" | tee "$out/study.log"; }
study() { resumable study "$1" "$out/studies/aldery-habitat" study_fresh study_resume; }

map() { rm -rf "$out/maps/aldery-habitat"; $tinct map "$example/map-habitat.yaml"; }

# True when this build of tinct has the command (a command it lacks exits 2).
has_command() { build/tinct "$1" --help > /dev/null 2>&1; }

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
  stage "finetune-$set" "$out/runs/aldery-$set-pretrained/metrics.json" \
    "$(fingerprint "$example/finetune-$set.yaml" "$stamps/label-$set" "$stamps/pretrain")" \
    $tinct finetune "$example/finetune-$set.yaml" --force
done

if has_command study; then
  studied=$(fingerprint "$example/study-habitat.yaml" "$example/finetune-habitat.yaml" \
    "$stamps/label-habitat" "$stamps/pretrain")
  stage study "$out/studies/aldery-habitat/summary.json" "$studied" study "$studied"
else
  echo "demo: tinct study is not in this build, skipped"
fi
if has_command map; then
  stage map "$out/maps/aldery-habitat/aldery-2026-06-14/quicklook.png" \
    "$(fingerprint "$example/map-habitat.yaml" "$stamps/finetune-habitat")" map
else
  echo "demo: tinct map is not in this build, skipped"
fi

/usr/bin/python3 scripts/demo_summary.py "$out"
times > "$out/.times"
echo "demo: done in $((SECONDS - total)) s wall-clock, $(awk 'NR == 2 { gsub(/[ms]/, " "); printf "%.0f", $1 * 60 + $2 + $3 * 60 + $4 }' "$out/.times") s CPU (this run, the build check included)"
