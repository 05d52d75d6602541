"""Siting summary: content against the rank JSON, offline HTML, escaping, PDF, exports, CLI."""
from __future__ import annotations

import base64
import dataclasses
import hashlib
import html
import io
import json
import os
import re
import shutil
import subprocess
from contextlib import redirect_stdout
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy.special import gamma

from engine.core import __version__
from engine import cli
from engine.chain import pipeline
from engine import report
from engine.chain import columns as contract
from engine.chain.documents import export_names
from engine.io import sitefile
from engine.energy.aep import HOURS_PER_YEAR

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
ARTIFACTS = ROOT / "test-artifacts"
STAMP = "2026-03-04T05:06:07Z"
STAMP_TEXT = "2026-03-04 05:06:07 UTC"


class _Doc(HTMLParser):
    """Collects tags with their attributes, table cells by table id, and all text."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags, self.tables, self.text = [], {}, []
        self._table, self._row, self._cell = None, None, None

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        self.tags.append((tag, attrs))
        if tag == "table":
            self._table = attrs.get("id")
            self.tables[self._table] = []
        elif tag == "tr" and self._table:
            self._row = []
        elif tag in ("td", "th") and self._row is not None:
            self._cell = []

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._cell is not None:
            self._row.append("".join(self._cell))
            self._cell = None
        elif tag == "tr" and self._row is not None:
            self.tables[self._table].append(self._row)
            self._row = None
        elif tag == "table":
            self._table = None

    def handle_data(self, data):
        self.text.append(data)
        if self._cell is not None:
            self._cell.append(data)


def _parse(text: str) -> _Doc:
    d = _Doc()
    d.feed(text)
    d.close()
    return d


def _cli_stdout(argv) -> str:
    buf = io.StringIO()
    with redirect_stdout(buf):
        assert cli.main(argv) == 0
    return buf.getvalue()


def _pdf_text(pdf: bytes, tmp_path) -> str:
    exe = shutil.which("pdftotext")
    if exe is None:
        pytest.skip("pdftotext (poppler-utils) is not installed")
    f = tmp_path / "s.pdf"
    f.write_bytes(pdf)
    return subprocess.run([exe, "-layout", str(f), "-"], check=True, capture_output=True,
                          text=True).stdout


@pytest.fixture(scope="module")
def demo():
    """The demo site evaluated, its summary, HTML and PDF (fixed time stamp)."""
    ev = pipeline.evaluate(sitefile.load(DEMO))
    s = report.build_summary(ev, assessor="R. Quill", notes="Checked on a calm day.",
                             generated_at=STAMP)
    return {"ev": ev, "summary": s, "html": report.render_html(s), "pdf": report.render_pdf(s)}


@pytest.fixture(scope="module")
def rank_json_text():
    """What ``python -m engine rank --format json`` prints for the demo site."""
    return _cli_stdout(["rank", str(DEMO), "--format", "json"])


def test_every_section_present(demo, tmp_path):
    """The summary has every section, in order, in the content, the HTML and the PDF."""
    s = demo["summary"]
    assert tuple(x.key for x in s.sections) == report.SECTION_KEYS
    doc = _parse(demo["html"])
    ids = [a.get("id") for t, a in doc.tags if t == "section"]
    assert ids == list(report.SECTION_KEYS)
    for key in ("plan", "wind-rose", "profile", "yield"):  # the four charts of the issue
        figs = [a for t, a in doc.tags if t == "figure" and a.get("id") == f"figure-{key}"]
        assert len(figs) == 1 and "missing" not in figs[0].get("class", ""), key
    text = _pdf_text(demo["pdf"], tmp_path)
    flat = " ".join(text.split())
    for sec in s.sections:
        assert sec.heading in flat
    assert [x.number for x in s.sections] == [str(i) for i in range(1, 9)] + list("ABCDEF")
    for needle in ("R. Quill", STAMP_TEXT, "Checked on a calm day.", s.site_sha256[:16]):
        assert needle in flat and needle in demo["html"]


def test_ranking_numbers_match_rank_json(demo, rank_json_text):
    """Every ranked row shown equals the rank command's JSON, formatted as documented."""
    truth = json.loads(rank_json_text)["positions"]  # the rank command is the outside truth
    doc = _parse(demo["html"])
    rows = doc.tables["table-ranking"]
    header, body = rows[0], rows[1:]
    assert len(body) == len(truth)
    t = demo["summary"].table("ranking")
    assert list(t.columns) == header
    names = [c.name for c in contract.COLUMNS + contract.DERIVED]
    cols = {report.column_header(c, cur): c for c in names for cur in ("", "EUR")}
    for shown, want in zip(body, truth):
        for head, cell in zip(header, shown):
            col = cols[head]
            if col == "status":
                assert cell == ("excluded" if want["excluded"] else "eligible")
                continue
            assert cell == report.format_cell(col, want.get(col)), (head, want["rank"])
        # Every note of the row is shown once: as a reason for its exclusion or as advice
        # listed with its position.
        reasons = {r[0]: r[3] for r in doc.tables.get("table-exclusions", [[]])[1:]}
        advice = {r[0]: r[1] for r in doc.tables.get("table-advice", [[]])[1:]}
        for flag in want["flags"]:
            assert flag in reasons.get(str(want["rank"]), "") or \
                want["position_id"] in advice.get(flag, ""), (want["rank"], flag)
        # Physics bounds on what is printed: rated power caps the yield (8760 h x rated).
        assert 0.0 <= want["capacity_factor"] <= 1.0
        assert want["aep_kwh"] <= HOURS_PER_YEAR * want["rated_power_kw"] + 1e-9
    # The cost table too; a payback that never comes is +inf in the table and null in JSON.
    cost_rows = doc.tables["table-costs"]
    raw = demo["ev"].table
    for shown, want, (_, row) in zip(cost_rows[1:], truth, raw.iterrows()):
        for head, cell in zip(cost_rows[0], shown):
            col = cols[head]
            assert cell == report.format_cell(col, want.get(col), row[col]), (head, want["rank"])
            if col == "payback_years" and np.isposinf(row[col]):
                assert cell == "never"
    first = next(r for r in truth if not r["excluded"])
    rec = " ".join(b.text for b in demo["summary"].section("recommendation").blocks
                   if isinstance(b, report.Paragraph))
    assert f"{first['turbine_id']} at {first['position_id']} (rank {first['rank']})" in rec
    assert f"{first['aep_kwh']:.0f} kWh" in rec
    assert set(header) >= {"P50 energy (kWh/yr)", "P90 energy, life average (kWh/yr)", "Capacity factor"}


def test_pdf_ranking_rows_match_rank_json(demo, rank_json_text, tmp_path):
    """Each ranked row of the PDF reads rank, ids and numbers as the rank JSON has them."""
    truth = json.loads(rank_json_text)["positions"]
    lines = _pdf_text(demo["pdf"], tmp_path).splitlines()
    for r in truth:
        cells = [str(r["rank"]), r["position_id"], r["turbine_id"],
                 report.format_cell("hub_height_m", r["hub_height_m"]),
                 report.format_cell("mean_speed_ms", r["mean_speed_ms"]),
                 report.format_cell("p50_aep_kwh", r["p50_aep_kwh"]),
                 report.format_cell("p90_aep_kwh", r["p90_aep_kwh"]),
                 report.format_cell("capacity_factor", r["capacity_factor"])]
        pattern = re.compile(r"^\s*" + r"\s+".join(re.escape(c) for c in cells) + r"\s+(eligible|excluded)\s*$")
        assert any(pattern.match(line) for line in lines), r["rank"]
    exe = shutil.which("pdfdetach")
    if exe:
        f = tmp_path / "s.pdf"
        f.write_bytes(demo["pdf"])
        listing = subprocess.run([exe, "-list", str(f)], capture_output=True, text=True,
                                 check=True).stdout
        for suffix in (".perch.json", "-ranking.json", "-ranking.csv", "-effective-climate.csv"):
            assert suffix in listing


def test_cell_formats():
    """Formats print the value rounded to the stated decimals (Python's format, common practice)."""
    assert report.format_cell("aep_kwh", 5685.84) == "5686"
    assert report.format_cell("capacity_factor", 0.12981) == "13.0 %"
    assert report.format_cell("mean_speed_ms", 4.6146) == "4.61"
    assert report.format_cell("p90_aep_kwh", float("nan")) == report.DASH
    assert report.format_cell("p90_aep_kwh", None) == report.DASH
    assert report.format_cell("payback_years", None, float("inf")) == "never"


def test_embedded_data_files_match_exports(demo, rank_json_text):
    """The HTML's data links carry the rank JSON as the CLI prints it and the exact site file."""
    doc = _parse(demo["html"])
    links = {a["download"]: a["href"] for t, a in doc.tags if t == "a" and "download" in a}
    files = {n: base64.b64decode(h.split(",", 1)[1]) for n, h in links.items()}
    rank = next(v for n, v in files.items() if n.endswith("-ranking.json"))
    assert rank.decode("utf-8") == rank_json_text
    site = next(v for n, v in files.items() if n.endswith(".perch.json"))
    # SHA-256 by hashlib, independent of the summary's own hashing.
    assert hashlib.sha256(site).hexdigest() == demo["summary"].site_sha256
    assert sitefile.loads(site) == demo["ev"].assessment
    csv = pd.read_csv(io.BytesIO(next(v for n, v in files.items()
                                      if n.endswith("-ranking.csv"))))
    truth = json.loads(rank_json_text)["positions"]
    assert list(csv["position_id"]) == [r["position_id"] for r in truth]
    np.testing.assert_allclose(csv["aep_kwh"], [r["aep_kwh"] for r in truth], rtol=1e-12)


@pytest.mark.slow
def test_second_run_identical_but_for_timestamp(demo):
    """Same site file and stamp give the same bytes; another stamp changes only the stamp."""
    ev = demo["ev"]
    again = report.build_summary(ev, assessor="R. Quill", notes="Checked on a calm day.",
                                 generated_at=STAMP)
    assert report.render_html(again) == demo["html"]
    assert report.render_pdf(again) == demo["pdf"]
    later = report.build_summary(ev, assessor="R. Quill", notes="Checked on a calm day.",
                                 generated_at="2027-11-12T13:14:15+00:00")
    other = report.render_html(later)
    assert other != demo["html"]
    assert other.replace("2027-11-12 13:14:15 UTC", STAMP_TEXT).replace(
        "2027-11-12T13:14:15Z", "2026-03-04T05:06:07Z") == demo["html"]


def test_html_references_no_external_url(demo):
    """Every src/href is a data: URI or an in-page anchor; nothing loads from anywhere."""
    html_text = demo["html"]
    doc = _parse(html_text)
    refs = [(t, k, v) for t, a in doc.tags for k, v in a.items()
            if k in ("src", "href", "xlink:href", "action", "poster", "srcset", "data")]
    assert refs, "the summary should carry its data files as links"
    for tag, key, value in refs:
        assert value.startswith("data:") or value.startswith("#"), (tag, key, value[:60])
    assert not [t for t, _ in doc.tags if t in ("script", "link", "iframe", "object", "embed",
                                                "img", "base")]
    assert "@import" not in html_text and not re.search(r"url\(\s*['\"]?(?!#)", html_text)
    # The only http(s) text allowed is the SVG namespace names (identifiers, never fetched).
    urls = set(re.findall(r"https?://[^\s\"'<>)]+", html_text))
    assert urls <= {"http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink"}


def test_svg_ids_unique_across_charts(demo):
    """Inline SVG charts keep distinct element ids, so clip paths never point at another chart."""
    ids = re.findall(r'\bid="([^"]+)"', demo["html"])
    assert len(ids) == len(set(ids))
    for ref in re.findall(r"url\(#([^)]+)\)", demo["html"]):
        assert ref in ids


def _hostile(ev):
    a = ev.assessment
    site = dataclasses.replace(a.site, name='<script>alert("x")</script> & Sons',
                               notes="<img src=x onerror=alert(1)> notes")
    pos = list(a.positions)
    pos[0] = dataclasses.replace(pos[0], note="</td><script>bad()</script>")
    return pipeline.evaluate(dataclasses.replace(a, site=site, positions=tuple(pos)))


def test_markup_in_user_text_is_escaped(demo, tmp_path):
    """Site name, notes and assessor with markup appear as text in HTML and PDF, never as tags."""
    ev = _hostile(demo["ev"])
    # Charts left out to keep the test quick: their text is escaped by vl-convert's SVG writer.
    s = report.build_summary(ev, assessor="<b>Eve</b>", notes="<style>*{}</style>",
                             generated_at=STAMP, with_charts=False)
    html_text = report.render_html(s)
    doc = _parse(html_text)
    tags = {t for t, _ in doc.tags}
    assert not tags & {"script", "img", "b"}
    assert [t for t, _ in doc.tags].count("style") == 1  # only the summary's own CSS
    lower = html_text.lower()
    assert "<script" not in lower and "<img" not in lower and "<b>eve" not in lower
    text = "".join(doc.text)
    for raw in ('<script>alert("x")</script> & Sons', "<img src=x onerror=alert(1)> notes",
                "</td><script>bad()</script>", "<b>Eve</b>", "<style>*{}</style>"):
        assert raw in text
    pdf = report.render_pdf(s)
    assert b"/JavaScript" not in pdf and b"/JS " not in pdf
    flat = " ".join(_pdf_text(pdf, tmp_path).split())
    assert '<script>alert("x")</script> & Sons' in flat
    assert "<b>Eve</b>" in flat


def test_pdf_opens_and_page_renders(demo):
    """pdftoppm renders page 1 of the PDF to a PNG under test-artifacts/ (for a person to look at)."""
    pdf = demo["pdf"]
    assert pdf.startswith(b"%PDF-") and pdf.rstrip().endswith(b"%%EOF")
    ARTIFACTS.mkdir(exist_ok=True)
    (ARTIFACTS / "siting-summary.pdf").write_bytes(pdf)
    (ARTIFACTS / "siting-summary.html").write_text(demo["html"], encoding="utf-8")
    exe = shutil.which("pdftoppm")
    if exe is None:
        pytest.skip("pdftoppm (poppler-utils) is not installed; PDF written but not rendered")
    out = ARTIFACTS / "siting-summary-page"
    subprocess.run([exe, "-png", "-r", "80", "-f", "1", "-l", "1", "-singlefile",
                    str(ARTIFACTS / "siting-summary.pdf"), str(out)], check=True, timeout=60)
    from PIL import Image
    with Image.open(f"{out}.png") as im:
        # ISO 216 A4 (210 x 297 mm) at 80 dpi is 661 x 935 px.
        assert abs(im.size[0] - 661) <= 1 and abs(im.size[1] - 935) <= 1
        assert np.unique(np.asarray(im.convert("L"))).size > 10  # something is drawn


@pytest.mark.browser
def test_html_screenshot_in_chromium(demo, tmp_path):
    """Headless Chromium opens the HTML offline and writes a screenshot to test-artifacts/."""
    exe = shutil.which("chromium") or ("/usr/bin/chromium" if os.path.exists("/usr/bin/chromium")
                                       else None)
    if exe is None:
        if os.environ.get("PERCH_REQUIRE_BROWSER") == "1":
            pytest.fail("PERCH_REQUIRE_BROWSER=1 but chromium is not installed")
        pytest.skip("chromium is not installed")
    page = tmp_path / "summary.html"
    page.write_text(demo["html"], encoding="utf-8")
    ARTIFACTS.mkdir(exist_ok=True)
    shot = ARTIFACTS / "siting-summary-html.png"
    if shot.exists():
        shot.unlink()
    subprocess.run([exe, "--headless", "--no-sandbox", "--disable-gpu",
                    "--disable-background-networking", "--disable-component-update",
                    "--no-first-run", f"--user-data-dir={tmp_path / 'profile'}",
                    f"--screenshot={shot}", "--window-size=1100,2400", page.as_uri()],
                   check=True, capture_output=True, timeout=120)
    from PIL import Image
    with Image.open(shot) as im:
        assert im.size == (1100, 2400)
        assert np.unique(np.asarray(im.convert("L"))).size > 10


def test_pdf_without_unicode_font_uses_core_fonts(demo, tmp_path):
    """With no TrueType font the PDF still builds, symbols spelt out in Latin-1."""
    assert report.to_latin1("α ≤ 2 — ok, 3 m², 5 °C") == "alpha <= 2 - ok, 3 m², 5 °C"
    s = report.build_summary(demo["ev"], assessor="R. Quill", generated_at=STAMP,
                             with_charts=False)
    pdf = report.render_pdf(s, font=None)
    assert pdf.startswith(b"%PDF-")
    flat = " ".join(_pdf_text(pdf, tmp_path).split())
    assert "1. The answer" in flat and "2. The question" in flat and "R. Quill" in flat


def test_cautions_in_both_formats(demo, tmp_path):
    """The safety cautions (height, structure, masts, electrics, noise, planning, codes) are shown."""
    words = ("Working at height", "structural engineer", "Mast loads", "licensed installer",
             "neighbours", "Planning permission", "Local codes")
    flat_pdf = " ".join(_pdf_text(demo["pdf"], tmp_path).split())
    flat_html = " ".join("".join(_parse(demo["html"]).text).split())
    for w in words:
        assert w in flat_html and w in flat_pdf, w
    # A short reminder comes before the first section, then the full list.
    assert flat_html.index("Safety:") < flat_html.index("1. The answer")


def test_effective_climate_csv_against_weibull_mean(demo):
    """Per-sector CSV: P x S rows, c = free c x factor, mean = c Γ(1 + 1/k) (scipy)."""
    ev = demo["ev"]
    df = pd.read_csv(io.BytesIO(report.effective_climate_csv(ev)))
    P, S = ev.climate.frequency.shape
    assert len(df) == P * S
    assert list(df["position_id"].unique()) == list(ev.climate.position_ids)
    np.testing.assert_allclose(df.groupby("position_id", sort=False)["frequency"].sum(), 1.0,
                               atol=1e-9)
    np.testing.assert_allclose(df["weibull_c_ms"], df["free_c_ms"] * df["speed_factor"],
                               rtol=1e-12)
    # Weibull mean c Γ(1 + 1/k) (Justus et al. 1978), gamma from scipy as the reference.
    np.testing.assert_allclose(df["mean_speed_ms"],
                               df["weibull_c_ms"] * gamma(1.0 + 1.0 / df["weibull_k"]),
                               rtol=1e-12)
    assert (df["mean_speed_ms"] >= 0).all() and (df["turbulence_intensity"] >= 0).all()


@pytest.mark.slow
def test_cli_report_writes_html_pdf_and_exports(demo, tmp_path):
    """`report` writes the same HTML as the library, a PDF, and the four data files."""
    html_out = tmp_path / "summary.html"
    text = _cli_stdout(["report", str(DEMO), "--out", str(html_out), "--assessor", "R. Quill",
                        "--notes", "Checked on a calm day.", "--generated-at", STAMP,
                        "--exports", str(tmp_path / "data")])
    assert "summary.html" in text
    assert html_out.read_text(encoding="utf-8") == demo["html"]
    names = sorted(p.name for p in (tmp_path / "data").iterdir())
    want = export_names(demo["ev"].assessment.site.name)
    assert names == sorted(want[k] for k in ("site", "rank_json", "rank_csv",
                                             "effective_climate"))
    pdf_out = tmp_path / "summary.pdf"
    _cli_stdout(["report", str(DEMO), "--out", str(pdf_out), "--assessor", "R. Quill",
                 "--notes", "Checked on a calm day.", "--generated-at", STAMP])
    assert pdf_out.read_bytes() == demo["pdf"]


def test_cli_report_bad_arguments_exit_2(tmp_path, capsys):
    """A wrong suffix and a bad time stamp are reported together with exit code 2."""
    rc = cli.main(["report", str(DEMO), "--out", str(tmp_path / "s.docx"),
                   "--generated-at", "yesterday"])
    assert rc == 2
    err = capsys.readouterr().err
    assert "--out" in err and "--generated-at" in err
    assert not (tmp_path / "s.docx").exists()


def test_no_eligible_position_says_so(demo):
    """When every combination is excluded, the summary recommends nothing and says why."""
    a = demo["ev"].assessment
    strict = dataclasses.replace(a, ranking=dataclasses.replace(a.ranking, max_mast_height_m=0.5))
    ev = pipeline.evaluate(strict)
    assert ev.table["excluded"].all()
    s = report.build_summary(ev, generated_at=STAMP, with_charts=False)
    text = " ".join(b.text for b in s.section("recommendation").blocks
                    if isinstance(b, report.Paragraph))
    assert "No position is recommended" in text
    page = report.render_html(s)
    for flag in ev.table["flags"].iloc[0]:  # each reason or note is shown, escaped
        assert html.escape(flag) in page


def _leaves(obj, prefix=""):
    """(path, value) of every scalar of a site-file dict; lists of numbers kept whole."""
    if isinstance(obj, dict):
        return [x for k, v in obj.items() for x in _leaves(v, f"{prefix}.{k}" if prefix else k)]
    if isinstance(obj, list) and obj and all(isinstance(x, dict) for x in obj):
        return [x for i, v in enumerate(obj) for x in _leaves(v, f"{prefix}[{i}]")]
    return [(prefix, obj)]


def test_reproducibility_block_and_readable_inputs(demo):
    """Version and site-file hash are stated; every site-file value appears in the inputs
    appendix under a label in words, never a raw key path."""
    s = demo["summary"]
    rows = dict(s.table("reproduce").rows)
    assert rows["Tool"] == f"perch {__version__}"
    # SHA-256 by hashlib, independent of the summary's own hashing.
    assert rows["Site file SHA-256"] == hashlib.sha256(
        sitefile.dumps(demo["ev"].assessment).encode()).hexdigest()
    inputs = [b for b in s.section("inputs").blocks if isinstance(b, report.Table)]
    cells = {c for t in inputs for r in t.rows for c in r} | {c for t in inputs
                                                           for c in t.columns}
    text = " ".join(cells)
    tokens = set(re.split(r"[,\s]+", text))
    raw = sitefile.assessment_to_dict(demo["ev"].assessment)
    for path, v in _leaves(raw):
        if isinstance(v, list) and v and isinstance(v[0], (int, float)):
            for x in v:  # per-sector arrays, power curves, spot readings
                assert repr(float(x)) in tokens or f"{100 * x:.10g} %" in cells, path
        elif isinstance(v, float):
            assert repr(v) in cells or f"{100 * v:.10g} %" in cells, path
        elif isinstance(v, str) and v.strip():
            assert v in text, path
    for t in s.tables():
        for head in t.columns:
            assert not re.search(r"\w\[\d+\]|[a-z]_[a-z]", head), (t.key, head)
        if t.key.startswith("inputs"):
            for r in t.rows:
                assert not any(re.search(r"\w\[\d+\]\.", c) for c in r), (t.key, r)


@pytest.mark.slow
def test_printed_command_reproduces_the_summary(demo, tmp_path, monkeypatch):
    """Running the summary's own 'To reproduce' command on its attached site file gives the same HTML."""
    import shlex

    doc = _parse(demo["html"])
    links = {a["download"]: a["href"] for t, a in doc.tags if t == "a" and "download" in a}
    name = next(n for n in links if n.endswith(".perch.json"))
    (tmp_path / name).write_bytes(base64.b64decode(links[name].split(",", 1)[1]))
    command = dict(demo["summary"].table("reproduce").rows)["To reproduce"]
    argv = shlex.split(command)
    assert argv[:4] == ["python", "-m", "engine", "report"]
    monkeypatch.chdir(tmp_path)
    _cli_stdout(argv[3:])
    out = export_names(demo["ev"].assessment.site.name)["summary_html"]
    assert (tmp_path / out).read_text(encoding="utf-8") == demo["html"]


@pytest.mark.slow
def test_markup_in_position_id_escaped_in_charts(demo):
    """A position id with markup is drawn as text inside the inline SVG charts, never as a tag."""
    a = demo["ev"].assessment
    pos = list(a.positions)
    pos[-1] = dataclasses.replace(pos[-1], id="<script>x()</script>")
    ev = pipeline.evaluate(dataclasses.replace(a, positions=tuple(pos)))
    s = report.build_summary(ev, generated_at=STAMP)
    html_text = report.render_html(s)
    assert "<script" not in html_text.lower()
    doc = _parse(html_text)
    assert "script" not in {t for t, _ in doc.tags}
    svg_text = "".join(re.findall(r"<svg.*?</svg>", html_text, re.S))
    assert "&lt;script&gt;x()&lt;/script&gt;" in svg_text


def test_roof_zone_bands_agree_with_zone_flags(demo):
    """A hub the building model puts inside a roof zone lies below that zone's band top, and vice versa."""
    from engine.report import static_charts as report_charts

    ev = demo["ev"]
    eff = ev.climate
    # The recirculation flag also counts wake cavities of other buildings, so it is left out.
    flags = {"high turbulence": "in_turbulence_zone", "roof wake": "in_roof_wake"}
    checked = 0
    for i, pid in enumerate(eff.position_ids):
        bands = {b["name"]: b for b in report_charts.roof_zone_bands(ev, pid)}
        pos = ev.assessment.positions[i]
        if pos.kind != "roof":
            assert bands == {}
            continue
        hub = float(eff.hub_height_m[i])
        for name, diag in flags.items():
            inside = bool(np.asarray(eff.diagnostics[diag])[i])
            top = bands[name]["top_m"] if name in bands else ev.assessment.base_height_m(pos)
            assert (hub < top) == inside, (pid, name)
            assert bands.get(name, {"bottom_m": top})["bottom_m"] == ev.assessment.base_height_m(pos)
            checked += 1
    assert checked >= 4


def test_chart_that_cannot_be_drawn_says_why(demo, tmp_path):
    """A figure without a spec is shown as a caution with its reason, in HTML and PDF."""
    from engine.report.static_charts import Figure

    s = report.build_summary(demo["ev"], generated_at=STAMP, with_charts=False)
    fig = Figure("profile", "Vertical profile", "caption", None, "hub_height_m: below the roof")
    sections = tuple(dataclasses.replace(x, blocks=(report.FigureBlock(fig),))
                     if x.key == "charts" else x for x in s.sections)
    s = dataclasses.replace(s, sections=sections)
    html_text = report.render_html(s)
    assert "This chart could not be drawn: hub_height_m: below the roof" in html_text
    flat = " ".join(_pdf_text(report.render_pdf(s), tmp_path).split())
    assert "This chart could not be drawn: hub_height_m: below the roof" in flat


@pytest.mark.slow
def test_site_without_buildings(demo):
    """A lone ground mast with no buildings, receptors or spot readings still gives every section."""
    a = demo["ev"].assessment
    mast = tuple(p for p in a.positions if p.kind == "mast")
    bare = dataclasses.replace(a, buildings=(), positions=mast, turbines=a.turbines[:1],
                               receptors=(), spot_readings=())
    s = report.build_summary(pipeline.evaluate(bare), generated_at=STAMP)
    assert tuple(x.key for x in s.sections) == report.SECTION_KEYS
    figs = [b.figure for b in s.section("charts").blocks]
    assert [f.key for f in figs] == ["plan", "wind-rose", "profile", "yield"]
    assert all(f.spec is not None for f in figs)
    assert report.render_pdf(s).startswith(b"%PDF-")


def _pdf_pages(pdf: bytes, tmp_path) -> list:
    return _pdf_text(pdf, tmp_path).split("\f")


def test_pdf_body_fits_eight_pages_then_appendix(demo, tmp_path):
    """The client's part is at most 8 pages; the inputs follow in a lettered appendix."""
    pages = _pdf_pages(demo["pdf"], tmp_path)
    start = next(i for i, p in enumerate(pages) if re.search(r"^\s*Appendix\s*$", p, re.M))
    assert start <= 8  # pages before the appendix (0-based index = count)
    body = " ".join(" ".join(pages[:start]).split())
    for sec in demo["summary"].sections:
        where = body if not sec.appendix else " ".join(" ".join(pages[start:]).split())
        assert sec.heading in where, sec.heading


def test_no_word_broken_in_pdf_tables(demo, tmp_path):
    """Every word of every table header and cell appears whole in the PDF's text (poppler's
    pdftotext, independent of fpdf2): column widths never cut a word."""
    tokens = set(_pdf_text(demo["pdf"], tmp_path).split())
    missing = []
    for t in demo["summary"].tables():
        for row in (t.columns,) + t.rows:
            for cell in row:
                missing += [(t.key, w) for w in cell.split() if w not in tokens]
    assert missing == []


def test_wide_columns_keep_words_whole_at_every_width(demo):
    """The width layout gives each column at least its longest word, also for a table with
    long words in many columns (type shrinks before a word would be cut)."""
    from engine.report.pdf import PdfSummary

    doc = PdfSummary(demo["summary"], report.find_font())
    words = ("Circumnavigation", "Electroencephalograph")
    t = report.Table("wide", tuple(f"{w} {i}" for i, w in enumerate(words * 3)),
                     ((" ".join(words),) * 6,), ("l",) * 6)
    size, widths = doc._layout(t)
    doc.font(size)
    assert sum(widths) == pytest.approx(doc.pdf.epw)
    for head, w in zip(t.columns, widths):
        longest = max(doc.pdf.get_string_width(x) for x in head.split() + list(words))
        assert longest <= w


def test_no_orphan_rows_at_page_ends(demo):
    """A table's last row never goes alone to a new page: it takes the row before with it."""
    from engine.report.pdf import PdfSummary

    doc = PdfSummary(demo["summary"], report.find_font())
    doc.pdf.add_page()
    bottom = doc.pdf.page_break_trigger
    top = bottom - 5 * 10.0 - 6.0 - 1.0  # room for the header and five rows of 10 mm
    breaks = doc._breaks_before([10.0] * 6, 6.0, top)
    assert breaks == {4}  # rows 4 and 5 go on together, not row 5 alone
    assert doc._breaks_before([10.0] * 5, 6.0, top) == set()  # all fit: no break
    # a caption that would be left alone takes the last two rows with it
    assert doc._breaks_before([10.0] * 5, 6.0, top, tail_h=8.0) == {3}


def test_notes_grouped_once(demo):
    """Advice repeated on many rows is listed once, with the positions it concerns."""
    s = demo["summary"]
    advice = s.table("advice")
    texts = [r[0] for r in advice.rows]
    assert len(texts) == len(set(texts))
    ev = demo["ev"]
    all_flags = [f for fl in ev.table["flags"] for f in fl]
    assert len(s.table("exclusions").rows) == int(ev.table["excluded"].sum())
    assert len(texts) < len(all_flags)  # the demo repeats the roof advice on every turbine


def test_one_list_of_cautions(demo):
    """The summary's cautions are the engine's one list; the dashboard shows the same one."""
    bullets = next(b for b in demo["summary"].section("cautions").blocks
                   if isinstance(b, report.Bullets))
    assert bullets.items == report.caution_lines()
    for _title, text in report.CAUTIONS:
        assert "structural engineer" in text or "licensed installer" in text or \
            "local" in text, text
    pytest.importorskip("streamlit")
    from dashboard import widgets
    assert widgets.CAUTIONS is report.CAUTIONS


def test_export_names_match_the_dashboard(demo):
    """The summary's attachments, its reproduce command and the dashboard's downloads use
    one naming scheme."""
    a = demo["ev"].assessment
    names = export_names(a.site.name)
    attached = {x.name for x in demo["summary"].attachments}
    assert attached == {names[k] for k in ("site", "rank_json", "rank_csv",
                                           "effective_climate")}
    command = dict(demo["summary"].table("reproduce").rows)["To reproduce"]
    assert names["site"] in command and names["summary_html"] in command
    from dashboard import exports as dash_exports
    assert dash_exports.export_names(a) == names
    assert dash_exports.file_stem(a) + ".perch.json" == names["site"]
    assert dash_exports.file_stem(a) + "-ranking.csv" == names["rank_csv"]


def test_summary_says_when_the_terrain_is_per_sector():
    """The assumptions name the per-sector terrain and its fetch, so the number is traceable."""
    from engine.core.model import TransferSettings
    from engine.report.words import transfer_words
    on = transfer_words(TransferSettings(sector_morphometry=True, sector_fetch_m=250.0))
    assert "per direction sector" in on and "250 m" in on
    assert "sector" not in transfer_words(TransferSettings())
