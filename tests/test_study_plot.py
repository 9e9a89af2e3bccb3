"""The sweep plot (cvsim.study.plot) and the outcomes it draws by default: no two panels
with the same numbers, titles wrapped in words, legends under the panels, the varied key
named in words on the x axis."""
import doctest
from types import SimpleNamespace

import pytest

import cvsim
from cvsim.study import plot as study_plot
from cvsim.study.plot import TITLE_CHARS, _title, axis_words
from cvsim.study.table import _distinct

# any warning while plotting (a collapsed layout, a legend that does not fit) is a failure
pytestmark = pytest.mark.filterwarnings("error")

# a nitrogen bottle vented with a highest allowed temperature and no wall: the highest
# gas temperature and the value the limit check reached are the same numbers
BOTTLE = """
title: Nitrogen bottle vented through a small orifice
fluid: Nitrogen
vessels:
  bottle:
    volume: 50 L
    initial: {pressure: 200 barg, temperature: 15 degC}
    limits:
      min_metal_temperature: -40 degC
      max_temperature: 50 degC
      depressure: {to: 20 barg, within: 2 min}
reservoirs:
  air: {pressure: 1 atm, temperature: 15 degC}
links:
  vent: {from: bottle, to: air, device: orifice, diameter: 3 mm, discharge_coefficient: 0.84}
run:
  end: 5 min
  record_every: 2 s
  stop_when:
    - {vessel: bottle, pressure_below: 20 barg}
"""


@pytest.fixture(scope="module")
def swept(tmp_path_factory):
    path = tmp_path_factory.mktemp("sweep") / "bottle.yaml"
    path.write_text(BOTTLE)
    return cvsim.sweep(path, {"vessels.bottle.initial.temperature": "0 degC, 30 degC",
                              "links.vent.diameter": "2 mm, 4 mm"}, progress=False)


def drawn_sweep(result, monkeypatch, tmp_path) -> list[dict]:
    """Draw the sweep plot and return, per visible panel, what is on it (the figure is
    inspected where it would be written)."""
    seen = []

    def look(fig, path):
        fig.canvas.draw()
        for ax in fig.axes:
            if not ax.get_visible():
                continue
            legend = ax.get_legend()
            seen.append({
                "title": ax.get_title(loc="left"), "xlabel": ax.get_xlabel(),
                "ys": [tuple(ln.get_ydata()) for ln in ax.get_lines()
                       if ln.get_marker() == "o"],
                "xlabel_box": ax.xaxis.label.get_window_extent(),
                "plot_box": ax.get_window_extent(),
                "legend_box": None if legend is None else legend.get_window_extent(),
                "legend_texts": [] if legend is None else [t.get_text()
                                                           for t in legend.get_texts()]})

    monkeypatch.setattr(study_plot, "save", look)
    result.plot(tmp_path / "sweep.png")
    return seen


def test_outcomes_equal_in_every_case_get_one_panel(swept):
    # the highest gas temperature and the highest-temperature check are the same numbers
    same = [[r.get(n) for r in swept.rows]
            for n in ("bottle.max_temperature", "bottle.limit.max_temperature.actual")]
    assert same[0] == same[1] and len(set(same[0])) == 2
    drawn = swept.outcome_defaults
    assert "bottle.max_temperature" in drawn
    assert "bottle.limit.max_temperature.actual" not in drawn
    values = [tuple(r.get(n) for r in swept.rows) for n in drawn]
    assert len(set(values)) == len(values)


def test_distinct_keeps_the_first_of_equal_outcomes_and_every_different_one():
    rows = [{"a": 1.0, "b": 1.0, "c": 2.0, "d": None}, {"a": 3.0, "b": 3.0, "c": 3.0,
                                                        "d": None}]
    result = SimpleNamespace(rows=rows)
    assert _distinct(result, ["a", "b", "c", "d"]) == ["a", "c", "d"]
    assert _distinct(result, ["b", "a"]) == ["b"]


def test_sweep_panels_are_distinct_with_titles_in_words_and_legends_below(
        swept, monkeypatch, tmp_path):
    panels = drawn_sweep(swept, monkeypatch, tmp_path)
    assert len(panels) == len(swept.outcome_defaults) == 3
    # no two panels show the same points
    assert len({tuple(p["ys"]) for p in panels}) == len(panels)
    assert len({p["title"] for p in panels}) == len(panels)
    for p in panels:
        assert "." not in p["title"].split(" ")[0]  # words, not a column name
        assert all(len(line) <= TITLE_CHARS for line in p["title"].split("\n"))
        # the x axis: the first varied key in words, with its unit
        assert p["xlabel"] == "Initial temperature of vessel 'bottle' [°C]"
        # the legend (the other varied key's values and the limit) under the panel,
        # below its axis label: it hides no point
        assert p["legend_box"] is not None
        assert "diameter = 2 mm" in p["legend_texts"]
        assert any(t.startswith("limit:") for t in p["legend_texts"])
        assert p["legend_box"].y1 <= p["xlabel_box"].y0 + 1.0  # [px]
        assert p["legend_box"].y1 < p["plot_box"].y0


def test_a_long_title_wraps_on_two_lines_and_is_cut_after_them():
    words = ("time taken to depressure the separator drum to half its design pressure "
             "or to 6.9 bar g, whichever is lower, from the start of the fire")
    text = _title(SimpleNamespace(text=words, name="x"))
    lines = text.split("\n")
    assert len(lines) == 2 and all(len(line) <= TITLE_CHARS for line in lines)
    assert lines[0].startswith("Time taken") and lines[1].endswith("…")
    assert " ".join(lines)[:-1].rstrip() in words[0].upper() + words[1:]
    short = _title(SimpleNamespace(text="lowest gas temperature in drum", name="x"))
    assert short == "Lowest gas temperature in drum"
    assert _title(SimpleNamespace(text="", name="drum.min_temperature")) == \
        "Drum.min_temperature"  # no words: the column's name


@pytest.mark.parametrize("key, words", [
    ("links.orifice.diameter", "Diameter of link 'orifice'"),
    ("vessels.drum.initial.temperature", "Initial temperature of vessel 'drum'"),
    ("reservoirs.supply.pressure", "Pressure of reservoir 'supply'"),
    ("vessels.drum.heat.fire.environment_factor",
     "Heat fire environment factor of vessel 'drum'"),
    ("run.end", "Run end"),
    ("run.stop_when[0].pressure_below", "Run stop when 0 pressure below"),
])
def test_varied_keys_are_named_in_words(key, words):
    assert axis_words(key) == words


def test_the_examples_in_the_sweep_plot_module_hold():
    assert doctest.testmod(study_plot).attempted >= 1
    assert doctest.testmod(study_plot).failed == 0

