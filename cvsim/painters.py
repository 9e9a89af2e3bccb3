"""Plots drawn by helper processes that start with the command, beside the run.

A command that will draw plots starts :class:`Painters` first thing: two processes,
forked from the command line before it loads the property library, import matplotlib
and warm its font caches while the main process reads the scenario and solves it.
When the result is ready, each draws part of the figures (:func:`cvsim.plot.plot_run`
with ``only``) into the output folder, at the same time. On the 2-core machine this
takes importing matplotlib and most of the drawing off the command's critical path
(measured in ``benchmarks/bench_outputs.py``).

Where processes cannot be forked (a platform without ``fork``, one core), or a helper
fails, the plots are drawn in the main process as before: helpers only ever save
time. Helpers exit when their pipe closes, so they never outlive the command.
"""
from __future__ import annotations

import os
import pickle
from pathlib import Path

#: helper processes started (the machine these runs are made for has 2 cores)
HELPERS = 2
#: relative cost of drawing each figure (the overview has four panels or five)
COST = {"overview": 2.5}


def _serve(conn) -> None:
    """A helper's life: import and warm up matplotlib, then draw what it is sent
    until its pipe closes."""
    try:
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        from . import plot
        fig = Figure(figsize=(2, 1), dpi=50)  # load the fonts and the text layout caches
        FigureCanvasAgg(fig)
        fig.text(0.5, 0.5, "warm-up °C →", fontsize=9)
        fig.canvas.draw()
        while True:
            message = conn.recv()
            if message is None:
                return
            data, folder, names = message
            try:
                paths = plot.plot_run(pickle.loads(data), Path(folder), only=names)
                conn.send(("ok", [str(p) for p in paths]))
            except Exception as exc:  # reported to the main process, which decides
                conn.send(("error", f"{type(exc).__name__}: {exc}"))
    except (EOFError, OSError, KeyboardInterrupt, SystemExit):
        return
    except BaseException:  # the command was stopped (SIGTERM raises in the helper too)
        return
    finally:
        conn.close()


def _light(result):
    """What the plots read of a result, as :class:`~cvsim.histories.Histories` (with its
    limit checks): unpickling it loads neither the solver nor the property library."""
    from .histories import Histories
    light = Histories(result.network, result.status, result.message, result.columns,
                      result.data, result.fine_data, result.events)
    light.limits = list(getattr(result, "limits", []))
    light.rupture = dict(getattr(result, "rupture", {}) or {})  # the rupture page's times
    return light


class Painters:
    """Helper processes that draw a run's plots (see the module notes)."""

    def __init__(self, helpers: list):
        self.helpers = helpers  # (process, connection)

    @classmethod
    def start(cls, n: int = HELPERS) -> "Painters | None":
        """Start ``n`` helpers; ``None`` where forking is not available, there is
        one core only, or the environment sets ``CVSIM_PLOT_HELPERS=0`` (then the main
        process draws)."""
        import multiprocessing as mp
        if os.environ.get("CVSIM_PLOT_HELPERS", "").strip() == "0":
            return None
        if (os.cpu_count() or 1) < 2 or "fork" not in mp.get_all_start_methods():
            return None
        ctx = mp.get_context("fork")
        helpers = []
        try:
            for _ in range(n):
                mine, theirs = ctx.Pipe()
                p = ctx.Process(target=_serve, args=(theirs,), daemon=True,
                                name="cvsim-plots")
                p.start()
                theirs.close()
                helpers.append((p, mine))
        except OSError:
            out = cls(helpers)
            out.close()
            return None
        return cls(helpers)

    def draw(self, result, folder: Path, names: list[str]) -> list[Path]:
        """Draw the figures ``names`` of ``result`` into ``folder``, shared among the
        helpers; returns the paths in the order of ``names``. Raises RuntimeError
        naming what failed (the caller draws the rest itself)."""
        data = pickle.dumps(_light(result), protocol=pickle.HIGHEST_PROTOCOL)
        shares = [[] for _ in self.helpers]
        load = [0.0] * len(self.helpers)
        for name in sorted(names, key=lambda n: -COST.get(n, 1.0)):
            i = load.index(min(load))
            shares[i].append(name)
            load[i] += COST.get(name, 1.0)
        busy, errors = [], []
        for (p, conn), share in zip(self.helpers, shares):
            if share:
                try:
                    conn.send((data, str(folder), share))
                except OSError as exc:  # the helper has gone
                    errors.append(f"a plotting process ended ({type(exc).__name__})")
                    continue
                busy.append(conn)
        drawn = {}
        for conn in busy:
            try:
                status, payload = conn.recv()
            except (EOFError, OSError) as exc:
                errors.append(f"a plotting process ended ({type(exc).__name__})")
                continue
            if status == "ok":
                drawn.update({Path(p).stem: Path(p) for p in payload})
            else:
                errors.append(payload)
        if errors:
            raise RuntimeError("; ".join(errors))
        return [drawn[n] for n in names if n in drawn]

    def close(self) -> None:
        """Tell the helpers to stop and wait for them (a stuck one is ended)."""
        for p, conn in self.helpers:
            try:
                conn.send(None)
            except (OSError, ValueError):
                pass
            conn.close()
        for p, _ in self.helpers:
            p.join(timeout=5)
            if p.is_alive():
                p.terminate()
                p.join(timeout=5)
        self.helpers = []

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()
        return False


__all__ = ["Painters"]
