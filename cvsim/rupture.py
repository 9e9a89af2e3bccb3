"""Rupture screening of a vessel's wall in a fire: pressure stress against the strength
of the metal at its temperature, at every moment of the run.

For a vessel whose ``limits`` state ``rupture`` (a :class:`cvsim.network.RuptureLimit`),
after the run and from its histories (every recorded point and accepted step)::

    dp(t)        = p(t) - p_atm                          pressure difference across the wall
    R            = D/2 + (layers inside the load-bearing one) + c     inside radius, corroded
    t_w          = (thickness of the load-bearing layer) - c          c: corrosion allowance
    S_h, S_l     = shell stresses (cvsim.mechanics.shell_stresses)   ASME VIII-1 UG-27 / App. 1
    S(t)         = S_h  or  sqrt(S_h^2 - S_h S_l + S_l^2)             the stress compared
    T_m(t)       = hottest temperature through the load-bearing layer
    F(t)         = F_20 k(T_m)                                         strength at temperature
    allowed(t)   = f F(t)                                              f: the criterion's fraction
    margin(t)    = allowed(t) - S(t),   utilisation(t) = S(t) / allowed(t)

The check is met when the utilisation stays at or below 1 for the whole run; the
earliest time to rupture is when the margin first reaches zero (linear between
steps). The new histories are columns ``<vessel>.rupture.<quantity>``; the check is a
:class:`cvsim.limits.LimitCheck` with key ``rupture`` (limit 1, value the highest
utilisation, margin 1 minus it), so target seeking (``--meet limits``) binds on it.

A pure evaluation of a finished run: nothing here changes the run itself.
"""
from __future__ import annotations

import numpy as np

from .heat.definitions import Wall
from .limits import LimitCheck, first_time_at_or_below
from .mechanics import (CREEP_SOURCE, STRESS_SOURCE, creep_damage, equivalent_stress,
                        shell_stresses, utilisation)

ZERO_CELSIUS = 273.15
#: unit of the stress columns: the SI unit of a stress (shown in MPa)
STRESS_UNIT = "N/m2"
#: the quantities of ``<vessel>.rupture.<quantity>`` (name, SI unit)
QUANTITIES = (
    ("metal_temperature", "K"),
    ("hoop_stress", STRESS_UNIT),
    ("longitudinal_stress", STRESS_UNIT),
    ("stress", STRESS_UNIT),
    ("strength", STRESS_UNIT),
    ("allowed_stress", STRESS_UNIT),
    ("margin", STRESS_UNIT),
    ("utilisation", ""),
)
KIND = "rupture"

TENSILE_PRACTICE = (
    "rupture when the membrane stress reaches the ultimate tensile strength of the metal "
    "at its temperature (or a stated share of it): the usual screening criterion for "
    "vessels exposed to fire (API Std 521, vessels exposed to fire and depressuring; "
    "Hekkelstrand & Skulstad, Guidelines for the protection of pressurised systems "
    "exposed to fire, Scandpower 2004; sections from memory)")
YIELD_PRACTICE = (
    "stress against the effective yield strength at the metal temperature (EN 1993-1-2 "
    "k_y,theta, stress at 2 % strain): the onset of gross plastic deformation, a "
    "conservative stand-in for rupture")
CAUTION_NOTE = (
    "a screening estimate: it does not replace the analysis the governing code requires "
    "(short-time strengths, heads no weaker than the shell, the 1-D wall's temperature; "
    "local hot spots are hotter)")


class Layout:
    """Where a vessel's rupture check takes its numbers from.

    R, t          [m] inside radius (corroded) and load-bearing thickness
    kind          ``cylinder`` or ``sphere``
    nodes         wall temperature columns through the load-bearing layer
    """

    def __init__(self, vessel, spec):
        wall = next(h for h in vessel.heat if isinstance(h, Wall))
        layers = wall.layers
        inner = sum(la.thickness for la in layers[:spec.layer])
        layer = layers[spec.layer]
        self.kind = vessel.geometry.kind
        self.R = 0.5 * vessel.geometry.inner_diameter + inner + spec.corrosion_allowance
        self.t = layer.thickness - spec.corrosion_allowance
        self.material = layer.material.name
        self.layer_thickness = layer.thickness
        p = f"{vessel.name}.{wall.name}"
        if wall.model == "lumped":
            self.nodes = [f"{p}.inner_temperature"]
        else:
            first = sum(la.divisions for la in layers[:spec.layer])
            self.nodes = [f"{p}.node{i}_temperature"
                          for i in range(first, first + layer.divisions + 1)]


def columns(vessel) -> list[tuple[str, str, str]]:
    """The history columns of one vessel's rupture check (name, SI unit, kind)."""
    return [(f"{vessel}.rupture.{q}", unit, KIND) for q, unit in QUANTITIES]


def histories(rows: np.ndarray, index: dict, vessel, spec, layout: Layout,
              atmosphere: float) -> np.ndarray:
    """The rupture columns (in :data:`QUANTITIES` order) for rows of a run's histories.

    ``index`` maps a column name to its position in ``rows``."""
    n = rows.shape[0]
    if n == 0:
        return np.zeros((0, len(QUANTITIES)))
    dp = rows[:, index[f"{vessel.name}.pressure"]] - atmosphere
    T = np.max(np.column_stack([rows[:, index[c]] for c in layout.nodes]), axis=1)
    hoop, longitudinal = shell_stresses(layout.kind, dp, layout.R, layout.t)
    hoop = np.broadcast_to(hoop, dp.shape)
    longitudinal = np.broadcast_to(longitudinal, dp.shape)
    if spec.stress == "equivalent":
        stress = np.sign(hoop) * equivalent_stress(hoop, longitudinal)
    else:
        stress = hoop
    strength = spec.room_strength * spec.strength.factor(spec.criterion, T)
    allowed = spec.fraction * strength
    return np.column_stack([T, hoop, longitudinal, stress, strength, allowed,
                            allowed - stress, utilisation(stress, allowed)])


def add_rupture(result) -> None:
    """Add the rupture histories, checks, summary figures, warnings and assumptions of
    every vessel that states ``limits.rupture`` to a finished :class:`cvsim.result.Result`."""
    net = result.network
    todo = [(v, v.limits.rupture) for v in net.vessels
            if v.limits is not None and getattr(v.limits, "rupture", None) is not None]
    if not todo:
        return
    for vessel, spec in todo:
        layout = Layout(vessel, spec)
        index = {c[0]: i for i, c in enumerate(result.columns)}
        new = [histories(rows, index, vessel, spec, layout, net.atmosphere)
               for rows in (result.data, result.fine_data)]
        result.columns = list(result.columns) + columns(vessel.name)
        result.data = np.hstack([result.data, new[0]])
        result.fine_data = np.hstack([result.fine_data, new[1]])
        if spec.creep is not None:
            add_creep(result, vessel, spec)
        check, figures, warnings = judge(result, vessel, spec, layout)
        if check is not None:
            result.limits.append(check)
        if spec.creep is not None and len(result.data):
            creep_check, creep_figures = judge_creep(result, vessel, spec)
            result.limits.append(creep_check)
            figures.update(creep_figures)
        result.rupture[vessel.name] = figures
        result.warnings += warnings
        result.assumptions.append(assumption(vessel, spec, layout))


def add_creep(result, vessel, spec) -> None:
    """Add ``<vessel>.rupture.creep_damage``: Robinson's life fractions along the run
    (every recorded point and step, in time order), from its stress and metal
    temperature histories."""
    name = f"{vessel.name}.rupture"
    C, curve_P, curve_S = spec.creep[0], spec.creep[1], spec.creep[2]
    rows = result._all()
    t = rows[:, 0]
    D = creep_damage(t, rows[:, result._col(f"{name}.stress")],
                     rows[:, result._col(f"{name}.metal_temperature")], C, curve_P, curve_S)
    result.columns = list(result.columns) + [(f"{name}.creep_damage", "", KIND)]
    for attr in ("data", "fine_data"):
        block = getattr(result, attr)
        extra = np.interp(block[:, 0], t, D) if len(block) and len(t) else np.zeros(len(block))
        setattr(result, attr, np.hstack([block, extra.reshape(-1, 1)]))


def judge_creep(result, vessel, spec):
    """(LimitCheck, summary figures) of the creep damage of one vessel's wall."""
    rows = result._all()
    t = rows[:, 0]
    D = rows[:, result._col(f"{vessel.name}.rupture.creep_damage")]
    t_fail = first_time_at_or_below(t, 1.0 - D, 0.0)
    failed = t_fail == t_fail
    D_end = float(D[-1])
    note = (f"CREEP RUPTURE predicted at t = {t_fail:.6g} s ({t_fail / 60:.4g} min)" if failed
            else f"damage {D_end:.3g} of 1 at the end of the run (t = {t[-1]:.6g} s)")
    check = LimitCheck(
        vessel.name, "creep damage of the wall below 1 (Larson-Miller life fractions)",
        "damage", 1.0, D_end, float(t[-1]), bool(D_end <= 1.0), 1.0 - D_end, "",
        f"{CREEP_SOURCE}; master curve and C = {spec.creep[0]:g} as stated in the scenario",
        "; ".join([note, CAUTION_NOTE]), key="rupture.creep")
    return check, {"creep_damage": D_end,
                   "creep_rupture_time_s": float(t_fail) if failed else None}


def judge(result, vessel, spec, layout: Layout):
    """(LimitCheck or ``None`` without data, summary figures, warnings) of one vessel."""
    if len(result.data) == 0:
        return None, {}, []
    rows = result._all()
    t = rows[:, 0]
    col = {q: rows[:, result._col(f"{vessel.name}.rupture.{q}")] for q, _ in QUANTITIES}
    u = col["utilisation"]
    i = int(np.nanargmax(u))
    j = int(np.nanargmin(col["margin"]))
    t_rupture = first_time_at_or_below(t, col["margin"], 0.0)
    crossed = t_rupture == t_rupture
    u_max = float(u[i])
    words = ("ultimate tensile strength" if spec.criterion == "tensile"
             else "yield strength")
    share = "" if spec.fraction == 1.0 else f"{spec.fraction * 100:.4g} % of "
    which = "hoop stress" if spec.stress == "hoop" else "equivalent (von Mises) stress"
    name = (f"{which} in the wall below {share}its {words} at the metal temperature "
            "(utilisation at most 1)")

    def state(k):
        return (f"stress {col['stress'][k] / 1e6:.4g} MPa against {col['allowed_stress'][k] / 1e6:.4g} "
                f"MPa at {col['metal_temperature'][k] - ZERO_CELSIUS:.0f} degC "
                f"(p = {(rows[k, result._col(f'{vessel.name}.pressure')] - result.network.atmosphere) / 1e5:.4g} bar g)")

    notes = []
    if crossed:
        k = int(np.searchsorted(t, t_rupture, side="left"))
        k = min(k, len(t) - 1)
        notes.append(f"RUPTURE predicted: the stress first reaches the criterion at "
                     f"t = {t_rupture:.6g} s ({t_rupture / 60:.4g} min), {state(k)}")
    else:
        notes.append(f"least margin {col['margin'][j] / 1e6:.4g} MPa at t = {t[j]:.6g} s, "
                     f"{state(j)}")
        if j >= len(t) - 1 or t[j] >= 0.999 * t[-1]:
            notes.append(f"the margin was still shrinking at the end of the run (t = "
                         f"{t[-1]:.6g} s): a fire lasting longer may still rupture the "
                         "vessel; run to the fire's full duration")
        else:
            notes.append(f"checked to the end of the run, t = {t[-1]:.6g} s")
    if result.status == "failed":
        notes.append("the run failed part-way: checked only up to its last state")
    notes.append(CAUTION_NOTE)
    practice = TENSILE_PRACTICE if spec.criterion == "tensile" else YIELD_PRACTICE
    check = LimitCheck(vessel.name, name, "stress", 1.0, u_max, float(t[i]),
                       bool(u_max <= 1.0), 1.0 - u_max, "", practice, "; ".join(notes),
                       key="rupture")
    figures = {
        "rupture_time_s": float(t_rupture) if crossed else None,
        "rupture_max_utilisation": u_max,
        "rupture_max_utilisation_time_s": float(t[i]),
        "rupture_least_margin_Pa": float(col["margin"][j]),
        "rupture_least_margin_time_s": float(t[j]),
        "rupture_max_stress_Pa": float(np.nanmax(col["stress"])),
        "rupture_max_metal_temperature_K": float(np.nanmax(col["metal_temperature"])),
    }
    warnings = []
    where = f"vessel '{vessel.name}' rupture screening"
    if crossed:
        warnings.append(f"{where}: the wall's stress reaches {share}its {words} at "
                        f"t = {t_rupture:.4g} s ({t_rupture / 60:.4g} min): the vessel may "
                        "rupture before it is depressured (see the design limits)")
    if not spec.strength.checked:
        warnings.append(f"{where}: the strength-at-temperature factors of "
                        f"'{spec.strength.name}' are {spec.strength.source}")
    T_top = float(np.nanmax(col["metal_temperature"]))
    if T_top > spec.strength.top:
        warnings.append(f"{where}: the metal reaches {T_top - ZERO_CELSIUS:.0f} degC, above "
                        f"the {spec.strength.top - ZERO_CELSIUS:.0f} degC its strength data "
                        "reach (the last value is held)")
    if np.any(col["hoop_stress"] < 0.0):
        warnings.append(f"{where}: the pressure inside falls below the atmosphere's at "
                        "times; the wall is then under external pressure, and buckling is "
                        "not checked")
    return check, figures, warnings


def assumption(vessel, spec, layout: Layout) -> str:
    """The assumption-register line of one vessel's rupture check."""
    form = ("cylinder" if layout.kind == "cylinder" else "sphere")
    which = ("the hoop stress" if spec.stress == "hoop" else
             "the von Mises equivalent of the hoop and longitudinal stresses")
    basis = (f"ultimate tensile strength {spec.tensile_strength / 1e6:.4g} MPa"
             if spec.criterion == "tensile"
             else f"yield strength {spec.yield_strength / 1e6:.4g} MPa")
    share = "" if spec.fraction == 1.0 else f"{spec.fraction * 100:.4g} % of "
    ca = (f", less a corrosion allowance of {spec.corrosion_allowance * 1e3:.4g} mm"
          if spec.corrosion_allowance > 0.0 else "")
    return (f"Vessel '{vessel.name}': rupture screening of the {form}'s layer {spec.layer + 1} "
            f"({layout.material}, {layout.layer_thickness * 1e3:.4g} mm{ca}: "
            f"t = {layout.t * 1e3:.4g} mm at inside radius {layout.R * 1e3:.5g} mm). Membrane "
            f"stresses from the pressure inside less the atmosphere's ({STRESS_SOURCE}); "
            f"{which} compared with {share}the {basis} at room temperature times its "
            f"retained fraction at the hottest temperature through that layer "
            f"({spec.strength.source}). "
            + ("Short-time strengths, no creep" if spec.creep is None else
               "Short-time strengths, and creep damage by Larson-Miller life fractions "
               f"(C = {spec.creep[0]:g}, the master curve stated)")
            + "; heads no weaker than the shell; the wall's temperature is the 1-D wall's, "
            "the fire's heat spread over the whole wall, so a local hot spot is hotter.")


__all__ = ["KIND", "Layout", "QUANTITIES", "STRESS_UNIT", "add_rupture", "columns",
           "histories", "judge"]
