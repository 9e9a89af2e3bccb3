"""The calculation report: every section present, plots embedded, nothing fetched from
a network, the caution, limits, versions and the scenario's hash in it; and, in headless
Chromium, a page that draws, keeps its sections and prints to PDF."""
import base64
import dataclasses
import hashlib
import html
import math
import os
import re
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import pytest
from conftest import IDEAL_VENT

from cvsim import __version__
from cvsim import network as nw
from cvsim.api import run, run_network
from cvsim.cli import main
from cvsim.report import (render_run_report, render_sweep_report, write_run_report,
                          write_sweep_report)
from cvsim.result import CAUTION
from cvsim.scenario import load_scenario, load_scenario_text
from cvsim.signals import Constant

ROOT = Path(__file__).resolve().parents[1]
BLOWDOWN = ROOT / "scenarios" / "nitrogen-blowdown.yaml"  # states limits; about 0.1 s to run

RUN_SECTIONS = ["title-block", "caution-top", "contents", "job", "inputs", "inputs-given",
                "inputs-used", "model", "model-choices", "assumptions", "warnings", "summary",
                "limits", "plots", "checks", "balances", "solver", "software", "sign-off",
                "caution-end"]
SWEEP_SECTIONS = ["title-block", "caution-top", "job", "parameters", "cases",
                  "plots", "notes", "software", "sign-off", "caution-end"]
VOID = {"meta", "img", "br", "wbr", "col", "hr", "input", "link"}

NITROGEN = nw.FluidSpec("Nitrogen", model="ideal-gas", molar_mass=0.0280134, cp=1040.0)


# ------------------------------------------------------------------ helpers

class Node:
    def __init__(self, tag, attrs, parent=None):
        self.tag, self.attrs, self.parent = tag, dict(attrs), parent
        self.children = []

    def text(self) -> str:
        return "".join(c if isinstance(c, str) else c.text() for c in self.children)

    def walk(self):
        yield self
        for c in self.children:
            if isinstance(c, Node):
                yield from c.walk()

    def find(self, tag=None, cls=None):
        return [n for n in self.walk() if (tag is None or n.tag == tag)
                and (cls is None or cls in n.attrs.get("class", "").split())]


class Tree(HTMLParser):
    """A small DOM from the standard library's parser; fails on unbalanced tags."""

    def __init__(self, text):
        super().__init__(convert_charrefs=True)
        self.root = Node("#document", {})
        self.at = self.root
        self.feed(text)
        self.close()
        assert self.at is self.root, f"<{self.at.tag}> is never closed"

    def handle_starttag(self, tag, attrs):
        node = Node(tag, attrs, self.at)
        self.at.children.append(node)
        if tag not in VOID:
            self.at = node

    def handle_endtag(self, tag):
        if tag in VOID:
            return
        assert self.at.tag == tag, f"</{tag}> closes <{self.at.tag}>"
        self.at = self.at.parent

    def handle_data(self, data):
        self.at.children.append(data)

    def ids(self) -> list[str]:
        return [n.attrs["id"] for n in self.root.walk() if "id" in n.attrs]

    def by_id(self, id_) -> Node:
        found = [n for n in self.root.walk() if n.attrs.get("id") == id_]
        assert len(found) == 1, f"id {id_!r} found {len(found)} times"
        return found[0]


def words(text: str) -> str:
    return " ".join(text.split())


def assert_offline(text: str):
    """Nothing in the page would be fetched: no web addresses, scripts, style
    sheets, fonts or frames; links only inside the page; pictures inline."""
    assert not re.search(r"https?:", text, re.I)
    assert not re.search(r"<(script|link|iframe|object|embed)\b", text, re.I)
    assert "@import" not in text and "url(" not in text and "@font-face" not in text
    tree = Tree(text)
    for n in tree.root.walk():
        if "href" in n.attrs:
            assert n.attrs["href"].startswith("#"), n.attrs["href"]
        if "src" in n.attrs:
            assert n.attrs["src"].startswith("data:image/png;base64,")


def embedded_pngs(tree: Tree) -> list[bytes]:
    out = []
    for img in tree.root.find("img"):
        data = base64.b64decode(img.attrs["src"].split(",", 1)[1], validate=True)
        assert data[:8] == b"\x89PNG\r\n\x1a\n"
        out.append(data)
    return out


# ----------------------------------------------------------------- fixtures

@pytest.fixture(scope="module")
def blowdown(tmp_path_factory):
    """`cvsim run --report` on the demo blowdown that states design limits."""
    out = tmp_path_factory.mktemp("report") / "blowdown"
    assert main(["run", str(BLOWDOWN), "--out", str(out), "--report", "--quiet"]) == 0
    return out


@pytest.fixture(scope="module")
def blowdown_html(blowdown):
    return (blowdown / "report.html").read_text(encoding="utf-8")


@pytest.fixture(scope="module")
def blowdown_result():
    scenario = load_scenario(BLOWDOWN)
    return scenario, run(scenario)


def vent_network(title="Nitrogen receiver vented through an orifice", end=60.0):
    """A small ideal-gas vent (no property library: fast)."""
    return nw.Network(
        title=title, fluid=NITROGEN,
        vessels=(nw.Vessel("receiver", nw.Geometry(1.0), nw.InitialState(20e5, 288.15)),),
        reservoirs=(nw.Reservoir("atmosphere", Constant(101325.0), Constant(288.15)),),
        links=(nw.Link("vent", "receiver", "atmosphere",
                       nw.Orifice(math.pi * 0.01 ** 2 / 4, 0.84, "ideal-gas")),),
        run=nw.RunSettings(end_time=end, record_every=1.0))


# -------------------------------------------------------------- the run report

def test_cli_writes_the_report_inside_the_same_output_folder(blowdown):
    names = {p.name for p in blowdown.iterdir()}
    assert {"report.html", "summary.txt", "overview.png", "history.csv"} <= names
    assert not list(blowdown.parent.glob(".*partial*"))


def test_report_has_every_section_once_and_is_well_formed(blowdown_html):
    tree = Tree(blowdown_html)  # raises on unbalanced tags
    ids = tree.ids()
    for id_ in RUN_SECTIONS:
        assert ids.count(id_) == 1, id_
    assert len(ids) == len(set(ids)), "ids must be unique"
    assert blowdown_html.startswith("<!DOCTYPE html>")


def test_report_embeds_every_plot_and_opens_offline(blowdown, blowdown_html):
    assert_offline(blowdown_html)
    tree = Tree(blowdown_html)
    pngs = embedded_pngs(tree)
    on_disk = sorted(blowdown.glob("*.png"))
    assert len(on_disk) >= 5
    assert sorted(pngs) == sorted(p.read_bytes() for p in on_disk)  # the same pictures
    figures = tree.by_id("plots").find("figure")
    assert [f.attrs["id"] for f in figures][0] == "plot-overview"


def test_report_carries_the_caution_at_top_and_end(blowdown_html):
    tree = Tree(blowdown_html)
    for id_ in ("caution-top", "caution-end"):
        assert CAUTION in words(tree.by_id(id_).text())
    top = blowdown_html.index('id="caution-top"')
    assert top < blowdown_html.index('id="job"')
    assert blowdown_html.index('id="caution-end"') > blowdown_html.index('id="sign-off"')


BODY = ["job", "inputs", "model", "summary", "limits", "plots", "checks", "software",
        "sign-off"]
APPENDICES = ["inputs-given", "inputs-used", "events-all", "plots-each"]


def section_order(text: str) -> list[str]:
    """The ids of the report's parts in the order the page holds them."""
    wanted = set(BODY + APPENDICES + ["caution-end", "relief-sizing"])
    return [i for i in re.findall(r'<(?:section|div|header|footer|aside)\b[^>]*\bid="([^"]+)"',
                                  text) if i in wanted]


def test_appendices_follow_the_body_and_the_sign_off(blowdown_html, relief_report):
    """The scenario echo, the values as used, every event and the plots of each quantity
    come after the body and its sign-off, lettered, before the closing caution."""
    out, _, _ = relief_report
    relief_html = (out / "report.html").read_text(encoding="utf-8")
    for text, appendices in ((blowdown_html, ["inputs-given", "inputs-used", "plots-each"]),
                             (relief_html, APPENDICES)):  # the relief run logs > 12 events
        order = section_order(text)
        assert [i for i in order if i in BODY] == BODY
        assert [i for i in order if i in APPENDICES] == appendices
        last_body = order.index("sign-off")
        assert all(order.index(a) > last_body for a in appendices)
        assert order[-1] == "caution-end"
        tree = Tree(text)
        for letter, a in zip("ABCD", appendices):
            assert words(tree.by_id(a).find("h2")[0].text()).startswith(f"Appendix {letter}"), a
    events = Tree(relief_html).by_id("events-all").find("tbody")[0].find("tr")
    assert len(events) > 12  # all of them, where the body lists the first 12


def test_limits_table_lists_each_limit_and_marks_crossed_rows_in_words(blowdown_html,
                                                                      blowdown_result):
    _, result = blowdown_result
    assert result.limits and result.limits_crossed  # the demo crosses its MDMT
    section = Tree(blowdown_html).by_id("limits")
    table = section.find("table")[0]
    rows = table.find("tbody")[0].find("tr")
    assert len(rows) == len(result.limits)
    basis = section.find("ul", cls="limits-basis")[0].find("li")
    for i, (row, check) in enumerate(zip(rows, result.limits), 1):
        text = words(row.text())
        assert check.name in text and check.vessel in text
        assert ("CROSSED" in text) == (not check.met)
        assert ("crossed" in row.attrs.get("class", "")) == (not check.met)
        assert f"L{i}" in text  # the row points to its basis below the table
        assert basis[i - 1].attrs["id"] == f"L{i}"
        assert words(check.practice) in words(basis[i - 1].text())


def test_software_section_names_versions_hash_and_time(blowdown_html):
    import CoolProp
    import numpy
    import scipy
    text = words(Tree(blowdown_html).by_id("software").text())
    sha = hashlib.sha256(BLOWDOWN.read_bytes()).hexdigest()
    for expected in (__version__, CoolProp.__version__, scipy.__version__, numpy.__version__,
                     sha, "nitrogen-blowdown.yaml", "Run started", "Report written"):
        assert expected in text, expected
    assert sha in words(Tree(blowdown_html).by_id("title-block").text())


def test_inputs_show_the_file_verbatim_and_every_value_as_used(blowdown_html,
                                                               blowdown_result):
    scenario, _ = blowdown_result
    tree = Tree(blowdown_html)
    pre = tree.by_id("inputs-given").find("pre")[0]
    assert pre.text() == scenario.source_text
    rows = tree.by_id("inputs-used").find("tbody")[0].find("tr")
    data = [r for r in rows if "group" not in r.attrs.get("class", "")]
    assert len(data) == len(scenario.echo)
    atm = scenario.network.atmosphere
    for row, echo in zip(data, scenario.echo):
        cells = [c.text() for c in row.find("td")]
        assert [cells[0], cells[1], cells[3]] == [echo.key, echo.given, echo.note]
        # values as used in engineering units, converted here independently of cvsim
        if echo.unit == "Pa":
            assert cells[2] == (f"{echo.value / 1e5:.6g} bar a "
                                f"({(echo.value - atm) / 1e5:.6g} bar g)"), echo.key
        elif echo.unit == "K":
            assert cells[2] == f"{echo.value - 273.15:.6g} degC", echo.key
        elif echo.unit == "m" and echo.value < 1.0:
            assert cells[2] == f"{echo.value * 1e3:.6g} mm", echo.key
        elif echo.unit == "m2" and echo.value < 0.01:
            assert cells[2] == f"{echo.value * 1e6:.6g} mm2", echo.key
        else:
            assert cells[2] == echo.used, echo.key
    # e.g. the initial pressure "150 barg" is shown as used: 151.013 bar a (150 bar g)
    assert "151.013 bar a (150 bar g)" in [c.text() for c in tree.by_id("inputs-used").find("td")]


def test_summary_and_checks_show_results_with_times(blowdown_html, blowdown_result):
    _, result = blowdown_result
    tree = Tree(blowdown_html)
    summary = words(tree.by_id("summary").text())
    s = result.summary()
    v = s["vessels"]["receiver"]
    assert f"{v['min_temperature_K'] - 273.15:.1f} degC" in summary
    assert "vent" in summary and f"{s['links']['vent']['mass_passed_kg']:.5g}" in summary
    assert "stop condition met" in summary
    checks = words(tree.by_id("balances").text())
    assert f"{s['balance']['mass_closure_relative']:.2e}" in checks and "closed" in checks
    assert str(s["solver"]["steps"]) in words(tree.by_id("solver").text())
    model = words(tree.by_id("assumptions").text())
    for i, a in enumerate(result.assumptions, 1):
        assert f"A{i} {a}" in model


@pytest.mark.parametrize("path", sorted((ROOT / "scenarios").glob("*.yaml")),
                         ids=lambda p: p.stem)
def test_every_demo_scenario_gives_a_complete_report(path):
    scenario = load_scenario(path)
    result = run(scenario)
    text = render_run_report(result, scenario, plots=[])  # plots: tested above
    assert_offline(text)
    tree = Tree(text)
    assert set(RUN_SECTIONS) <= set(tree.ids())
    assert tree.by_id("inputs-given").find("pre")[0].text() == scenario.source_text
    assert result.network.title in tree.by_id("title-block").text()


def test_text_from_the_scenario_cannot_break_the_page():
    title = 'Tank <b>1</b> & "2" </style><script>alert(1)</script> \\ end'
    result = run_network(dataclasses.replace(vent_network(), title=title))
    text = render_run_report(result, None, plots=[])
    assert "<script" not in text and "<b>1" not in text
    tree = Tree(text)
    assert words(tree.by_id("title-block").find("h1")[0].text()) == words(title)
    style = tree.root.find("style")[0].text()
    assert "</" not in style


def test_changes_made_for_the_run_are_listed(tmp_path):
    scenario = load_scenario(BLOWDOWN, overrides={"run.end": "20 s"})
    result = run(scenario)
    text = render_run_report(result, scenario, plots=[])
    tree = Tree(text)
    assert "run.end" in words(tree.by_id("inputs-changed").text())
    assert "run.end = 20 s" in words(tree.by_id("software").text())
    # the target is not reached in 20 s: the depressuring check is crossed
    assert "CROSSED" in words(tree.by_id("limits").text())


def test_report_of_a_network_built_in_code_draws_its_own_plots(tmp_path):
    result = run_network(vent_network())
    path = write_run_report(result, tmp_path / "r.html")
    text = path.read_text(encoding="utf-8")
    assert_offline(text)
    tree = Tree(text)
    assert set(RUN_SECTIONS) - {"inputs-given", "inputs-used"} <= set(tree.ids())
    assert "not read from a scenario file" in words(tree.by_id("inputs").text())
    assert "No design limits are stated" in words(tree.by_id("limits").text())
    assert len(embedded_pngs(tree)) == 5
    assert not list(tmp_path.glob("cvsim-report-*"))


def test_later_assumptions_warnings_and_summary_figures_appear_by_themselves():
    scenario = load_scenario_text("""
title: A vessel with no link
fluid: Nitrogen
properties: ideal-gas
ideal_gas: {molar_mass: 28.0134 g/mol, heat_capacity: 1040 J/kg/K}
vessels:
  lonely: {volume: 1 m3, initial: {pressure: 5 barg, temperature: 15 degC}}
run: {end: 5 s}
""")
    result = run(scenario)
    result = dataclasses.replace(result, assumptions=result.assumptions + [
        "Walls: one lumped temperature (a later model choice)."])
    result.warnings = ["natural-convection correlation used outside its Rayleigh range"]
    summary = result.summary
    result.summary = lambda: {**summary(), "peak_wall_stress_Pa": 1.5e8}
    tree = Tree(render_run_report(result, scenario, plots=[]))
    assert "Walls: one lumped temperature" in tree.by_id("assumptions").text()
    warnings = words(tree.by_id("warnings").text())
    assert "vessels.lonely: no link" in warnings
    assert "outside its Rayleigh range" in warnings
    assert "peak_wall_stress_Pa" in tree.by_id("summary-further").text()


def test_a_failed_run_says_so_before_anything_else():
    result = run_network(vent_network())
    failed = dataclasses.replace(result, status="failed",
                                 message="state out of range at t = 12 s")
    text = render_run_report(failed, None, plots=[])
    tree = Tree(text)
    notice = words(tree.by_id("failed").text())
    assert "FAILED" in notice and "state out of range" in notice
    assert text.index('id="failed"') < text.index('id="job"')
    assert "FAILED" in words(tree.by_id("title-block").text())


def test_a_run_that_failed_before_its_first_record_still_gives_a_report():
    import numpy as np
    result = run_network(vent_network())
    empty = dataclasses.replace(
        result, status="failed", message="no state at t = 0", data=np.zeros((0, len(
            result.columns))), fine_data=np.zeros((0, len(result.columns))), events=[],
        balance={}, stats={}, limits=[])
    text = render_run_report(empty, None)
    tree = Tree(text)
    assert set(RUN_SECTIONS) - {"inputs-given", "inputs-used"} <= set(tree.ids())
    assert "No plots" in tree.by_id("plots").text()
    assert "FAILED" in tree.by_id("failed").text()


def test_report_without_plot_files_still_embeds_the_plots(tmp_path):
    path = tmp_path / "vent.yaml"
    path.write_text(IDEAL_VENT)
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--report", "--no-plots",
                 "--quiet"]) == 0
    assert not list(out.glob("*.png"))
    tree = Tree((out / "report.html").read_text(encoding="utf-8"))
    assert len(embedded_pngs(tree)) == 5


# ------------------------------------------------------------ the sweep report

@pytest.fixture(scope="module")
def sweep_files(tmp_path_factory, blowdown):
    """A sweep's plain data, made up: three cases, one failed, one crossing a limit."""
    folder = tmp_path_factory.mktemp("sweep")
    image = folder / "time_vs_diameter.png"
    shutil.copy(blowdown / "pressure.png", image)
    rows = [
        {"links.vent.diameter": "8 mm", "status": "stopped", "time_to_target_s": 505.2,
         "min_temperature_degC": -148.2, "limits_crossed": 1, "message": ""},
        {"links.vent.diameter": "10 mm", "status": "stopped", "time_to_target_s": 323.4,
         "min_temperature_degC": -153.7, "limits_crossed": 0, "message": ""},
        {"links.vent.diameter": "0 mm", "status": "failed", "time_to_target_s": None,
         "min_temperature_degC": float("nan"), "limits_crossed": None,
         "message": "diameter must be positive"},
    ]
    return image, rows


def test_sweep_report_from_plain_data(sweep_files, tmp_path):
    image, rows = sweep_files
    scenario = load_scenario(BLOWDOWN)
    path = write_sweep_report(
        tmp_path / "sweep.html", "Vent orifice diameter for the 15 min depressuring target",
        scenario=scenario, parameters={"links.vent.diameter": ["8 mm", "10 mm", "0 mm"]},
        rows=rows, columns=["links.vent.diameter", ("time_to_target_s", "Time to target [s]"),
                            "min_temperature_degC", "limits_crossed", "status", "message"],
        images=[(image, "Time to target against orifice diameter.")],
        notes=["Each case is a complete simulation of the base scenario."])
    text = path.read_text(encoding="utf-8")
    assert_offline(text)
    tree = Tree(text)
    assert set(SWEEP_SECTIONS) <= set(tree.ids())
    body = tree.by_id("cases").find("tbody")[0].find("tr")
    assert len(body) == 3
    flags = [words(r.text()) for r in body]
    assert "LIMIT CROSSED" in flags[0] and "FAILED" not in flags[0]
    assert "CROSSED" not in flags[1] and "FAILED" not in flags[1]
    assert "FAILED" in flags[2] and "diameter must be positive" in flags[2]
    assert [("crossed" in r.attrs.get("class", "")) for r in body] == [True, False, True]
    assert "Time to target [s]" in tree.by_id("cases").text()
    assert "505.2" in flags[0] and "-148.2" in flags[0]
    assert len(embedded_pngs(tree)) == 1
    assert "N1 Each case" in words(tree.by_id("notes").text())
    assert scenario.sha256 in tree.by_id("software").text()
    assert tree.by_id("inputs-given").find("pre")[0].text() == scenario.source_text
    assert "inputs-used" in tree.ids()
    for id_ in ("caution-top", "caution-end"):
        assert CAUTION in words(tree.by_id(id_).text())


def test_sweep_report_needs_no_scenario_and_takes_every_column_by_default():
    text = render_sweep_report("A study without a base file", rows=[{"a": 1, "b": 2.5},
                                                                    {"a": 2, "c": "x"}])
    tree = Tree(text)
    head = [words(th.text()) for th in tree.by_id("cases").find("th")]
    assert head == ["Case", "a", "b", "c"]
    assert "Flag" not in head  # no status or limits columns: nothing to flag


# ------------------------------------------------------------------ in a browser

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
# .ci/run installs Chromium and sets this, so that in CI these tests run or fail, never skip
REQUIRED = os.environ.get("CVSIM_REQUIRE_CHROMIUM") == "1"
needs_chromium = pytest.mark.skipif(
    CHROMIUM is None and not REQUIRED, reason="Chromium is not installed (.ci/run installs "
    "Debian's chromium; locally: apt-get install chromium)")


def chromium(tmp_path, *args) -> subprocess.CompletedProcess:
    """Headless Chromium, offline and without a profile of its own."""
    assert CHROMIUM, "CVSIM_REQUIRE_CHROMIUM=1 but no chromium on the PATH"
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
           "--no-first-run", "--disable-background-networking", "--disable-component-update",
           "--disable-sync", "--hide-scrollbars", f"--user-data-dir={tmp_path / 'profile'}",
           *args]
    done = subprocess.run(cmd, capture_output=True, timeout=180)
    assert done.returncode == 0, done.stderr.decode(errors="replace")[-2000:]
    return done


@needs_chromium
def test_chromium_draws_the_report_and_keeps_its_sections(blowdown, tmp_path):
    import matplotlib.image as mpimg
    import numpy as np

    page = (blowdown / "report.html").resolve()
    shot = tmp_path / "report.png"
    chromium(tmp_path, f"--screenshot={shot}", "--window-size=1200,2000", page.as_uri())
    pixels = mpimg.imread(shot)[..., :3]
    assert pixels.shape[:2] == (2000, 1200)
    grey = pixels.mean(axis=2)
    assert grey.std() > 0.05                      # not a blank page
    assert (grey < 0.5).mean() > 0.01             # text is drawn
    colours = np.unique((pixels * 255).astype(np.uint8).reshape(-1, 3), axis=0)
    assert len(colours) > 50                      # text, tints, the caution box
    dom = chromium(tmp_path, "--dump-dom", page.as_uri()).stdout.decode("utf-8")
    parsed = set(re.findall(r'\bid="([^"]+)"', dom))
    assert set(RUN_SECTIONS) <= parsed
    assert "Screening estimate" in dom


@needs_chromium
def test_chromium_prints_the_report_to_pdf(blowdown, tmp_path):
    page = (blowdown / "report.html").resolve()
    pdf = tmp_path / "report.pdf"
    chromium(tmp_path, "--no-pdf-header-footer", f"--print-to-pdf={pdf}", page.as_uri())
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF-")
    pages = len(re.findall(rb"/Type\s*/Page(?!s)", data))
    assert pages >= 1
    # every major section starts a page, so the report fills several
    assert pages >= 5


@needs_chromium
def test_chromium_reads_the_sweep_report(sweep_files, tmp_path):
    image, rows = sweep_files
    page = tmp_path / "sweep.html"
    write_sweep_report(page, "A made-up study", parameters={"x": [1, 2, 3]}, rows=rows,
                       images=[image])
    dom = chromium(tmp_path, "--dump-dom", page.resolve().as_uri()).stdout.decode("utf-8")
    assert set(SWEEP_SECTIONS) <= set(re.findall(r'\bid="([^"]+)"', dom))
    assert html.escape("LIMIT CROSSED") in dom


def test_sweep_command_writes_a_study_report(tmp_path):
    from cvsim.cli import main
    root = Path(__file__).resolve().parents[1]
    out = tmp_path / "sweep"
    code = main(["sweep", str(root / "scenarios" / "separator-depressuring.yaml"), "--vary",
                 "links.orifice.diameter=14 mm, 20 mm", "--out", str(out), "--report",
                 "--quiet", "--workers", "1"])
    assert code == 0
    html = (out / "report.html").read_text()
    for section in ('id="job"', 'id="cases"', 'id="plots"', 'id="caution-top"',
                    'id="inputs-given"'):
        assert section in html
    assert "data:image/png;base64," in html
    assert "LIMIT CROSSED" in html  # 14 mm is too slow for the 15-minute guideline
    assert "http://" not in html and "https://" not in html


# ------------------------------------------------------------ the relief report

@pytest.fixture(scope="module")
def relief_report(tmp_path_factory):
    """`cvsim relief --report` on the blocked-outlet demo with a D valve set in place of the
    file's letter: the sizing chooses a larger letter and the confirming run uses it."""
    out = tmp_path_factory.mktemp("relief") / "psv"
    code = main(["relief", str(ROOT / "scenarios" / "relief-blocked-outlet.yaml"), "--valve",
                 "psv", "--blocked-outlet", "--set", "links.psv.orifice_letter=D", "--out",
                 str(out), "--report"])
    assert code == 0
    import json
    sizing = json.loads((out / "relief-sizing.json").read_text())
    return out, sizing, Tree((out / "report.html").read_text(encoding="utf-8"))


def test_relief_report_shows_the_sizing_calculation(relief_report):
    out, sizing, tree = relief_report
    section = tree.by_id("relief-sizing")
    text = words(section.text())
    assert sizing["letter"] == "G"
    assert words(tree.by_id("relief-letter").text()) == "G"
    assert "G" in words(tree.by_id("title-block").text())
    # the required area by the API 520 Part I critical-flow equation, SI form,
    # recomputed here from the relieving conditions the report states:
    # A [mm2] = W [kg/h] / (C Kd P1 [kPa a] Kb Kc) sqrt(T Z / M),
    # C = 0.03948 sqrt(k (2/(k+1))^((k+1)/(k-1)))
    # source: API Std 520 Part I, 10th ed., sec. 5.6.3, eq. (2) (SI units)
    k, Z, M = sizing["k"], sizing["Z"], sizing["molar_mass"] * 1e3
    C = 0.03948 * math.sqrt(k * (2 / (k + 1)) ** ((k + 1) / (k - 1)))
    A = (sizing["load"] * 3600 / (C * sizing["kd"] * sizing["relieving_pressure"] / 1e3)
         * math.sqrt(sizing["relieving_temperature"] * Z / M))
    assert A == pytest.approx(sizing["required_area"] * 1e6, rel=2e-3)
    areas = words(tree.by_id("relief-areas").text())
    assert f"{A:.4g}"[:4] in areas
    # API 526 effective areas: F 0.307 in2 < A <= G 0.503 in2 (source: API Std 526)
    assert 0.307 * 645.16 < A <= 0.503 * 645.16
    assert "324.5" in areas  # 0.503 in2 = 324.52 mm2
    for item in ("blocked outlet", "Relieving pressure P1", "Back pressure", "Kd",
                 "Confirming run", "within the allowed pressure: met"):
        assert item in text, item


def test_relief_report_and_inputs_state_the_values_simulated(relief_report):
    out, sizing, tree = relief_report
    changed = words(tree.by_id("inputs-changed").text())
    assert "links.psv.orifice_letter" in changed and "links.psv.area" in changed
    assert "was D" in changed
    rows = {c[0].text(): [x.text() for x in c] for c in
            (r.find("td") for r in tree.by_id("inputs-used").find("tr")) if c}
    letter = rows["links.psv.orifice_letter"]
    assert letter[2] == "G" and letter[3].startswith("CHANGED")
    assert rows["links.psv.area"][2] == "324.515 mm2"  # 0.503 in2 (API 526 G) x 645.16
    text = (out / "inputs.txt").read_text()
    line = next(ln for ln in text.splitlines() if ln.startswith("links.psv.orifice_letter"))
    assert "->  G" in line and "CHANGED" in line
    # the file itself is shown verbatim (its letter G, before the --set D)
    assert "orifice_letter: G" in tree.by_id("inputs-given").find("pre")[0].text()


def test_relief_report_software_section_lists_what_the_command_changed(relief_report,
                                                                        tmp_path):
    """--set gave D, the sizing chose G: the report says G ran, D only as given, the
    areas in mm2, and the software section names both changes so the run can be
    repeated from it; repeated that way, the run is the confirming run."""
    out, sizing, tree = relief_report
    # API Std 526 effective areas: D 0.110 in2, G 0.503 in2; 1 in2 = 645.16 mm2 (exact)
    d_mm2, g_mm2 = 0.110 * 645.16, 0.503 * 645.16
    assert sizing["letter"] == "G"
    rows = [[words(td.text()) for td in tr.find("td")]
            for tr in tree.by_id("inputs-changed").find("tbody")[0].find("tr")]
    letter = [r for r in rows if r[0] == "links.psv.orifice_letter"]
    assert len(letter) == 1  # no row saying D was simulated
    assert letter[0][1].startswith("G ") and "was D, given with --set" in letter[0][1]
    area = next(r for r in rows if r[0] == "links.psv.area")
    assert area[1] == f"{g_mm2:.6g} mm2 (was {d_mm2:.6g} mm2)"
    assert "e-0" not in words(tree.by_id("inputs-changed").text())  # nothing left in SI
    head = words(tree.by_id("title-block").text())
    assert f"links.psv.area = {g_mm2:.6g} mm2" in head
    software = words(tree.by_id("software").text())
    assert "links.psv.orifice_letter = G by cvsim relief" in software
    assert f"links.psv.area = {g_mm2:.6g} mm2 by cvsim relief" in software
    assert "links.psv.orifice_letter = D (given with --set; not simulated" in software
    repeat = words(tree.by_id("repeat").find("code")[0].text())
    assert repeat.endswith("--set links.psv.orifice_letter=G")
    # the command the report gives repeats the confirming run point for point
    args = repeat.split()[1:]
    rerun = tmp_path / "rerun"
    assert main(args + ["--out", str(rerun), "--no-plots", "--quiet"]) == 0

    def table(folder):
        return [ln for ln in (folder / "history.csv").read_text().splitlines()
                if not ln.startswith("#")]
    assert table(rerun) == table(out)


# ------------------------------------------------------------ study reports

def test_find_report_states_the_answer_in_the_title_block_and_job(tmp_path):
    path = tmp_path / "vent.yaml"
    path.write_text(IDEAL_VENT)
    out = tmp_path / "find"
    code = main(["find", str(path), "--vary", "links.vent.diameter=2 mm:20 mm", "--smallest",
                 "--meet", "tank.min_pressure <= 6 barg", "--out", str(out), "--report",
                 "--workers", "1", "--quiet"])
    assert code == 0
    import json
    seek = json.loads((out / "seek.json").read_text())
    tree = Tree((out / "report.html").read_text(encoding="utf-8"))
    head = words(tree.by_id("title-block").text())
    job = words(tree.by_id("answer").text())
    for where in (head, job):
        assert f"Answer{seek['value']}: the smallest links.vent.diameter" in where
        assert (f"between {seek['bracket'][0]} (not met) and {seek['bracket'][1]} (met)"
                in where)
        assert "tank.min_pressure <= 6 barg: met, margin +" in where
    assert "('" not in tree.by_id("notes").text()
    # the bracket's lower end was simulated and does not meet: it leaves the tank above
    # 6 barg after 20 s (the requirement checked here on the case's own number)
    lower = [r for r in json.loads((out / "cases.json").read_text())["rows"]
             if r["links.vent.diameter"] == seek["bracket"][0]]
    assert lower and lower[0]["tank.min_pressure"] > 6e5 + 101325.0


def test_a_wide_table_of_cases_is_split_and_printed_landscape():
    from cvsim.report import MOST_COLUMNS
    cols = ["links.vent.diameter"] + [f"outcome_{i}" for i in range(15)]
    rows = [{c: (f"{d} mm" if c == "links.vent.diameter" else 1.5 * i)
             for i, c in enumerate(cols)} for d in (8, 10, 12)]
    tree = Tree(render_sweep_report("Wide", rows=rows, columns=cols, keep=1))
    cases = tree.by_id("cases")
    assert "landscape" in cases.attrs["class"].split()
    tables = cases.find("table")
    assert len(tables) == 2
    seen = []
    for t in tables:
        head = [words(th.text()) for th in t.find("thead")[0].find("th")]
        assert len(head) <= MOST_COLUMNS
        assert head[:2] == ["Case", "links.vent.diameter"]  # repeated in every part
        seen += head[2:]
        assert len(t.find("tbody")[0].find("tr")) == 3
    assert seen == cols[1:]  # every column once, in order


@needs_chromium
def test_chromium_prints_the_wide_table_of_cases_on_landscape_pages(tmp_path):
    cols = ["links.vent.diameter"] + [f"outcome_{i}" for i in range(15)]
    rows = [{c: (f"{d} mm" if c == "links.vent.diameter" else 1.5 * i)
             for i, c in enumerate(cols)} for d in (8, 10, 12)]
    page = tmp_path / "wide.html"
    write_sweep_report(page, "Wide", rows=rows, columns=cols)
    pdf = tmp_path / "wide.pdf"
    chromium(tmp_path, "--no-pdf-header-footer", f"--print-to-pdf={pdf}",
             page.resolve().as_uri())
    boxes = re.findall(rb"/MediaBox\s*\[\s*0 0 ([\d.]+) ([\d.]+)\s*\]", pdf.read_bytes())
    sizes = {(round(float(w)), round(float(h))) for w, h in boxes}
    # A4 is 595 x 842 pt (ISO 216: 210 x 297 mm); the cases on landscape pages
    assert (842, 595) in sizes and (595, 842) in sizes


# ------------------------------------------------------- the sweep's answer, its units

@pytest.fixture(scope="module")
def separator_sweep(tmp_path_factory):
    """`cvsim sweep --report` over two orifices of the separator demo (15 min target:
    14 mm is too slow, 20 mm meets it), with the axes of sweep.png kept."""
    import cvsim.study.plot as study_plot
    out = tmp_path_factory.mktemp("sweep") / "sep"
    drawn = []
    keep = study_plot.save

    def save(fig, path):
        drawn.append([(ax.get_ylabel(), [list(map(float, line.get_ydata()))
                                         for line in ax.get_lines()])
                      for ax in fig.axes if ax.get_visible()])
        keep(fig, path)
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(study_plot, "save", save)
        code = main(["sweep", str(ROOT / "scenarios" / "separator-depressuring.yaml"),
                     "--vary", "links.orifice.diameter=14 mm, 20 mm", "--out", str(out),
                     "--report", "--quiet", "--workers", "1"])
    assert code == 0
    import json
    data = json.loads((out / "sweep.json").read_text())
    return out, data, Tree((out / "report.html").read_text(encoding="utf-8")), drawn[0]


def test_sweep_report_states_the_answer_in_the_title_block_and_job(separator_sweep):
    out, data, tree, _ = separator_sweep
    rows = data["rows"]
    # which case meets the depressuring target, from the case's own numbers: the time to
    # 6.9 bar g against the 15 min (900 s) the scenario states
    assert [r["separator.limit.depressure.actual"] <= 900.0 for r in rows] == [False, True]
    assert all(r["separator.limit.design_pressure.met"] and
               r["separator.limit.min_metal_temperature.met"] for r in rows)
    head = words(tree.by_id("title-block").text())
    job = words(tree.by_id("answer").text())
    for where in (head, job):
        assert "Answer1 of 2 cases meet every design limit the scenario states" in where
        assert ("links.orifice.diameter meeting every limitsmallest 20 mm (case 2), "
                "largest 20 mm (case 2)") in where
        assert ("Binding limitseparator.limit.depressure (depressured to 6.9 bar g within "
                "15 min), crossed in 1 of 2 cases (case 1: links.orifice.diameter = 14 mm)"
                in where)
    notes = words(tree.by_id("notes").text())
    assert "2 cases: 0 completed, 2 stopped at a stop condition, 0 failed" in notes
    assert "{" not in notes and "'" not in notes  # words, not a Python dict


def test_sweep_answer_without_a_crossing_names_the_least_margin():
    """No case crosses: the binding limit is the one closest to it, relative to its limit."""
    from cvsim.study.report import sweep_answer
    from cvsim.study.sweep import parse_values
    from cvsim.study.table import Column, SweepResult
    p = parse_values("links.vent.diameter", "8 mm, 10 mm")
    cols = [Column("case", "", "case"), Column(p.key, "", "parameter"),
            Column("status", "", "status")]
    for name, unit in (("tank.limit.design_pressure", "Pa"), ("tank.limit.depressure", "s")):
        cols += [Column(f"{name}.met", "", "limit-met", "words: met (1) or crossed (0)"),
                 Column(f"{name}.limit", unit, "limit-value"),
                 Column(f"{name}.margin", unit, "limit-margin", difference=True)]
    rows = [{"case": i, p.key: d, "status": "stopped",
             "tank.limit.design_pressure.met": True, "tank.limit.design_pressure.limit": 11e5,
             "tank.limit.design_pressure.margin": m_p,
             "tank.limit.depressure.met": True, "tank.limit.depressure.limit": 900.0,
             "tank.limit.depressure.margin": m_t}
            for i, d, m_p, m_t in ((1, "8 mm", 5e5, 30.0), (2, "10 mm", 4e5, 200.0))]
    result = SweepResult("t", "t.yaml", [p], cols, rows, 101325.0)
    answer = dict(sweep_answer(result))
    assert answer["Answer"] == "2 of 2 cases meet every design limit the scenario states"
    assert answer["links.vent.diameter meeting every limit"].startswith(
        "smallest 8 mm (case 1), largest 10 mm (case 2)")
    # 30 s of 900 s (3.3 %) is closer than 4 bar of 11 bar a (36 %); times in the study's
    # unit, min (its longest time, 900 s, is over 600 s)
    assert answer["Binding limit"] == (
        "none is crossed; the least margin is that of tank.limit.depressure (words; limit "
        "15 min), +0.5 min in case 1: links.vent.diameter = 8 mm")


def test_study_times_are_in_one_unit_in_the_plot_text_table_report_and_csv(separator_sweep):
    """The depressuring time is shown in the study's unit everywhere: the run's rule
    (cvsim.display.time_unit) applied to the longest time of the study, here min."""
    import csv
    from cvsim.display import time_unit
    out, data, tree, axes = separator_sweep
    rows = data["rows"]
    actual = [r["separator.limit.depressure.actual"] for r in rows]
    longest = max(v for r in rows for c in data["columns"] if c["unit"] == "s"
                  and c["kind"] != "parameter-si" for v in [r[c["name"]]]
                  if isinstance(v, float))
    unit, size = time_unit(longest)
    assert unit == "min" and size == 60.0  # runs of 11 to 23 min
    shown = [v / 60.0 for v in actual]
    name = f"separator.limit.depressure.actual [{unit}]"
    # sweep.csv
    lines = [ln for ln in (out / "sweep.csv").read_text().splitlines() if not ln.startswith("#")]
    table = list(csv.DictReader(lines))
    assert [float(r[name]) for r in table] == pytest.approx(shown, rel=1e-9)
    assert "separator.limit.depressure.actual [s]" not in lines[0]
    assert not [h for h in lines[0].split(",") if h.endswith("[s]")]  # every time in min
    # sweep.txt
    text = (out / "sweep.txt").read_text().splitlines()
    at = next(i for i, ln in enumerate(text) if ln.startswith("case "))
    assert name in text[at]
    for line, v in zip(text[at + 1:at + 3], shown):
        assert f"{v:.6g}" in line.split()
    # the report's table of cases
    cases = tree.by_id("cases")
    assert name in words(cases.text()).replace("<wbr>", "")
    col = [words(th.text()) for th in cases.find("thead")[0].find("th")].index(name)
    cells = [words(tr.find("td")[col].text()) for tr in cases.find("tbody")[0].find("tr")]
    assert [float(c) for c in cells] == pytest.approx(shown, rel=1e-4)
    # sweep.png: a panel with its time axis in min draws these values
    panels = [lines for label, lines in axes if label == f"Time [{unit}]"]
    assert panels and not [label for label, _ in axes if label == "Time [s]"]
    assert any(ys and ys[0] == pytest.approx(shown, rel=1e-9) for ys in panels)
