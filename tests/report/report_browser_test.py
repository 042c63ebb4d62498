"""Browser test of `plateau report` (issue 6): the report of a small end-to-end case opens in
headless Chromium with the network off, logs nothing to the console, holds every figure, and no
figure renders blank. The screenshots stay in the build folder; their paths are printed.

Checks and where their values come from:
- console: the page has no script, so any console line from it is a failure (our own rule;
  lines from Chromium's own chrome:// pages are not the page's);
- network: Chromium runs in a fresh network namespace (`unshare -n`, no interface but a downed
  loopback) when that is allowed, else behind a proxy on a closed port; in both cases the page
  must reference no http(s) resource (the SVG namespace URI is a name, never fetched: SVG 1.1,
  section 5.1);
- figures: the expected set for a two-layer compare of two closures is derived from the report's
  documented sections (harness/report/report.hpp): skill bars, mean PV per layer and closure,
  q-psi per sheltered layer (tiny_2layer.toml names layer 2), transport maps, energy and
  transport series;
- not blank: each figure's screenshot region has at least 3% non-white pixels, and a map at
  least 300 distinct colours, a plot at least 100 saturated pixels (the closures' colours; the
  frame, text and truth are grey or black; our own thresholds: far above what an empty frame
  gives, far below what this case draws).
"""

import argparse
import html.parser
import os
import re
import shutil
import subprocess
import sys
import xml.etree.ElementTree as ET

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from pngread import read_png  # noqa: E402

SKIP = 77


def chromium_binary(source):
    for name in ("chromium", "chromium-browser"):
        p = shutil.which(name)
        if p:
            return p
    # Not installed: the project's set-up installs it (as root); a skip only if that fails.
    deps = os.path.join(source, "scripts", "install-deps")
    if os.geteuid() == 0 and os.path.exists(deps):
        subprocess.run([deps], check=False)
        for name in ("chromium", "chromium-browser"):
            p = shutil.which(name)
            if p:
                return p
    return None


def network_off_prefix():
    try:
        r = subprocess.run(["unshare", "-n", "true"], capture_output=True, timeout=20)
        if r.returncode == 0:
            return ["unshare", "-n"], "a new network namespace (unshare -n)"
    except (OSError, subprocess.TimeoutExpired):
        pass
    return [], "a proxy on a closed port"


def run_chromium(chromium, prefix, url, shot, width, height, profile):
    cmd = prefix + [
        chromium, "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars",
        "--no-first-run", "--disable-extensions", "--disable-background-networking",
        "--proxy-server=127.0.0.1:9", "--proxy-bypass-list=<-loopback>",
        f"--user-data-dir={profile}", "--enable-logging=stderr", "--v=0",
        "--force-device-scale-factor=0.5", f"--window-size={width},{height}",
        f"--screenshot={shot}", url,
    ]
    r = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
    # Console lines of the page (Chromium's own chrome:// pages log too; those are not ours).
    console = [l for l in r.stderr.splitlines()
               if ":CONSOLE" in l and "source: chrome://" not in l and "source: devtools://" not in l]
    if not os.path.exists(shot):
        sys.exit(f"FAIL: chromium wrote no screenshot (exit {r.returncode}):\n{r.stderr[-2000:]}")
    return console


class FigureParser(html.parser.HTMLParser):
    def __init__(self):
        super().__init__()
        self.figures = []
        self.svg_in_figure = 0
        self.captions = 0
        self.scripts = 0
        self.external = []
        self._in_figure = False

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "figure" and "report-figure" in (a.get("class") or ""):
            self.figures.append(a.get("id", ""))
            self._in_figure = True
        if tag == "svg" and self._in_figure:
            self.svg_in_figure += 1
        if tag == "figcaption" and self._in_figure:
            self.captions += 1
        if tag in ("script", "link", "iframe", "img", "object", "embed"):
            self.scripts += 1
        for k, v in attrs:
            if k in ("src", "href") and v and re.match(r"^[a-z]+:", v):
                self.external.append(v)

    def handle_endtag(self, tag):
        if tag == "figure":
            self._in_figure = False


def check(cond, message):
    if not cond:
        sys.exit("FAIL: " + message)
    print("ok   " + message)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--plateau", required=True)
    ap.add_argument("--source", required=True)
    ap.add_argument("--work", required=True)
    o = ap.parse_args()

    chromium = chromium_binary(o.source)
    if chromium is None:
        print("SKIP: chromium is not installed and could not be installed (scripts/install-deps)")
        return SKIP

    work = os.path.abspath(o.work)
    results = os.path.join(work, "results")
    shutil.rmtree(results, ignore_errors=True)
    os.makedirs(work, exist_ok=True)
    case = os.path.join(o.source, "cases", "tiny_2layer.toml")
    r = subprocess.run([o.plateau, "--quiet", "--threads", "2", "compare", case, "-c", "none,eady",
                        "--out", results, "--cache", os.path.join(work, "cache")],
                       capture_output=True, text=True, timeout=180)
    check(r.returncode == 0, f"plateau compare of the tiny case exits 0 (got {r.returncode}: "
                             f"{r.stderr[-800:]})")
    r = subprocess.run([o.plateau, "report", results], capture_output=True, text=True, timeout=60)
    check(r.returncode == 0, f"plateau report exits 0 ({r.stderr[-800:]})")
    page = os.path.join(results, "report.html")
    check(page in r.stdout, "plateau report names the page it wrote")

    # A score folder alone: the report finds the truth through the scorecard's "truth" field.
    score_dir = os.path.join(work, "score")
    shutil.rmtree(score_dir, ignore_errors=True)
    r = subprocess.run([o.plateau, "--quiet", "score", case, "-c", "eady", "--out", score_dir,
                        "--cache", os.path.join(work, "cache")],
                       capture_output=True, text=True, timeout=120)
    check(r.returncode == 0, f"plateau score exits 0 ({r.stderr[-800:]})")
    own = os.path.join(work, "score-report", "page.html")
    r = subprocess.run([o.plateau, "report", score_dir, "--out", own], capture_output=True,
                       text=True, timeout=60)
    check(r.returncode == 0 and os.path.exists(own), f"plateau report --out FILE ({r.stderr})")
    check(os.path.exists(os.path.join(work, "score-report", "figures", "pv-L2-eady.svg")),
          "--out FILE puts figures/ beside FILE")
    check("coarse-grained truth (left)" in open(own, encoding="utf-8").read(),
          "a score folder's report compares with the truth its scorecard names")

    text = open(page, encoding="utf-8").read()
    p = FigureParser()
    p.feed(text)
    expected = ["skill-bars", "pv-L1-none", "pv-L1-eady", "pv-L2-none", "pv-L2-eady", "q-psi-L2",
                "transport-maps", "energy-series", "transport-series"]
    ids = [f[len("fig-"):] for f in p.figures]
    check(sorted(ids) == sorted(expected), f"the page holds exactly the expected figures {expected}"
                                           f" (found {ids})")
    check(p.svg_in_figure == len(ids) and p.captions == len(ids),
          "every figure is an inline SVG with a caption")
    check(p.scripts == 0 and not p.external, "no script, stylesheet, image or external link")
    urls = set(re.findall(r"https?://[^\s\"'<>)]+", text))
    check(urls <= {"http://www.w3.org/2000/svg"},
          f"no http(s) reference except the SVG namespace name (found {sorted(urls)})")

    fig_dir = os.path.join(results, "figures")
    sizes = {}
    for name in expected:
        path = os.path.join(fig_dir, name + ".svg")
        check(os.path.exists(path), f"figures/{name}.svg is written beside the page")
        root = ET.parse(path).getroot()  # raises on malformed XML
        check(root.tag == "{http://www.w3.org/2000/svg}svg", f"{name}.svg is well-formed SVG")
        sizes[name] = (float(root.get("width")), float(root.get("height")))
        labels = [t.text or "" for t in root.iter("{http://www.w3.org/2000/svg}text")]
        if name != "skill-bars":  # skill is dimensionless
            check(any("(" in s and ")" in s for s in labels),
                  f"{name}.svg has an axis title with units in brackets")

    prefix, how = network_off_prefix()
    print(f"     network off by {how}")
    profile = os.path.join(work, "chromium-profile")

    # The page itself: one tall screenshot; it must load quietly and show coloured content.
    total_h = int(sum(h for _, h in sizes.values()) + 160 * len(sizes) + 1200)
    shot = os.path.join(work, "report-page.png")
    if os.path.exists(shot):
        os.remove(shot)
    console = run_chromium(chromium, prefix, "file://" + page, shot, 1280, total_h, profile)
    check(not console, f"no console messages while the page loads ({console[:3]})")
    img = read_png(shot)
    coloured = (img.max(axis=2).astype(int) - img.min(axis=2).astype(int)) > 40
    check(coloured.mean() > 0.02, f"the page screenshot shows coloured figures "
                                  f"({100 * coloured.mean():.1f}% coloured pixels)")
    print(f"     screenshot of the page: {shot}")

    # Every figure at a known place: a grid page of the standalone SVGs, one per row.
    rows = []
    top = 0
    boxes = {}
    for name in expected:
        w, h = sizes[name]
        rows.append(f'<img src="figures/{name}.svg" style="position:absolute;left:0;top:{top}px;'
                    f'width:{w}px;height:{h}px">')
        boxes[name] = (top, w, h)
        top += int(h) + 20
    grid = os.path.join(results, "figure-grid-test.html")
    with open(grid, "w", encoding="utf-8") as f:
        f.write("<!DOCTYPE html><html><head><meta charset='utf-8'><style>body{margin:0;"
                "background:#fff}</style></head><body>" + "".join(rows) + "</body></html>")
    width = int(max(w for w, _ in sizes.values())) + 10
    shot2 = os.path.join(work, "report-figures.png")
    if os.path.exists(shot2):
        os.remove(shot2)
    console = run_chromium(chromium, prefix, "file://" + grid, shot2, width, top + 20, profile)
    check(not console, f"no console messages for the standalone figures ({console[:3]})")
    img = read_png(shot2)
    scale = img.shape[1] / width  # device scale factor 0.5
    for name, (t, w, h) in boxes.items():
        y0, y1 = int(t * scale), int((t + h) * scale)
        region = img[y0:y1, : int(w * scale)]
        non_white = (region.min(axis=2) < 235).mean()
        colours = len(set(map(tuple, region.reshape(-1, 3)[::7].tolist())))
        if name.startswith("pv-") or name.endswith("-maps"):
            # A drawn field: hundreds of colours (an empty frame with labels has a few dozen
            # anti-aliasing greys).
            data_ok = colours >= 300
            what = f"{colours} colours"
        else:
            # Drawn curves, dots or bars in the closures' colours: axes, text, grid and the
            # truth are grey or black, so saturated pixels (max - min channel > 50) are data;
            # the legend's swatches give about 20 at this scale.
            px = region.reshape(-1, 3).astype(int)
            saturated = int(((px.max(axis=1) - px.min(axis=1)) > 50).sum())
            data_ok = saturated >= 100
            what = f"{saturated} saturated pixels"
        check(non_white > 0.03 and data_ok,
              f"{name} is not blank ({100 * non_white:.1f}% non-white, {what})")
    os.remove(grid)
    print(f"     screenshot of every figure: {shot2}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
