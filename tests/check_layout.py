#!/usr/bin/env python3
"""check_layout.py - the figures and the report laid out in a real browser.

Generated campaigns of 1, 3, 14, 20 and 40 samples (ids of realistic length,
some with %, &, _ and ^) go through `arrank plot` and `arrank report`; every
SVG is opened in headless Chromium (`--dump-dom` of a page that inlines the
figures and a measuring script) and every text element's glyph box is
measured: inside the canvas, no two overlapping, each axis frame (the plot
area's own fill, plot_style.h ARRANK_PLOT_AREA_FILL) with numbered ticks below
it and tick labels at its left, the plot areas together at least 30 % of the
width and of the height.  The report is rendered at 800 and 1280 px (no
element wider than the window, except inside a box that scrolls) and printed
to PDF (pages at most 3 + one per sample in detail).  A deliberately broken
figure must fail each measure, so the check can fail.

Env: ARRANK (program).  Needs chromium and gnuplot.  Prints TAP: 'ok'/'not
ok' lines, the plan last.
"""
import json
import math
import os
import random
import re
import shutil
import subprocess
import sys
import tempfile

ARRANK = os.environ.get("ARRANK", "build/arrank")
CHROME = shutil.which("chromium") or "/usr/bin/chromium"
R_J_MOL_K = 8.31446261815324  # CODATA 2018 molar gas constant
results = []


def ok(name, cond, detail=""):
    results.append(bool(cond))
    print("%s %d - %s" % ("ok" if cond else "not ok", len(results), name))
    if not cond and detail:
        for line in str(detail).splitlines()[:8]:
            print("# " + line)


# ids as people write them: supports, loadings, batches; some with % & _ ^
STEMS = ["Ni/Al2O3", "Pt_1 on SiO2", "Cu-ZnO & Al2O3", "IW 2 wt% Ni", "Co^2 ZSM-5",
         "Pd/C batch", "Ru_TiO2 calc. 500", "Fe-Mn 5 wt% spinel", "Rh on CeO2 & ZrO2",
         "NiMo^red sulfided", "Ag_SiO2 fresh", "Au/TiO2 P25"]


def make_campaign(folder, n, rng):
    os.makedirs(folder)
    with open(os.path.join(folder, "campaign.ini"), "w") as f:
        f.write("[campaign]\ntitle = layout check, %d samples\n"
                "operating_temperature = 270 degC\nrate_unit = umol/(g*s)\n" % n)
    for k in range(n):
        sid = "L%02d %s" % (k + 1, STEMS[k % len(STEMS)])
        if k % 5 == 4:
            sid += " repeat %d" % (k // 5)
        ea = rng.uniform(60e3, 130e3)
        ln_r_ref = rng.uniform(-1.5, 1.5)  # ln r at 260 degC
        t0 = rng.uniform(215, 235)
        m = rng.randint(6, 9)
        # the 3-sample campaign's first sample also has a time on stream,
        # its temperatures up in every other step and back (so that time
        # does not follow temperature), losing 1 %/h: the rate against time
        # on stream figure is measured too
        tos = n == 3 and k == 0
        order = list(range(0, m, 2)) + list(range(m - 1 - (m % 2 == 1), 0, -2)) if tos \
            else list(range(m))
        with open(os.path.join(folder, "s%02d.csv" % (k + 1)), "w") as f:
            f.write("# sample = %s\nT [degC],rate [umol/(g*s)]%s\n"
                    % (sid, ",time_on_stream [h]" if tos else ""))
            for step, j in enumerate(order):
                t_c = t0 + 10 * j
                t_k = t_c + 273.15
                ln_r = ln_r_ref - ea / R_J_MOL_K * (1 / t_k - 1 / 533.15)
                if tos:
                    ln_r -= 0.01 * (2 * step + 1)
                f.write("%.1f,%.5g%s\n" % (t_c, math.exp(ln_r + rng.gauss(0, 0.04)),
                                           ",%d" % (2 * step + 1) if tos else ""))


MEASURE_JS = r"""
function num(t) { return /^[\u2212\-]?[0-9]+([.,][0-9]+)?([eE][\u2212\-+]?[0-9]+)?$/.test(t.trim()); }
function measure(svg) {
  var s = svg.getBoundingClientRect(), out = {name: svg.getAttribute('data-name'),
    w: s.width, h: s.height, outside: [], overlaps: [], frames: [], texts: 0};
  var boxes = [];
  svg.querySelectorAll('text').forEach(function (t) {
    var txt = t.textContent;
    if (!txt.trim()) return;
    var r = t.getBoundingClientRect();
    if (r.width === 0 && r.height === 0) return;
    var b = {t: txt, l: r.left - s.left, r: r.right - s.left, top: r.top - s.top,
             bot: r.bottom - s.top};
    boxes.push(b);
    if (b.l < -0.5 || b.top < -0.5 || b.r > s.width + 0.5 || b.bot > s.height + 0.5)
      out.outside.push(txt);
  });
  out.texts = boxes.length;
  for (var i = 0; i < boxes.length; i++)
    for (var j = i + 1; j < boxes.length; j++) {
      var a = boxes[i], c = boxes[j];
      var ox = Math.min(a.r, c.r) - Math.max(a.l, c.l), oy = Math.min(a.bot, c.bot) - Math.max(a.top, c.top);
      if (ox > 1 && oy > 1) out.overlaps.push(a.t + ' | ' + c.t);
    }
  svg.querySelectorAll('polygon, path').forEach(function (p) {
    var fill = (p.getAttribute('fill') || '').replace(/\s/g, '');
    if (fill !== 'rgb(252,252,253)') return;
    var r = p.getBoundingClientRect();
    var f = {l: r.left - s.left, r: r.right - s.left, top: r.top - s.top, bot: r.bottom - s.top,
             xnum: 0, xtext: 0, ylab: 0, ynum: 0};
    boxes.forEach(function (b) {
      var cx = (b.l + b.r) / 2, cy = (b.top + b.bot) / 2;
      if (num(b.t) && cx >= f.l - 2 && cx <= f.r + 2 && b.top >= f.bot - 2 && b.top <= f.bot + 40)
        f.xnum++;
      if (cx >= f.l - 2 && cx <= f.r + 2 && b.top >= f.bot - 2 && b.top <= f.bot + 40)
        f.xtext++;
      if (cy >= f.top - 4 && cy <= f.bot + 4 && b.r <= f.l + 2 && b.r >= f.l - 30)
        { f.ylab++; if (num(b.t)) f.ynum++; }
    });
    out.frames.push(f);
  });
  return out;
}
var res = [];
document.querySelectorAll('svg[data-name]').forEach(function (svg) { res.push(measure(svg)); });
document.getElementById('out').textContent = JSON.stringify(res);
"""

REPORT_JS = r"""
var W = document.documentElement.clientWidth, wide = [];
function scrolls(e) {
  for (var p = e.parentElement; p; p = p.parentElement) {
    var o = getComputedStyle(p).overflowX;
    if (o === 'auto' || o === 'scroll') return true;
  }
  return false;
}
document.querySelectorAll('body *').forEach(function (e) {
  if (e.closest('svg') && e.tagName.toLowerCase() !== 'svg') return;
  var r = e.getBoundingClientRect();
  if (r.right > W + 1 && !scrolls(e)) wide.push(e.tagName + ' ' + Math.round(r.right));
});
var pre = document.createElement('pre');
pre.id = 'out';
pre.textContent = JSON.stringify({W: W, scroll: document.documentElement.scrollWidth, wide: wide.slice(0, 10)});
document.body.appendChild(pre);
"""


def chrome(tmp, args):
    prof = tempfile.mkdtemp(dir=tmp, prefix="profile-")
    cmd = [CHROME, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           "--user-data-dir=" + prof] + args
    p = subprocess.run(cmd, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, timeout=120)
    return p.stdout.decode("utf-8", "replace")


def svg_page(svgs, path):
    parts = ["<!DOCTYPE html><html><head><meta charset='utf-8'></head><body>"]
    for name, text in svgs:
        text = re.sub(r"^<\?xml[^>]*>\s*", "", text)
        text = text.replace("<svg", "<svg data-name='%s'" % name, 1)
        parts.append("<div>%s</div>" % text)
    parts.append("<pre id='out'></pre><script>%s</script></body></html>" % MEASURE_JS)
    with open(path, "w", encoding="utf-8") as f:
        f.write("".join(parts))


def measure_svgs(tmp, svgs, tag):
    page = os.path.join(tmp, "page-%s.html" % tag)
    svg_page(svgs, page)
    dom = chrome(tmp, ["--window-size=1400,1000", "--dump-dom", "file://" + page])
    m = re.search(r"<pre id=\"out\">(.*?)</pre>", dom, re.S)
    if not m:
        return None
    import html
    return json.loads(html.unescape(m.group(1)))


def judge(fig, categories_x=False):
    """The problems of one measured figure, as short strings.  categories_x:
    the x axis names categories (compare's two campaigns), so the ticks below
    carry names and the numbered ticks are the ones at the left."""
    bad = []
    if fig["outside"]:
        bad.append("text outside the canvas: " + "; ".join(fig["outside"][:3]))
    if fig["overlaps"]:
        bad.append("overlapping text: " + "; ".join(fig["overlaps"][:3]))
    if not fig["frames"]:
        bad.append("no axis frame")
    for f in fig["frames"]:
        if categories_x:
            if f["xtext"] < 2 or f["ynum"] < 2:
                bad.append("a frame with %d names below it and %d numbered ticks at its left"
                           % (f["xtext"], f["ynum"]))
        elif f["xnum"] < 2:
            bad.append("a frame with %d numbered ticks below it" % f["xnum"])
        if f["ylab"] < 1:
            bad.append("a frame without tick labels at its left")
    if fig["frames"]:
        w = max(f["r"] for f in fig["frames"]) - min(f["l"] for f in fig["frames"])
        h = max(f["bot"] for f in fig["frames"]) - min(f["top"] for f in fig["frames"])
        if w < 0.3 * fig["w"] or h < 0.3 * fig["h"]:
            bad.append("plot area %.0f %% x %.0f %% of the canvas" % (100 * w / fig["w"],
                                                                    100 * h / fig["h"]))
    return bad


# The program's own spellings that must not reach a reader (issue 15): the
# unit as the files write it, option-like names, flag names.
PROGRAM_WORDS = ["umol/(g*s)", "T_op", "T_iso", "T_hm", "high_conversion", "few_points",
                 "narrow_range", "mixed_basis", "poor_fit", "low_ea", "gnuplot_plot"]


def reader_text_svg(svg):
    """What a reader sees of an SVG: its texts and its titles (tooltips)."""
    import html
    parts = re.findall(r"<text[^>]*>(.*?)</text>", svg, re.S) + \
        re.findall(r"<title>(.*?)</title>", svg, re.S)
    return html.unescape(re.sub(r"<[^>]+>", "", " | ".join(parts)))


def reader_text_html(page):
    """What a reader sees of the report, leaving out <code> (file names, the
    command line) and the style sheet."""
    import html
    page = re.sub(r"<(code|style)[^>]*>.*?</\1>", " ", page, flags=re.S)
    page = re.sub(r"<text[^>]*>(.*?)</text>", r" \1 ", page, flags=re.S)
    return html.unescape(re.sub(r"<[^>]+>", " ", page))


def program_words(text):
    return [w for w in PROGRAM_WORDS if w in text]


def looks_agree(page):
    """One sample, one look: each sample's mark in the ranking table is the
    mark (fill colour and shape) at its section's heading, and its colour is
    drawn in its diagnostics figure.  Returns the samples that disagree."""
    def mark(html_part):
        m = re.search(r'<svg class="swatch"[^>]*fill="(#[0-9A-Fa-f]{6})"[^>]*>(<[a-z]+)', html_part)
        return (m.group(1).upper(), m.group(2)) if m else None
    table = page.split("<h2>Ranking</h2>", 1)[1].split("</table>", 1)[0]
    in_table = {}
    for row in re.findall(r"<tr>(.*?)</tr>", table, re.S):
        name = re.search(r'</svg>([^<]*)</td>', row)
        if name:
            in_table[name.group(1)] = mark(row)
    bad = []
    for sec in page.split('<section class="sample">')[1:]:
        head = sec.split("</h3>", 1)[0]
        name = re.search(r"</svg>([^<]*)$", head).group(1)
        look = mark(head)
        rgb = "rgb(%d, %d, %d)" % tuple(int(look[0][k:k + 2], 16) for k in (1, 3, 5)) if look else ""
        drawn = re.sub(r"\(\s*(\d+),\s*(\d+),\s*(\d+)\)", r"(\1, \2, \3)", sec)
        has_figure = "<figure>" in sec  # a sample not fitted has none
        if look is None or in_table.get(name) != look or (has_figure and rgb not in drawn):
            bad.append(name)
    return bad, len(in_table)


def pdf_pages(path):
    data = open(path, "rb").read()
    return len(re.findall(rb"/Type\s*/Page[^s]", data))


def check_report(tmp, rep, n_detail, tag):
    html_text = open(rep, encoding="utf-8").read()
    probe = os.path.join(tmp, "probe-%s.html" % tag)
    with open(probe, "w", encoding="utf-8") as f:
        f.write(html_text.replace("</body>", "<script>%s</script></body>" % REPORT_JS))
    for width in (800, 1280):
        dom = chrome(tmp, ["--window-size=%d,900" % width, "--dump-dom", "file://" + probe])
        m = re.search(r"<pre id=\"out\">(.*?)</pre>", dom, re.S)
        import html
        got = json.loads(html.unescape(m.group(1))) if m else None
        ok("%s report at %d px: nothing wider than the window" % (tag, width),
           got and not got["wide"] and got["scroll"] <= got["W"], got)
    pdf = os.path.join(tmp, "report-%s.pdf" % tag)
    chrome(tmp, ["--print-to-pdf=" + pdf, "--no-pdf-header-footer", "file://" + rep])
    pages = pdf_pages(pdf) if os.path.exists(pdf) else 0
    ok("%s report prints on %d pages (at most 3 + %d)" % (tag, pages, n_detail),
       0 < pages <= 3 + n_detail)


BROKEN = r"""
set terminal svg size 600,400 font 'sans-serif,16'
set output '%s'
set lmargin at screen 0.80
set rmargin at screen 0.95
set object 90 rect from graph 0, graph 0 to graph 1, graph 1 behind fc rgb '#fcfcfd' fs solid 1.0 noborder
unset xtics
set label 'a label that runs off the right edge of the canvas' at screen 0.7, screen 0.5
set label 'two labels on one spot' at screen 0.1, screen 0.9
set label 'two labels on one spot' at screen 0.12, screen 0.9
plot sin(x) notitle
"""


def shifted_copy(camp, dest, factor):
    """The campaign again with every rate times factor and its own title."""
    os.makedirs(dest)
    for name in sorted(os.listdir(camp)):
        text = open(os.path.join(camp, name), encoding="utf-8").read()
        if name == "campaign.ini":
            text = text.replace("title = ", "title = second run of ")
        else:
            lines = text.split("\n")
            for k, line in enumerate(lines):
                cells = line.split(",")
                if len(cells) >= 2 and re.match(r"^[0-9.]+$", cells[0]):
                    cells[1] = "%.5g" % (float(cells[1]) * factor)
                    lines[k] = ",".join(cells)
            text = "\n".join(lines)
        with open(os.path.join(dest, name), "w", encoding="utf-8") as f:
            f.write(text)


def check_compare_plan(tmp, camp):
    """compare.svg of the 14-sample campaign against a copy with its rates
    shifted (the same ids), and plan.svg of it under a maximum temperature."""
    other = camp + "-shifted"
    shifted_copy(camp, other, 0.8)
    runs = [("compare", [ARRANK, "compare", camp, other, "--out", camp + "-cmp"],
             camp + "-cmp/compare.svg"),
            ("plan", [ARRANK, "plan", camp, "--max-temperature", "300C", "--out",
                      camp + "-plan"], camp + "-plan/plan.svg")]
    svgs = []
    for what, cmd, svg in runs:
        os.makedirs(cmd[-1], exist_ok=True)
        p = subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
        ok("14 samples: %s exits 0" % what, p.returncode == 0 and os.path.exists(svg),
           p.stderr.decode("utf-8", "replace"))
        if os.path.exists(svg):
            svgs.append((what, open(svg, encoding="utf-8").read()))
    figs = measure_svgs(tmp, svgs, "cmp-plan") or []
    ok("14 samples: compare.svg and plan.svg measured (%d of 2)" % len(figs), len(figs) == 2)
    for fig in figs:
        bad = judge(fig, categories_x=fig["name"] == "compare")
        ok("14 samples: %s.svg laid out (%d texts, %d frames)" %
           (fig["name"], fig["texts"], len(fig["frames"])), not bad, "\n".join(bad))
    for name, text in svgs:
        leaks = program_words(reader_text_svg(text))
        ok("14 samples: no program spelling in %s.svg" % name, not leaks, leaks)
        title = re.search(r"<title>(.*?)</title>", text, re.S)
        ok("14 samples: %s.svg's <title> names its figure" % name,
           title and title.group(1) and "Gnuplot" not in title.group(1),
           title.group(1) if title else "")


def main():
    if not os.path.exists(CHROME):
        ok("chromium found (apt-get install chromium)", False)
        print("1..%d" % len(results))
        return
    tmp = tempfile.mkdtemp(prefix="arrank-layout-")
    try:
        rng = random.Random(20261203)
        # a deliberately broken figure: each measure must see its fault
        broken = os.path.join(tmp, "broken.svg")
        subprocess.run(["gnuplot"], input=(BROKEN % broken).encode(), check=True,
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        m = measure_svgs(tmp, [("broken", open(broken, encoding="utf-8").read())], "broken")
        bad = judge(m[0]) if m else []
        text = "\n".join(bad)
        ok("broken figure: text outside the canvas is found", "outside the canvas" in text, text)
        ok("broken figure: overlapping text is found", "overlapping text" in text, text)
        ok("broken figure: a frame without numbered ticks is found", "numbered ticks" in text, text)
        ok("broken figure: a plot area under 30 % is found", "plot area" in text, text)
        text = "\n".join(judge(m[0], categories_x=True) if m else [])
        ok("broken figure: a frame without named ticks below it is found (compare's measure)",
           "names below it" in text, text)
        for n in (1, 3, 14, 20, 40):
            camp = os.path.join(tmp, "c%d" % n)
            make_campaign(camp, n, rng)
            out = os.path.join(tmp, "o%d" % n)
            runs = [[ARRANK, "plot", camp, "--out", out]]
            if n == 40:
                runs.append([ARRANK, "plot", camp, "--out", out + "-all", "--show", "40"])
            for cmd in runs:
                p = subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
                ok("%d samples: %s exits 0" % (n, " ".join(cmd[1:2] + cmd[4:])),
                   p.returncode == 0, p.stderr.decode("utf-8", "replace"))
            svgs = []
            for d in [out] + ([out + "-all"] if n == 40 else []):
                for name in sorted(os.listdir(d)):
                    if name.endswith(".svg"):
                        svgs.append((os.path.basename(d) + "/" + name,
                                     open(os.path.join(d, name), encoding="utf-8").read()))
            figs = measure_svgs(tmp, svgs, str(n)) or []
            ok("%d samples: every SVG measured (%d of %d)" % (n, len(figs), len(svgs)),
               len(figs) == len(svgs) and len(figs) >= 3 + n)
            if n == 3:
                ok("3 samples: the rate against time on stream figure is among them",
                   any("/time-on-stream-01-" in name for name, _ in svgs))
            for fig in figs:
                bad = judge(fig)
                ok("%d samples: %s laid out (%d texts, %d frames)" %
                   (n, fig["name"], fig["texts"], len(fig["frames"])), not bad, "\n".join(bad))
            leaks = sorted({w for _, t in svgs for w in program_words(reader_text_svg(t))})
            ok("%d samples: no program spelling in any figure" % n, not leaks, leaks)
            titles = [re.search(r"<title>(.*?)</title>", t, re.S) for _, t in svgs]
            ok("%d samples: every SVG's <title> names its figure" % n,
               all(t and t.group(1) and "Gnuplot" not in t.group(1) for t in titles))
            if n == 14:
                check_compare_plan(tmp, camp)
            rep = os.path.join(tmp, "r%d" % n)
            p = subprocess.run([ARRANK, "report", camp, "--out", rep], stdout=subprocess.DEVNULL,
                               stderr=subprocess.PIPE)
            ok("%d samples: report exits 0" % n, p.returncode == 0, p.stderr)
            check_report(tmp, os.path.join(rep, "report.html"), min(n, 50), "%d samples:" % n)
            page = open(os.path.join(rep, "report.html"), encoding="utf-8").read()
            bad, rows = looks_agree(page)
            ok("%d samples: one look per sample in the table, its section and its figure "
               "(%d rows)" % (n, rows), not bad and rows == n, bad)
            leaks = program_words(reader_text_html(page))
            ok("%d samples: no program spelling in the report" % n, not leaks, leaks)
        # the demo's report: at most 17 pages (3 + its 14 samples)
        demo = os.path.join(os.getcwd(), "campaigns", "zeolite-ni-screen")
        rep = os.path.join(tmp, "rdemo")
        p = subprocess.run([ARRANK, "report", demo, "--out", rep], stdout=subprocess.DEVNULL,
                           stderr=subprocess.PIPE)
        ok("demo: report exits 0", p.returncode == 0, p.stderr)
        check_report(tmp, os.path.join(rep, "report.html"), 14, "demo:")
        # control: a section whose mark has another colour than its table row
        # and its figure is seen, so the look check can fail
        page = open(os.path.join(rep, "report.html"), encoding="utf-8").read()
        at = page.index('<section class="sample">')
        m = re.compile(r'fill="#[0-9A-Fa-f]{6}"').search(page, at)
        other = 'fill="#000001"'
        bad, _ = looks_agree(page[:m.start()] + other + page[m.end():])
        ok("control: a sample whose mark differs from its figure is found (%s)" % bad,
           len(bad) == 1)
        # over 50 samples: a section for the top 50 and the flagged, the rest
        # in one compact table
        n = 60
        camp = os.path.join(tmp, "c%d" % n)
        make_campaign(camp, n, rng)
        rep = os.path.join(tmp, "r%d" % n)
        p = subprocess.run([ARRANK, "report", camp, "--out", rep], stdout=subprocess.DEVNULL,
                           stderr=subprocess.PIPE)
        ok("60 samples: report exits 0", p.returncode == 0, p.stderr)
        subprocess.run([ARRANK, "rank", camp, "--json", os.path.join(tmp, "r60.json")],
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        samples = json.load(open(os.path.join(tmp, "r60.json")))["samples"]
        want = sum(1 for x in samples if (x.get("rank") or 0) and x["rank"] <= 50 or x["flags"])
        page = open(os.path.join(rep, "report.html"), encoding="utf-8").read()
        sections = page.count('<section class="sample">')
        brief = re.search(r'<table class="brief">(.*?)</table>', page, re.S)
        rows = len(re.findall(r"<tr><td", brief.group(1))) if brief else 0
        ok("60 samples: a section for the top 50 and the flagged (%d, from the JSON %d)" %
           (sections, want), sections == want and sections < 60)
        ok("60 samples: the other %d in the compact table" % (60 - want), rows == 60 - want)
        check_report(tmp, os.path.join(rep, "report.html"), sections, "60 samples:")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print("1..%d" % len(results))


if __name__ == "__main__":
    main()
