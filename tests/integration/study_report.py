"""The study report on a hand-made sample (invented numbers: the test is about layout, not
results). report.html must parse as HTML with every tag closed, every inline SVG must parse
as XML, nothing may be fetched or run (no script, no external address, images as data URIs),
markup characters in names must come out escaped, the plain-word sentences must read as
the statistics allow, and the terminal table must say the same. With --render, headless
Chromium (Debian's `chromium`) renders the page to a PNG without console errors; the test
installs it when it can and is skipped (exit 77) saying why when it cannot."""
import base64
import html.parser
import os
import re
import shutil
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402

TOOL, OUT = sys.argv[1], sys.argv[2]
RENDER = "--render" in sys.argv[3:]
SVG_NS = "http://www.w3.org/2000/svg"
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}
checks = Checks()


class StrictParser(html.parser.HTMLParser):
    """html.parser with the checks it leaves out: every element closed in order, no
    script or event handler, every address internal (#id) or a data: image."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack, self.errors, self.text, self.ids = [], [], [], set()
        self.addresses = []

    def handle_starttag(self, tag, attrs):
        if tag in ("script", "iframe", "object", "embed", "link", "base"):
            self.errors.append(f"<{tag}> at line {self.getpos()[0]}")
        for name, value in attrs:
            if name.startswith("on"):
                self.errors.append(f"event handler {name} at line {self.getpos()[0]}")
            if name in ("src", "href", "xlink:href", "action"):
                self.addresses.append(value or "")
            if name == "id":
                self.ids.add(value)
        if tag not in VOID:
            self.stack.append((tag, self.getpos()[0]))

    def handle_startendtag(self, tag, attrs):  # <x/>: opens and closes
        self.handle_starttag(tag, attrs)
        if tag not in VOID:
            self.stack.pop()

    def handle_endtag(self, tag):
        if tag in VOID:
            return
        if not self.stack or self.stack[-1][0] != tag:
            open_tag = self.stack[-1] if self.stack else None
            self.errors.append(f"</{tag}> at line {self.getpos()[0]} closes {open_tag}")
            return
        self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)


def parse_page(path, label):
    with open(path, encoding="utf-8") as f:
        page = f.read()
    parser = StrictParser()
    parser.feed(page)
    parser.close()
    checks.check(not parser.errors, f"{label}: markup problems {parser.errors[:5]}")
    checks.check(not parser.stack, f"{label}: elements left open {parser.stack[:5]}")
    checks.check(page.startswith("<!DOCTYPE html>"), f"{label}: starts with the doctype")
    bad = [a for a in parser.addresses if not (a.startswith("#") or a.startswith("data:image/png;base64,"))]
    checks.check(not bad, f"{label}: addresses that are neither #ids nor data: images: {bad[:3]}")
    for anchor in [a[1:] for a in parser.addresses if a.startswith("#")]:
        checks.check(anchor in parser.ids, f"{label}: link to #{anchor} has no target")
    outside = [m for m in re.findall(r"https?://[^\s\"'<>)]+", page) if m != SVG_NS]
    checks.check(not outside, f"{label}: network addresses in the page: {outside[:3]}")
    checks.check("@import" not in page and "url(" not in page, f"{label}: CSS fetches nothing")

    svgs = re.findall(r"<svg\b.*?</svg>", page, flags=re.S)
    roots = []
    for i, svg in enumerate(svgs):
        try:
            root = ET.fromstring(svg)
        except ET.ParseError as error:
            checks.check(False, f"{label}: SVG {i} is not XML: {error}")
            continue
        checks.check(root.tag == f"{{{SVG_NS}}}svg", f"{label}: SVG {i} root is {root.tag}")
        checks.check(root.get("viewBox") and root.get("aria-label"), f"{label}: SVG {i} has viewBox and label")
        roots.append(root)
    return page, " ".join("".join(parser.text).split()), roots


def svg_with_label(roots, start):
    found = [r for r in roots if r.get("aria-label", "").startswith(start)]
    return found[0] if found else None


def elements(root, tag):
    return root.iter(f"{{{SVG_NS}}}{tag}")


def svg_texts(root):
    return [t.text for t in elements(root, "text")]


def check_sample(page, text, roots):
    for section in ("findings", "efficiency", "comparisons", "runs", "confusion", "calibration", "curves",
                    "previews", "failed", "design", "setup"):
        checks.check(f'id="{section}"' in page, f"section {section} present")
    # 1 label efficiency + 3 run panels + 2 confusion + 2 reliability + 1 training curves.
    checks.check(len(roots) == 9, f"9 charts, found {len(roots)}")

    # Sentences as the statistics allow: interval above zero and confirmed; above zero but not
    # confirmed after Holm; spanning zero; below zero (the baseline wins).
    expected = [
        "With 5 labels per class, pretrained beats scratch by 0.08 macro F1 (95 % interval 0.03 to 0.13, "
        "Wilcoxon p = 0.004, Holm-adjusted p = 0.016, 9 paired runs).",
        "With 15 labels per class, pretrained scores 0.05 macro F1 above scratch (95 % interval 0.01 to 0.09), "
        "but the Wilcoxon test does not confirm it after Holm's adjustment for several comparisons "
        "(adjusted p = 0.081, unadjusted 0.027, 9 paired runs).",
        "With all labels, there is no evidence of a difference in macro F1 between pretrained and scratch "
        "(pretrained minus scratch +0.01, 95 % interval -0.02 to 0.04, Wilcoxon p = 0.43, Holm-adjusted "
        "p = 0.86, 9 paired runs).",
        "With 5 labels per class, logistic 3x3 beats pretrained by 0.05 macro F1 (95 % interval 0.01 to 0.09, "
        "Wilcoxon p = 0.008, Holm-adjusted p = 0.023, 9 paired runs).",
        "With 5 labels per class, the best pixel baseline is logistic 3x3 at 0.69 macro F1. No deep arm beats it: "
        "pretrained 0.63 (paired difference -0.05, 95 % interval -0.09 to -0.01), scratch 0.56, probe 0.60, "
        "ensemble 0.63.",
        "exactly one member of ensemble (pretrained and scratch) is wrong on 18 % of 387 pooled test chips.",
    ]
    for sentence in expected:
        checks.check(sentence in text, f"report says: {sentence}")
    checks.check("pretrained beats scratch by 0.05" not in text, "an unconfirmed gap is never called 'beats'")

    # Markup characters in names arrive as text, never as markup.
    checks.check("dry <grass>" in text and "reed & sedge" in text, "class names escaped and shown")
    checks.check("<grass>" not in page and "<invented numbers>" not in page, "no raw markup from names")
    checks.check("Aldery marsh: pretrained vs scratch & baselines <invented numbers>" in text, "title shown")
    checks.check("budgets < 20 per class & 'all'" in text, "config text shown verbatim")
    checks.check("The split is random" in text, "warning shown")
    for needle in ("decision support for planning surveillance", "not proof of the presence or absence",
                   "public-health authority"):
        checks.check(needle in text, f"cautions say '{needle}'")
    footer = page[page.find("<footer"):]
    checks.check("public-health authority" in footer, "cautions sit in the footer")
    for version in ("1.13.1", "3.6.2", "4.6.0", "0.1.0-test"):
        checks.check(version in text, f"version {version} shown")

    # The preview is the PNG itself, embedded; the missing one is said to be missing.
    with open(os.path.join(OUT, "preview.png"), "rb") as f:
        png = f.read()
    uris = re.findall(r'src="data:image/png;base64,([A-Za-z0-9+/=]+)"', page)
    checks.check(len(uris) == 1 and base64.b64decode(uris[0]) == png, "preview embedded byte for byte")
    checks.check("Preview not found or not a PNG: missing.png" in text, "missing preview reported")
    checks.check("true colour | predicted" in text, "preview labelled true colour | predicted")

    efficiency = svg_with_label(roots, "Label efficiency")
    checks.check(efficiency is not None, "label efficiency chart present")
    if efficiency is not None:
        lines = list(elements(efficiency, "polyline"))
        dashed = [p for p in lines if p.get("stroke-dasharray")]
        checks.check(len(lines) == 6 and len(dashed) == 2, f"a line per arm, baselines dashed ({len(lines)}, {len(dashed)})")
        bands = [p for p in elements(efficiency, "polygon") if p.get("fill-opacity")]
        checks.check(len(bands) == 6, f"an interval band per arm ({len(bands)})")
        labels = svg_texts(efficiency)
        for label in ("5", "15", "all (62)", "labels per class (log scale)", "logistic 3x3 (pixel baseline)"):
            checks.check(label in labels, f"label efficiency shows '{label}'")

    runs = svg_with_label(roots, "Macro F1 of every run by arm, 5 labels per class")
    if runs is not None:
        markers = [e for e in runs.iter() if e.find(f"{{{SVG_NS}}}title") is not None]
        checks.check(len(markers) == 54, f"54 run markers at 5 per class ({len(markers)})")
        paths = [p for p in elements(runs, "polyline") if len(p.get("points").split()) == 6]
        checks.check(len(paths) == 9, f"9 pairs joined across 6 arms ({len(paths)})")
    else:
        checks.check(False, "run scores chart at 5 per class present")

    confusion = svg_with_label(roots, "Confusion matrix of pretrained")
    if confusion is not None:
        counts = [int(t) for t in svg_texts(confusion) if t.isdigit()]
        checks.check(counts == [88, 6, 4, 2, 9, 61, 22, 3, 3, 18, 70, 14, 1, 2, 16, 83], f"counts in cells {counts}")
        fills = [r.get("fill") for r in elements(confusion, "rect") if r.find(f"{{{SVG_NS}}}title") is not None]
        checks.check(fills[0] != fills[1], "shade follows the share of the row")
    else:
        checks.check(False, "confusion matrix of pretrained present")

    reliability = svg_with_label(roots, "Reliability diagram of pretrained")
    if reliability is not None:
        labels = " ".join(svg_texts(reliability))
        checks.check("before calibration (ECE 0.124)" in labels and "after temperature scaling (ECE 0.041)" in labels,
                     "reliability legend carries both ECEs")
    else:
        checks.check(False, "reliability diagram present")


def check_table():
    with open(os.path.join(OUT, "results.txt"), encoding="utf-8") as f:
        table = f.read()
    flat = " ".join(table.split())
    checks.check("With 5 labels per class, pretrained beats scratch by 0.08 macro F1" in flat, "table: sentence")
    checks.check("no evidence of a difference" in flat, "table: verdict words")
    prose = [line for line in table.splitlines() if not line.startswith(("budget", "---", "5 ", "15 ", "all"))]
    checks.check(all(len(line) <= 100 for line in prose), "table: prose wrapped at 100 characters")
    rows = [line for line in table.splitlines() if line.startswith("5 per class  ")]
    checks.check(len(rows) >= 6, f"table: a row per arm at 5 per class ({len(rows)})")
    checks.check("Caution:" in table and "public-health authority" in flat, "table: cautions")


def find_chromium():
    path = shutil.which("chromium")
    if path:
        return path, ""
    if os.geteuid() != 0 or not shutil.which("apt-get"):
        return None, "chromium is not installed and apt-get cannot run here (not root); install Debian's chromium"
    print("installing Debian's chromium")
    env = dict(os.environ, DEBIAN_FRONTEND="noninteractive")
    subprocess.run(["apt-get", "update", "-qq"], env=env, capture_output=True)
    run = subprocess.run(["apt-get", "install", "-y", "-qq", "--no-install-recommends", "chromium"], env=env,
                         capture_output=True, text=True)
    path = shutil.which("chromium")
    return (path, "") if path else (None, "apt-get install chromium failed: " + run.stderr.strip()[-300:])


def render(chromium, page, png, height=4000):
    with tempfile.TemporaryDirectory() as profile:
        run = subprocess.run(
            [chromium, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
             "--disable-background-networking", "--disable-component-update", "--disable-sync",
             f"--user-data-dir={profile}", f"--screenshot={png}", f"--window-size=1280,{height}",
             "--enable-logging=stderr", "--v=0", "file://" + os.path.abspath(page)],
            capture_output=True, text=True, timeout=180)
    console = [line for line in run.stderr.splitlines() if "Uncaught" in line or "ERROR:CONSOLE" in line]
    return run, console


def check_render():
    chromium, reason = find_chromium()
    if not chromium:
        print("skipped:", reason)
        raise SystemExit(77)
    # The console check itself must catch an error: a page with a script that throws.
    broken = os.path.join(OUT, "broken.html")
    with open(broken, "w") as f:
        f.write("<!DOCTYPE html><html><body><script>undefined_function();</script></body></html>")
    _, console = render(chromium, broken, os.path.join(OUT, "broken.png"), 600)
    checks.check(console, "the console check catches an uncaught script error")

    import numpy as np
    from skimage import io
    for name in ("report", "minimal"):
        png = os.path.join(OUT, f"{name}.png")
        run, console = render(chromium, os.path.join(OUT, f"{name}.html"), png)
        checks.check(run.returncode == 0 and os.path.exists(png), f"{name}: chromium rendered ({run.returncode})")
        checks.check(not console, f"{name}: no console errors {console[:3]}")
        if not os.path.exists(png):
            continue
        image = io.imread(png)[:, :, :3].astype(int)
        checks.check(image.shape[:2] == (4000, 1280), f"{name}: screenshot size {image.shape}")
        ink = (image.sum(axis=2) < 600).mean()
        checks.check(0.01 < ink < 0.6, f"{name}: page drawn, neither blank nor filled ({ink:.3f} of pixels inked)")
        if name == "report":
            # The deep arms' blue (#0072B2) and the header's dark blue (#1f3a4d) are on screen.
            blue = (np.abs(image - [0x00, 0x72, 0xB2]).sum(axis=2) < 30).sum()
            header = (np.abs(image[:60] - [0x1f, 0x3a, 0x4d]).sum(axis=2) < 12).mean()
            checks.check(blue > 200, f"report: chart colours drawn ({blue} blue pixels)")
            checks.check(header > 0.5, f"report: header band drawn ({header:.2f})")
        print(f"{name}: rendered to {png}")


os.makedirs(OUT, exist_ok=True)
tool = subprocess.run([TOOL, OUT], capture_output=True, text=True)
checks.check(tool.returncode == 0, f"sample report written ({tool.stderr.strip()})")
if tool.returncode == 0:
    page, text, roots = parse_page(os.path.join(OUT, "report.html"), "report")
    check_sample(page, text, roots)
    minimal, minimal_text, minimal_roots = parse_page(os.path.join(OUT, "minimal.html"), "minimal")
    checks.check('id="comparisons"' not in minimal, "minimal: no comparisons section without comparisons")
    checks.check("The study made no paired comparisons." in minimal_text, "minimal: says no comparisons")
    efficiency = svg_with_label(minimal_roots, "Label efficiency")
    checks.check(efficiency is not None and {"25 %", "all", "label budget"} <= set(svg_texts(efficiency)),
                 "minimal: budgets without label counts evenly spaced")
    check_table()
    if RENDER:
        check_render()
checks.finish()
