"""The review report (issue 5, item 3): one self-contained, printable HTML file with a plan sketch
per cap. Structure is checked with the standard-library HTML parser; rendering is checked in a real
headless Chromium (skipped, with the reason, where Chromium is not installed)."""

from __future__ import annotations

import html
import os
import re
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import pytest
from conftest_report import CAPS, META, base_findings, engine_review, make_review

from checker.caution import CAUTION
from checker.report import write_outputs
from checker.report.svg import cap_sketch

PILES = {c[0]: c[1] for c in CAPS}


class _Tree(HTMLParser):
    """Collects, per sketch (svg[data-cap]), its circles and lines with their classes."""

    def __init__(self):
        super().__init__()
        self.stack: list[str] = []
        self.cap: str | None = None
        self.svg_depth = 0
        self.sketch: dict[str, list[tuple[str, dict]]] = {}
        self.tags: list[tuple[str, dict]] = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append((tag, a))
        if tag == "svg" and "data-cap" in a:
            self.cap = a["data-cap"]
            self.sketch[self.cap] = []
        elif self.cap is not None:
            self.sketch[self.cap].append((tag, a))

    def handle_startendtag(self, tag, attrs):
        self.handle_starttag(tag, attrs)
        if tag == "svg":
            self.cap = None

    def handle_endtag(self, tag):
        if tag == "svg":
            self.cap = None


def _parse(text: str) -> _Tree:
    t = _Tree()
    t.feed(text)
    return t


def _classes(a: dict) -> set[str]:
    return set((a.get("class") or "").split())


def _elements(tree: _Tree, cap: str, tag: str, cls: str) -> list[dict]:
    return [a for (t, a) in tree.sketch[cap] if t == tag and cls in _classes(a)]


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    folder = tmp_path_factory.mktemp("html")
    rv = make_review()
    (path,) = write_outputs(rv, [folder / "report.html"], meta=META)
    return rv, path, path.read_text(encoding="utf-8")


def test_self_contained_no_script_no_network(report):
    _, _, text = report
    assert "<script" not in text.lower()
    assert "<link" not in text.lower()
    assert "@import" not in text
    # the only URL is the SVG namespace name, which is never fetched
    urls = set(re.findall(r"https?://[^\s\"'<>)]+", text))
    assert urls == {"http://www.w3.org/2000/svg"}
    assert 'src="' not in text


def test_caution_summary_and_caps_table(report):
    rv, _, text = report
    assert html.unescape(text).count(CAUTION) >= 2   # top and foot
    assert "never claims that a design is safe" in text
    tree = _parse(text)
    chips = {a["data-severity"] for t, a in tree.tags if "data-severity" in a}
    assert chips == {"unsafe", "non-compliant", "query", "advisory", "ok"}
    rows = [a["data-cap"] for t, a in tree.tags if t == "tr" and "data-cap" in a]
    assert rows == [c[0] for c in CAPS]
    assert 'href="#cap-PC5"' in text and 'id="cap-PC5"' in text
    # the engine's working of a check, its verdict line from the findings row
    tie = [ln.text.strip() for ln in rv.working("PC2") if ln.rule == "tie-steel-x"]
    assert "Working" in text and any(t.startswith("As,req = T/fyd") for t in tie)
    assert tie[-1] == "-> unsafe: As,prov 4825 mm² < As,req 5560 mm² for T = 2418 kN"
    assert all(t in html.unescape(text) for t in tie)


def test_print_css(report):
    _, _, text = report
    assert "@media print" in text and "@page" in text and "size: A4" in text
    assert re.search(r"section\.cap[^{]*\{[^}]*break-before: page", text)


def test_one_sketch_per_cap_with_the_right_piles(report):
    _, _, text = report
    tree = _parse(text)
    assert set(tree.sketch) == set(PILES)
    for cap, n in PILES.items():
        assert len(_elements(tree, cap, "circle", "pile")) == n, cap


def test_highlights_follow_the_findings(report):
    _, _, text = report
    tree = _parse(text)
    # PC1: edge distance -> the four corner piles are equally near the edge; the edge dimension
    assert len(_elements(tree, "PC1", "circle", "edge-hl")) == 4
    edge_dims = _elements(tree, "PC1", "g", "edge")
    assert edge_dims and "hl" in _classes(edge_dims[0]) and edge_dims[0]["data-rule"] == "edge-distance"
    assert "e = 100" in text
    # PC2: short spacing -> the closest pair and the spacing dimension; flat strut -> the struts
    assert len(_elements(tree, "PC2", "circle", "spacing-hl")) == 2
    sp = _elements(tree, "PC2", "g", "spacing")
    assert sp and "hl" in _classes(sp[0])
    assert len([a for a in _elements(tree, "PC2", "line", "strut") if "hl" in _classes(a)]) == 2
    # PC5: piles stand outside the outline -> marked
    assert len(_elements(tree, "PC5", "circle", "outside")) == 6
    # PC4: everything met -> nothing highlighted
    assert not [a for (t, a) in tree.sketch["PC4"] if "hl" in _classes(a)]
    # PC1 spacing is ok -> its spacing dimension is drawn but not highlighted
    sp1 = _elements(tree, "PC1", "g", "spacing")
    assert sp1 and "hl" not in _classes(sp1[0])


def test_sketch_is_to_scale():
    rv = make_review()
    svg = cap_sketch(rv, "PC2")
    tree = _parse(svg)
    (outline,) = _elements(tree, "PC2", "rect", "cap-outline")
    assert float(outline["width"]) == 3300 and float(outline["height"]) == 1500
    piles = _elements(tree, "PC2", "circle", "pile")
    assert sorted(float(a["cx"]) for a in piles) == [-900.0, 900.0]
    assert {float(a["r"]) for a in piles} == {375.0}
    vb = [float(v) for v in re.search(r'viewBox="([^"]+)"', svg).group(1).split()]
    w, h = (float(re.search(r' width="(\d+)"', svg).group(1)), float(re.search(r' height="(\d+)"', svg).group(1)))
    assert abs(vb[2] / vb[3] - w / h) < 0.01   # same scale both ways


def test_cap_without_geometry_still_renders():
    rv = make_review()
    rv.pile_xy.pop("PC3")
    rv.caps.loc[rv.caps["mark"] == "PC3", ["cap_length", "cap_width"]] = float("nan")
    svg = cap_sketch(rv, "PC3")
    assert 'data-cap="PC3"' in svg and "No plan geometry" in svg


def test_marks_are_escaped(tmp_path):
    caps = [("A<1>&\"x", 2, 600, 1800, 3000, 1200, 900, (500, 500, False), 2000, "6H25", "H12@200", 3)]
    rows = [dict(r, cap="A<1>&\"x") for r in base_findings() if r["cap"] == "PC2"]
    rv = make_review(rows, caps)
    (path,) = write_outputs(rv, [tmp_path / "r.html"], meta=META)
    text = path.read_text()
    assert "<1>" not in text
    tree = _parse(text)
    assert len(_elements(tree, 'A<1>&"x', "circle", "pile")) == 2


# --------------------------------------------------------------------------------------------
# a real browser

def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser", "google-chrome", "chrome"):
        p = shutil.which(name)
        if p:
            return p
    return "/usr/bin/chromium" if os.path.exists("/usr/bin/chromium") else None


CHROMIUM = _chromium()
needs_chromium = pytest.mark.skipif(
    CHROMIUM is None,
    reason="Chromium is not installed (apt-get install chromium; .ci installs it where it can)",
)


def _run_chromium(tmp_path: Path, *args: str) -> subprocess.CompletedProcess:
    profile = tmp_path / "chromium-profile"
    profile.mkdir(exist_ok=True)
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
           "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-extensions",
           f"--user-data-dir={profile}", "--enable-logging=stderr", "--v=0", *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=120)


@needs_chromium
def test_renders_in_chromium_with_the_right_piles(report, tmp_path):
    _, path, _ = report
    res = _run_chromium(tmp_path, "--dump-dom", path.resolve().as_uri())
    assert res.returncode == 0, res.stderr[-2000:]
    dom = res.stdout
    assert "</footer>" in dom, "the browser did not parse the whole document"
    assert "Uncaught" not in res.stderr and ":CONSOLE(" not in res.stderr
    tree = _parse(dom)
    for cap, n in PILES.items():
        assert len(_elements(tree, cap, "circle", "pile")) == n, cap
    # the known cap: PC5 has six piles, all outside the outline
    assert len(_elements(tree, "PC5", "circle", "outside")) == 6


@needs_chromium
def test_prints_one_cap_per_page(report, tmp_path):
    _, path, _ = report
    pdf = tmp_path / "report.pdf"
    res = _run_chromium(tmp_path, "--no-pdf-header-footer", f"--print-to-pdf={pdf}", path.resolve().as_uri())
    assert res.returncode == 0 and pdf.exists(), res.stderr[-2000:]
    data = pdf.read_bytes()
    pages = len(re.findall(rb"/Type\s*/Page[^s]", data))
    # summary page + one page per cap + the rejected rows page
    assert pages >= 1 + len(PILES) + 1


@needs_chromium
def test_screenshot(report, tmp_path):
    _, path, _ = report
    png = tmp_path / "report.png"
    res = _run_chromium(tmp_path, "--window-size=1100,1600", f"--screenshot={png}", path.resolve().as_uri())
    assert res.returncode == 0 and png.exists(), res.stderr[-2000:]
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 20_000


def test_revision_report_lists_comments_of_removed_caps(tmp_path):
    from conftest_report import without_cap

    from checker.revision import carry_over, read_previous_sheet

    (s1,) = write_outputs(make_review(), [tmp_path / "c.xlsx"], meta=META)
    wb = __import__("openpyxl").load_workbook(s1)
    ws = wb["Comments"]
    head = {c.value: c.column for c in ws[2] if c.value}
    for r in range(3, ws.max_row + 1):
        if ws.cell(row=r, column=head["Key"]).value == "PC3/pile-embedment":
            ws.cell(row=r, column=head["Designer response"]).value = "Embedment 100 mm <see note>"
    wb.save(s1)
    rows = [r for r in base_findings() if r["cap"] != "PC3"]
    rv2 = make_review(rows, without_cap(CAPS, "PC3"))
    res = carry_over(rv2, read_previous_sheet(s1))
    (page,) = write_outputs(rv2, [tmp_path / "r.html"], meta=META, previous=res)
    text = page.read_text()
    assert "Comments not tied to a cap in this submission" in text
    assert "Embedment 100 mm &lt;see note&gt;" in text
    assert "superseded in revision 2: cap PC3 no longer in the schedule" in text
    assert html.escape(res.summary(), quote=False) in text or res.summary() in html.unescape(text)
    tree = _parse(text)
    assert "PC3" not in tree.sketch and len(tree.sketch) == 4


def test_large_schedules_keep_the_worst_caps_in_detail(tmp_path, monkeypatch):
    import checker.report.html as html_mod

    monkeypatch.setattr(html_mod, "HTML_MAX_CAP_SECTIONS", 2)
    (path,) = write_outputs(make_review(), [tmp_path / "r.html"], meta=META)
    text = path.read_text()
    tree = _parse(text)
    assert set(tree.sketch) == {"PC2", "PC5"}           # the two unsafe caps
    assert "for 2 of 5 caps, worst first" in text
    rows = [a["data-cap"] for t, a in tree.tags if t == "tr" and "data-cap" in a]
    assert rows == [c[0] for c in CAPS]                # the table still lists every cap


def test_engine_review_report_mentions_every_cap(tmp_path):
    """On the engine's own Review of the invented caps: every cap has its row in the table, its
    section and its sketch with the piles the engine placed; the rejected row's mark is listed."""
    rv = engine_review()
    (path,) = write_outputs(rv, [tmp_path / "r.html"], meta=META)
    text = path.read_text(encoding="utf-8")
    tree = _parse(text)
    marks = rv.caps["mark"].astype(str).tolist()
    assert marks == [c[0] for c in CAPS]
    rows = [a["data-cap"] for t, a in tree.tags if t == "tr" and "data-cap" in a]
    assert sorted(rows) == sorted(marks)
    for m in marks:
        assert f'id="cap-{m}"' in text and f'href="#cap-{m}"' in text, m
        assert len(_elements(tree, m, "circle", "pile")) == len(rv.pile_xy[m]) == PILES[m], m
    assert "PC9" in text
