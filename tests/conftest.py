"""Shared helpers for the tests: small networks built directly in SI."""
import math

import pytest

from cvsim import network as nw
from cvsim.signals import Constant

R_U = 8.314462618
M_AIR = 0.0289647  # [kg/mol] dry air (CRC Handbook of Chemistry and Physics), from memory


def ideal_air(gamma: float = 1.4) -> nw.FluidSpec:
    """A perfect gas with the molar mass of air and cp chosen for the given gamma."""
    R = R_U / M_AIR
    return nw.FluidSpec("Air", model="ideal-gas", molar_mass=M_AIR, cp=gamma / (gamma - 1) * R)


def orifice_area(d: float) -> float:
    return math.pi * d * d / 4.0


def blowdown_network(fluid, p0, T0, volume=1.0, d=0.01, cd=0.84, flow_model="real-gas",
                     p_stop=None, end=2000.0, heat=(), p_back=101325.0, rtol=1e-8,
                     record_every=1.0, method="LSODA"):
    stop = (nw.StopCondition("tank", "pressure", "below", p_stop),) if p_stop else ()
    return nw.Network(
        title="test blowdown", fluid=fluid,
        vessels=(nw.Vessel("tank", nw.Geometry(volume), nw.InitialState(p0, T0), heat=heat),),
        reservoirs=(nw.Reservoir("outside", Constant(p_back), Constant(T0)),),
        links=(nw.Link("vent", "tank", "outside", nw.Orifice(orifice_area(d), cd, flow_model)),),
        run=nw.RunSettings(end_time=end, record_every=record_every, stop=stop, rtol=rtol,
                           method=method))


#: a scenario that cannot finish: adiabatic nitrogen vented into vacuum cools to the
#: triple point, where solid would form (the run must fail with a clear message)
COLD_BLOWDOWN = """
fluid: Nitrogen
vessels:
  tank: {volume: 0.05 m3, initial: {pressure: 20 bara, temperature: -150 degC}}
reservoirs:
  vacuum: {pressure: 100 Pa, temperature: 15 degC}
links:
  vent: {from: tank, to: vacuum, device: orifice, diameter: 20 mm, discharge_coefficient: 1}
run: {end: 1 h}
"""


IDEAL_VENT = """
title: Ideal-gas vent of a small tank
fluid: Nitrogen
properties: ideal-gas
ideal_gas: {molar_mass: 28.0134 g/mol, heat_capacity: 1040 J/kg/K}
vessels:
  tank: {volume: 0.5 m3, initial: {pressure: 10 barg, temperature: 15 degC}}
reservoirs:
  outside: {pressure: 1 atm, temperature: 15 degC}
links:
  vent: {from: tank, to: outside, device: orifice, diameter: 5 mm, discharge_coefficient: 0.8,
         flow_model: ideal-gas}
run: {end: 20 s}
"""


@pytest.fixture
def air14():
    return ideal_air(1.4)


#: a small vented bottle: a run of about a second, for tests of files and processes
SMALL = """\
title: small vented bottle
fluid: Nitrogen
vessels:
  tank: {volume: 0.01 m3, initial: {pressure: 20 barg, temperature: 15 degC}}
reservoirs:
  air: {pressure: 1 atm, temperature: 15 degC}
links:
  vent: {from: tank, to: air, device: orifice, diameter: 3 mm, discharge_coefficient: 0.8}
run: {end: 10 s, record_every: 1 s}
"""


@pytest.fixture
def small(tmp_path):
    path = tmp_path / "small.yaml"
    path.write_text(SMALL)
    return path


def report_rows(page: str, section: str) -> list[list[str]]:
    """The cells, as plain text, of the table rows of one section (by its id) of a
    calculation report's HTML; heading rows across the table are left out."""
    import html
    import re
    start = page.index(f'id="{section}"')
    end = page.find("</section>", start)
    rows = []
    for row in re.findall(r"<tr[^>]*>(.*?)</tr>", page[start:end], flags=re.S):
        cells = re.findall(r"<td[^>]*>(.*?)</td>", row, flags=re.S)
        if cells:
            rows.append([html.unescape(re.sub(r"<[^>]+>", "", c)).strip() for c in cells])
    return rows


def report_text(page: str, section: str) -> str:
    """The plain text of one section (by its id) of a calculation report's HTML."""
    import html
    import re
    start = page.index(f'id="{section}"')
    end = page.find("</section>", start)
    return re.sub(r"\s+", " ", html.unescape(re.sub(r"<[^>]+>", " ", page[start:end])))
