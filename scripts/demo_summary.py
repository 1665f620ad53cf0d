"""The end of scripts/demo.sh: what the demo's stages wrote, where, and what it means.
Prints the fine-tunes' test metrics, the study's headline sentences (from its
summary.json, else from its terminal output), the paths of the report, the map and its
quicklook, and the cautions. Reads only what exists: a stage the build lacks is said to
be missing. Needs Debian's /usr/bin/python3.

usage: demo_summary.py DEMO_OUT"""
import glob
import json
import os
import sys
import textwrap

CAUTION = ("The data are invented. On real data, tinct's results guide surveillance planning "
           "only; they defer to field confirmation and to the protocols of the public-health "
           "authority.")


def say(text, indent="demo: "):
    print(textwrap.fill(text, width=100, initial_indent=indent, subsequent_indent=" " * len(indent)))


def finetune_lines(out):
    for name in ("habitat", "landcover"):
        path = os.path.join(out, "runs", f"aldery-{name}-pretrained", "metrics.json")
        if not os.path.exists(path):
            continue
        m = json.load(open(path))
        print(f"== fine-tune {name} from the pretrained encoder ({path})")
        print("  macro F1 %.3f, kappa %.3f, accuracy %.3f on %d test chips (one seed, one fold)"
              % (m["macro_f1"], m["kappa"], m["accuracy"], m["count"]))


def sentences(value):
    """Every string in a list or a dict of lists (summary.json's findings)."""
    if isinstance(value, str):
        return [value]
    if isinstance(value, dict):
        return [s for v in value.values() for s in sentences(v)]
    if isinstance(value, list):
        return [s for v in value for s in sentences(v)]
    return []


def study_headlines(study, log):
    """The study's findings in plain words: summary.json's findings where it has them,
    else the lines of the study's terminal output (`log`) from its Findings heading up
    to its caution, as printed."""
    summary = json.load(open(os.path.join(study, "summary.json")))
    for key in ("findings", "headlines", "sentences"):
        if key in summary and sentences(summary[key]):
            return ["- " + sentence for sentence in sentences(summary[key])]
    lines, inside = [], False
    if os.path.exists(log):
        for line in open(log, encoding="utf-8"):
            if line.strip().lower() == "findings":
                inside = True
            elif inside and line.startswith("Caution"):
                break
            elif inside and line.strip():
                lines.append(line.rstrip())
    return lines


def study_lines(out):
    study = os.path.join(out, "studies", "aldery-habitat")
    if not os.path.exists(os.path.join(study, "summary.json")):
        return
    print(f"== study: pretrained against scratch against pixel baselines ({study})")
    headlines = study_headlines(study, os.path.join(out, "study.log"))
    for sentence in headlines:
        print("  " + sentence if sentence.startswith(("- ", "  ")) else "  " + sentence + ":")  # a heading
    if not headlines:
        print(f"  (no findings found in summary.json; see {out}/study.log)")
    print(f"  report: {os.path.join(study, 'report.html')} (open it in a browser; no network needed)")
    print(f"  tables: {os.path.join(study, 'summary.csv')}, {os.path.join(study, 'summary.json')}")


def map_lines(out):
    maps = sorted(glob.glob(os.path.join(out, "maps", "aldery-habitat", "*", "quicklook.png")))
    for quicklook in maps:
        scene = os.path.dirname(quicklook)
        print(f"== map of {os.path.basename(scene)} ({scene})")
        for name in ("probabilities", "classes", "uncertainty", "aoa"):
            print(f"  {name + ':':15}{os.path.join(scene, name + '.tif')}")
        print(f"  {'quicklook:':15}{quicklook}")
        say("Cells with too few valid pixels (cloud, shadow, no data) are no data: unknown, not "
            "absent. Outside the area of applicability (aoa.tif) the ground is unlike any training "
            "chip: nothing tested the model there.", "  ")


def previews(out):
    steps = glob.glob(os.path.join(out, "runs", "aldery-pretrain", "previews", "step-*.png"))
    if steps:
        last = max(steps, key=lambda p: int(os.path.basename(p)[5:-4]))
        print(f"== pretraining preview (true colour | predicted): {last}")


def main():
    out = sys.argv[1]
    previews(out)
    finetune_lines(out)
    study_lines(out)
    map_lines(out)
    say(f"stores and runs are in {out}/; the generator's answer key is in {out}/aldery/truth/.")
    say(CAUTION)


if __name__ == "__main__":
    main()
