"""cvsim: transient control-volume simulator for pressurised gas vessels and networks.

Public API (imported lazily, so that ``cvsim --help`` starts fast)::

    from cvsim import load_scenario, run, seek, sweep, uncertainty
    result = run("scenarios/nitrogen-blowdown.yaml")
    table = sweep("scenarios/nitrogen-blowdown.yaml", vary={"links.vent.diameter": "6 mm:20 mm:8"})
    size = seek("scenarios/separator-depressuring.yaml",
                vary={"links.orifice.diameter": "10 mm:30 mm"}, meet="limits")
    study = uncertainty("scenarios/nitrogen-uncertain.yaml", cases=200, seed=1)
"""
__version__ = "0.1.0"

_LAZY = {
    "run": ("cvsim.api", "run"),
    "run_network": ("cvsim.api", "run_network"),
    "load_scenario": ("cvsim.scenario", "load_scenario"),
    "load_scenario_text": ("cvsim.scenario", "load_scenario_text"),
    "Result": ("cvsim.result", "Result"),
    "CAUTION": ("cvsim.caution", "CAUTION"),
    "write_run_outputs": ("cvsim.outputs", "write_run_outputs"),
    "sweep": ("cvsim.study.sweep", "sweep"),
    "SweepResult": ("cvsim.study.table", "SweepResult"),
    "seek": ("cvsim.study.seek", "seek"),
    "SeekResult": ("cvsim.study.seek", "SeekResult"),
    "uncertainty": ("cvsim.study.uncertainty", "uncertainty"),
    "UncertaintyResult": ("cvsim.study.uncertainty", "UncertaintyResult"),
}

__all__ = ["__version__", *_LAZY]


def __getattr__(name):
    if name in _LAZY:
        import importlib
        mod, attr = _LAZY[name]
        return getattr(importlib.import_module(mod), attr)
    raise AttributeError(f"module 'cvsim' has no attribute '{name}'")
