"""Load a scenario: text -> tree -> overrides -> validation -> :class:`~cvsim.network.Network`.

Every user mistake found on the way is collected and raised once, as a
:class:`~cvsim.errors.ScenarioError` listing all problems with their key paths
and lines; nothing the user can write produces a traceback.
"""
from __future__ import annotations

import hashlib
import math
from dataclasses import dataclass, field
from pathlib import Path

from ..contents import has_level, inside_height, share_below
from ..errors import Problem, ScenarioError
from ..network import FluidSpec, Link, Network, Regulator, RunSettings, StopCondition
from . import properties, schema, tree
from . import vessels as vessels_
from .controllers import build_controller, build_fill
from .mixtures import MixtureGiven, mixture_spec
from .sequences import build_sequence
from .service import check_liquid_service
from .spec import BAD, At, Context, EchoRow


@dataclass(frozen=True)
class Scenario:
    """A scenario read, checked and converted to SI.

    network      the network the model runs
    echo         one row per value: key path, value as given, value used (SI), note
    source_name  file path or the name given to :func:`load_scenario_text`
    source_text  the text read (before overrides)
    sha256       hex digest of the file's bytes (of the text encoded as UTF-8)
    overrides    the overrides applied, key path -> value as given
    uncertainty  the ``uncertainty:`` section (:class:`~cvsim.distributions.UncertaintySpec`,
                 SI) or ``None``; runs do not use it, ``cvsim uncertainty`` does
    """

    network: Network
    echo: tuple[EchoRow, ...]
    source_name: str
    source_text: str
    sha256: str
    overrides: dict = field(default_factory=dict)
    uncertainty: object = None

    @property
    def warnings(self) -> list[str]:
        """What the reader found worth a look though not wrong (echo rows whose
        note is a warning), as sentences naming the key."""
        out = []
        for r in self.echo:
            head, sep, text = r.note.partition("warning: ")
            if sep:
                out.append(f"{r.key}: {text}")
        return out

    def echo_table(self) -> str:
        """The echo as aligned text columns: key, given, used, note."""
        rows = [("key", "given", "used", "note")]
        rows += [(r.key, r.given, r.used, r.note) for r in self.echo]
        widths = [min(max(len(r[i]) for r in rows), 48) for i in range(3)]
        return "\n".join(
            "  ".join(c.ljust(w) for c, w in zip(r[:3], widths)) + ("  " + r[3] if r[3] else "")
            for r in rows)


def load_scenario(path, overrides: dict | None = None) -> Scenario:
    """Read a scenario file; see :func:`load_scenario_text`.

    Raises :class:`~cvsim.errors.ScenarioError` also when the file cannot be
    read or is not UTF-8 text.
    """
    path = Path(path)
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise ScenarioError([Problem("", f"cannot read the file: {exc.strerror or exc}")],
                            str(path)) from None
    return load_scenario_bytes(data, str(path), overrides)


def load_scenario_bytes(data: bytes, source_name: str, overrides: dict | None = None
                        ) -> Scenario:
    """Read a scenario from the bytes of a file (UTF-8) read earlier.

    The hash is that of the bytes, as for :func:`load_scenario`; sweeps send a
    file's bytes to worker processes or machines that cannot see the file.
    """
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise ScenarioError([Problem("", f"the file is not UTF-8 text ({exc.reason} at byte "
                                         f"{exc.start}); save it as UTF-8")],
                            source_name) from None
    return _load(text, source_name, hashlib.sha256(data).hexdigest(), overrides)


def load_scenario_text(text: str, source_name: str = "<text>",
                       overrides: dict | None = None) -> Scenario:
    """Read a scenario from text, apply ``overrides``, check it and build its network.

    Parameters
    ----------
    text : str
        the scenario (YAML).
    source_name : str
        how messages name the source.
    overrides : dict, optional
        dotted key path -> value, e.g. ``{"links.vent.diameter": "12 mm"}``;
        applied before validation. Text values are read as YAML.

    Raises
    ------
    ScenarioError
        listing every problem found, each with key path and line.
    """
    return _load(text, source_name, hashlib.sha256(text.encode("utf-8")).hexdigest(), overrides)


def _load(text: str, source_name: str, sha256: str, overrides: dict | None) -> Scenario:
    ctx = Context()
    root, problems = tree.parse(text)
    ctx.problems += problems
    values = BAD
    if root is None and not problems:
        ctx.problems.append(Problem("", "the file is empty; a scenario needs at least "
                                        "'fluid', 'vessels' and 'run'", 1))
    elif root is not None and not isinstance(root, dict):
        ctx.problems.append(Problem("", "the file must be a mapping of keys "
                                        "('title:', 'fluid:', 'vessels:', ...)", 1))
    elif root is not None:
        applied, problems = tree.apply_overrides(root, overrides)
        ctx.problems += problems
        ctx.overridden = applied
        values = schema.read(root, ctx)
    if values is not BAD and not ctx.problems:
        read_rows = len(ctx.echo)
        try:
            network = build_network(values, ctx)
        except ArithmeticError as exc:  # sizes the physics cannot take (the key is unknown)
            network = None
            ctx.problems.append(Problem("", f"the values cannot be computed with ({exc}); "
                                            "check the sizes and units of the vessels and "
                                            "walls"))
        if network is not None:
            check_states(network, values, ctx)
            warn_devices(network, values, ctx)
        ctx.echo[:] = _merge_echo(ctx.echo[:read_rows], ctx.echo[read_rows:])
    if ctx.problems:
        raise ScenarioError(_ordered(ctx.problems), source_name)
    from .uncertainty import build as build_uncertainty
    return Scenario(network=network, echo=tuple(ctx.echo), source_name=source_name,
                    source_text=text, sha256=sha256, overrides=dict(overrides or {}),
                    uncertainty=build_uncertainty(values.get("uncertainty")))


def _merge_echo(read: list[EchoRow], built: list[EchoRow]) -> list[EchoRow]:
    """Place each row computed while building after the last row of its parent key."""
    rows = list(read)
    for row in built:
        parent = row.key.rsplit(".", 1)[0] if "." in row.key else row.key
        place = len(rows)
        for i in range(len(rows) - 1, -1, -1):
            key = rows[i].key
            if key == parent or key.startswith((parent + ".", parent + "[")):
                place = i + 1
                break
        rows.insert(place, row)
    return rows


def _ordered(problems: list[Problem]) -> list[Problem]:
    """Problems in file order; those without a line (from overrides) last."""
    return sorted(problems, key=lambda p: (p.line is None, p.line or 0))


def _outlet(v, vessels: dict, fluid, ctx: Context):
    """(outlet height [m], share of the vessel's volume below it [-]) of a link with
    ``outlet_height``, or (None, None); a problem where the height cannot be placed."""
    height = v.get("outlet_height")
    if height is None:
        return None, None
    at = v.where["outlet_height"]
    vessel = vessels.get(v["from"])
    if vessel is None:
        ctx.problem(at, f"outlet_height places an outlet on the 'from' vessel, but "
                    f"'{v['from']}' is a reservoir: leave outlet_height out")
        return None, None
    if fluid.model == "mixture":
        ctx.problem(at, "outlet_height is not built for mixtures in this version (the "
                    "phases a side outlet draws are not split by composition): use draws: "
                    "vapour or draws: liquid")
        return None, None
    geometry = vessel.geometry
    if not has_level(geometry):
        ctx.problem(at, f"outlet_height needs the vessel '{vessel.name}' given by its shape "
                    "(a level needs one): give its shape instead of its volume, or use "
                    "draws: vapour or draws: liquid")
        return None, None
    top = inside_height(geometry)
    if height > top * (1.0 + 1e-12):
        ctx.problem(at, f"outlet_height {height:g} m is above the inside height of "
                    f"'{vessel.name}' ({top:g} m): give a height from 0 to {top:g} m")
        return None, None
    share = share_below(geometry, min(height, top))
    ctx.record(v.at.child("share_below_outlet", None), "(from shape)", share, "",
               "share of the volume below the outlet: it draws vapour below the level, liquid "
               "above (draws is not used)")
    return height, share


def build_network(values, ctx: Context) -> Network | None:
    """The :class:`~cvsim.network.Network` from values read without problems."""
    fluid = _fluid(values, ctx)
    ctx.fluid = fluid
    vessels = tuple(vessels_.build_vessel(name, v, ctx)
                    for name, v in values["vessels"].items())
    reservoirs = tuple(vessels_.build_reservoir(name, v, ctx)
                       for name, v in (values["reservoirs"] or {}).items())
    #: compositions of the reservoirs that supply their own (mixture runs)
    ctx.supplies = {r.name: r.composition for r in reservoirs if r.composition is not None}
    links = []
    by_name = {vessel.name: vessel for vessel in vessels}
    for name, v in (values["links"] or {}).items():
        device = v.variant.build(v, ctx)
        height, share = _outlet(v, by_name, fluid, ctx)
        links.append(Link(name=name, source=v["from"], target=v["to"], device=device,
                          draws=v["draws"], outlet_height=height, outlet_share=share))
    check_liquid_service(fluid, vessels, reservoirs, links,
                         {name: v.at for name, v in (values["links"] or {}).items()}, ctx)
    linked = {n for link in links for n in (link.source, link.target)}
    for vessel in vessels:
        if vessel.name not in linked:
            ctx.record(At(f"vessels.{vessel.name}", values["vessels"][vessel.name].at.line),
                       "", None, "", "warning: no link; only heat terms change its contents")
    sequences = tuple(build_sequence(name, v) for name, v in (values["sequences"] or {}).items())
    controllers = [build_controller(name, v) for name, v in (values["controllers"] or {}).items()]
    by_name = {v.name: v for v in vessels}
    for name, v in (values["fills"] or {}).items():
        controllers.append(build_fill(name, v, by_name[v["receiver"]], fluid, values["run"]["end"],
                                      ctx.atmosphere, ctx, v.at))
    if ctx.problems:
        return None
    network = Network(title=values["title"], fluid=fluid, vessels=vessels,
                      reservoirs=reservoirs, links=tuple(links), run=_run(values["run"]),
                      atmosphere=ctx.atmosphere, sequences=sequences,
                      controllers=tuple(controllers))
    return network if not ctx.problems else None


def check_states(network: Network, values, ctx: Context) -> None:
    """Each vessel's initial state and each reservoir's states must lie inside
    the range of the fluid's equation of state: a problem at the key otherwise
    (the run would fail at t = 0)."""
    from ..errors import CvsimError
    from ..engines import fluid_for
    try:
        fluid = fluid_for(network.fluid)
    except CvsimError:
        return  # reported where the fluid is read
    for v in network.vessels:
        initial = values["vessels"][v.name]["initial"]
        found = _out_of_range(fluid, v.initial.pressure, v.initial.temperature,
                              v.initial.liquid_fraction is not None)
        if found:
            key, text = found
            at = getattr(initial, "where", {}).get(key) or values["vessels"][v.name].at
            ctx.problem(at, text)
    _check_stops(network, values, fluid, ctx)
    for r in network.reservoirs:
        entry = values["reservoirs"][r.name]
        (p_lo, p_hi), (T_lo, T_hi) = r.pressure.extremes(), r.temperature.extremes()
        for p, T in ((p_hi, T_lo), (p_lo, T_hi), (p_hi, T_hi), (p_lo, T_lo)):
            found = _out_of_range(fluid, p, T, False)
            if found:
                ctx.problem(entry.where[found[0]], found[1])
                break


def _check_stops(network: Network, values, fluid, ctx: Context) -> None:
    """A stop condition that already holds for the initial state (given as pressure
    and temperature) is a problem at its key unless it says ``if_met_at_start: stop``:
    the run would end at t = 0 (the solver checks the other initial states)."""
    from ..errors import StateError
    vessels = {v.name: v for v in network.vessels}
    entries = values["run"]["stop_when"] or []
    for entry, cond in zip(entries, network.run.stop):
        v = vessels.get(cond.node)
        if v is None or cond.at_start == "stop" or v.initial.liquid_fraction is not None:
            continue
        p, T = v.initial.pressure, v.initial.temperature
        if p is None or T is None:
            continue
        if cond.quantity == "pressure":
            value, shown = p, f"{(p - network.atmosphere) / 1e5:.6g} bar g"
        elif cond.quantity == "temperature":
            value, shown = T, f"{T - 273.15:.6g} degC"
        else:
            try:
                value = fluid.state_pt(p, T).rho * v.volume
            except StateError:
                continue
            shown = f"{value:.6g} kg"
        if (cond.direction == "below" and value <= cond.value) or (
                cond.direction == "above" and value >= cond.value):
            key = f"{cond.quantity}_{cond.direction}"
            at = getattr(entry, "where", {}).get(key) or entry.at
            ctx.problem(at, f"already met at the start: '{v.name}' starts at {shown}, so the "
                        "run would end at t = 0. Write the condition the other way round or "
                        "change the initial state; add 'if_met_at_start: stop' to end the "
                        "run there on purpose")


def _out_of_range(fluid, p: float, T: float, saturated: bool) -> tuple[str, str] | None:
    """(key, problem) when the fluid cannot give the state at (p, T) - as the
    run would find at t = 0 - in the words of the range it leaves."""
    from ..errors import StateError
    try:
        if saturated:
            fluid.saturated_liquid_at_p(p)
        else:
            fluid.state_pt(p, T)
        return None
    except StateError as exc:
        detail = exc.detail
    advice = "; give a value inside that range"
    t_min, t_max = getattr(fluid, "t_min", None), getattr(fluid, "t_max", None)
    p_max = getattr(fluid, "p_max", None)
    name = getattr(fluid, "name", "the fluid")
    if t_min is not None and t_max is not None and not saturated and not t_min <= T <= t_max:
        return "temperature", (f"{T - 273.15:.6g} degC ({T:.6g} K) is outside the "
                               f"temperature range of the {name} equation of state "
                               f"({t_min:.6g} K to {t_max:.6g} K){advice}")
    if p_max is not None and p > p_max:
        return "pressure", (f"{p / 1e5:.6g} bar a is above the highest pressure of the {name} "
                            f"equation of state ({p_max / 1e5:.6g} bar){advice}")
    return "pressure", f"{detail.rstrip('.')}{advice}"


def warn_devices(network: Network, values, ctx: Context) -> None:
    """Warnings (not errors) on devices that a slip of a unit often explains:
    a relief valve set, or a disc bursting, at or below its vessel's initial
    pressure (it opens at the start); a pressure-reducing regulator set at or
    above the initial pressure of the node that feeds it (it cannot reduce the
    pressure); and a device wider than its vessel.

    A regulator's set pressure is not a relief valve's: a pressure-reducing regulator
    is set below its supply (that is its job), and a back-pressure regulator holding
    a vessel that starts above its set pressure vents it down to the set pressure,
    which may well be what was meant, so neither is compared like a relief valve."""
    vessels = {v.name: v for v in network.vessels}
    reservoirs = {r.name: r for r in network.reservoirs}
    atm = network.atmosphere
    for link in network.links:
        d = link.device
        here = values["links"][link.name]
        source = vessels.get(link.source)
        if isinstance(d, Regulator):
            if d.holds == "downstream":
                _warn_regulator_above_supply(link, d, vessels, reservoirs, here, atm, ctx)
        else:
            for field_, what in (("set_pressure", "set pressure"), ("burst_pressure",
                                                                     "burst pressure")):
                p_set = getattr(d, field_, None)
                if p_set is None or source is None or p_set > source.initial.pressure:
                    continue
                at = here.where.get(field_, here.at)
                ctx.record(at, "", None, "", f"warning: the {what} "
                           f"({(p_set - atm) / 1e5:.4g} bar g) is at or below the initial "
                           f"pressure of vessel '{source.name}' "
                           f"({(source.initial.pressure - atm) / 1e5:.4g} bar g): it opens "
                           "at the start; check the units (barg or bara?)")
        area = getattr(d, "area", None)
        if not area:
            continue
        width = math.sqrt(4.0 * area / math.pi)
        for name in (link.source, link.target):
            v = vessels.get(name)
            if v is None:
                continue
            g = v.geometry
            if g.inner_diameter:
                room, basis = g.inner_diameter, "its inner diameter"
            else:
                room, basis = (6.0 * g.volume / math.pi) ** (1.0 / 3.0), \
                    "the diameter of a sphere of its volume"
            if width > room:
                ctx.record(here.at, "", None, "", f"warning: the opening ({width * 1e3:.4g} "
                           f"mm across) is wider than vessel '{name}' ({basis}, "
                           f"{room * 1e3:.4g} mm); check the units of both")


def _warn_regulator_above_supply(link: Link, d: Regulator, vessels, reservoirs, here,
                                 atm: float, ctx: Context) -> None:
    """A pressure-reducing regulator set at or above the pressure of its supply at the
    start cannot hold its outlet at the set pressure: it stays open and passes what the
    supply gives. Usually a slip of a unit or of the values."""
    if link.source in vessels:
        p_in, node = vessels[link.source].initial.pressure, f"vessel '{link.source}'"
    elif link.source in reservoirs:
        p_in, node = reservoirs[link.source].pressure(0.0), f"reservoir '{link.source}'"
    else:
        return
    if d.set_pressure < p_in:
        return
    ctx.record(here.where.get("set_pressure", here.at), "", None, "",
               f"warning: the set pressure ({(d.set_pressure - atm) / 1e5:.4g} bar g) is at "
               f"or above the initial pressure of {node} that feeds the regulator "
               f"({(p_in - atm) / 1e5:.4g} bar g): it cannot hold its outlet at the set "
               "pressure and stays open; check the units and the set pressure")


def _fluid(values, ctx: Context) -> FluidSpec:
    name, model = values["fluid"], values["properties"]
    if isinstance(name, MixtureGiven):
        return mixture_spec(name, values["reservoirs"] or {})
    ideal = values["ideal_gas"] or {}
    molar_mass, cp = ideal.get("molar_mass"), ideal.get("heat_capacity")
    if model == "ideal-gas":
        at = At("ideal_gas", values.where["ideal_gas"].line)
        if molar_mass is None:
            ctx.record(at.child("molar_mass", None), "(CoolProp)", properties.molar_mass(name),
                       "kg/mol", "default: CoolProp molar mass")
        if cp is None:
            ctx.record(at.child("heat_capacity", None), "(CoolProp)",
                       properties.ideal_gas_cp(name, 298.15), "J/(kg K)",
                       "default: CoolProp ideal-gas cp at 25 degC")
    return FluidSpec(name=name, model=model, molar_mass=molar_mass, cp=cp)


def _run(values) -> RunSettings:
    stops = []
    for stop in values["stop_when"] or []:
        for key in schema.STOP_KEYS:
            if stop[key] is not None:
                quantity, direction = key.rsplit("_", 1)
                stops.append(StopCondition(stop["vessel"], quantity, direction, stop[key],
                                           stop["if_met_at_start"]))
    solver = values["solver"]
    return RunSettings(end_time=values["end"], record_every=values["record_every"],
                       stop=tuple(stops), method=solver["method"],
                       rtol=solver["relative_tolerance"],
                       atol_scale=solver["absolute_tolerance"],
                       max_step=math.inf if solver["max_step"] is None else solver["max_step"])
