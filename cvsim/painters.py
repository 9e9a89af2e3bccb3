"""Plots drawn by helper processes that start with the command, beside the run.

A command that will draw plots starts :class:`Painters` first thing: one process,
forked from the command line before it loads the property library, imports matplotlib
and warms its font caches while the main process reads the scenario and solves it, then
forks the second helper from itself (already warm: the two cores are not both spent on
importing matplotlib while the main process imports the property library and SciPy).
When the result is ready, each draws part of the figures (:func:`cvsim.plot.plot_run`
with ``only``) into the output folder, at the same time. On the 2-core machine this
takes importing matplotlib and most of the drawing off the command's critical path
(measured in ``benchmarks/bench_outputs.py``).

Where processes cannot be forked (a platform without ``fork``, one core), or a helper
fails, the plots are drawn in the main process as before: helpers only ever save
time. Helpers exit when their pipe closes, so they never outlive the command. They run
at a lower priority (:data:`NICE`): while the command loads they leave it the cores,
and on a busy machine they yield to other work as well.
"""
from __future__ import annotations

import os
import pickle
from pathlib import Path

from . import collector

#: helper processes started (the machine these runs are made for has 2 cores)
HELPERS = 2
#: the helpers' lower priority: while the command loads, three threads want the two
#: cores (the command importing SciPy, CoolProp's fluids loading beside it, the first
#: helper importing matplotlib); the helper, needed only once the run is solved, yields.
#: Measured interleaved, 20 runs each: median 1.55 -> 1.48 s for the demo run.
NICE = 10
#: relative cost of drawing each figure (the overview has four panels or five)
COST = {"overview": 3.0, "pressure": 1.5}


def _warm_up() -> None:
    """Import matplotlib, the plotting module and the PNG writer, and draw and write a
    small figure the way the plots are drawn (fonts, text layout caches and the layout
    engine load here), so that the first real figure costs no more than the next."""
    import io

    # imported here, before the work arrives: the plots, and what unpickling a result
    # needs (about 25 ms otherwise, on the critical path)
    from . import histories, network, plot  # noqa: F401
    with plot.figure((3.0, 2.0), "warm-up", "warm-up °C →") as fig:
        ax = fig.subplots()
        ax.plot([0.0, 1.0], [0.0, 1.0], label="a")
        ax.set_title("warm-up", fontsize=10, loc="left")
        ax.set_ylabel("Pressure [bar a]")
        ax.secondary_yaxis("right").set_ylabel("bar g", fontsize=8)
        ax.legend(fontsize=plot.LEGEND_PT)
        plot.save(fig, io.BytesIO())


def _serve(conn) -> None:
    """Draw what is sent on ``conn`` until the pipe closes (or the command is stopped)."""
    from . import plot
    try:
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


def _helpers(theirs: list, mine: list) -> None:
    """The first helper's life: drop the main process's ends of the pipes (so that the
    helpers see the end of their pipe when the main process ends, however it ends), warm
    up, fork one more helper per further pipe, then serve the first pipe. Every helper
    leaves with ``os._exit``: none runs the main process's exit handlers."""
    for conn in mine:
        conn.close()
    children = []
    try:
        os.nice(NICE)  # the command's own loading first (see the module notes)
        _warm_up()
        collector.settle()  # matplotlib is loaded: out of the collector's sight
        for i, conn in enumerate(theirs[1:], start=1):
            pid = os.fork()
            if pid == 0:  # the new helper: keeps its own pipe only
                code = 0
                try:
                    for j, other in enumerate(theirs):
                        if j != i:
                            other.close()
                    _serve(conn)
                except BaseException:
                    code = 1
                finally:
                    os._exit(code)
            children.append(pid)
            conn.close()
        _serve(theirs[0])
    except BaseException:  # the pipe closed, or the command was stopped while warming up
        pass
    for pid in children:
        try:
            os.waitpid(pid, 0)
        except (ChildProcessError, InterruptedError, OSError):
            pass
    # leave at once: the clean-up of a process forked from the command (its imported
    # libraries, its exit handlers) is not this helper's to run, and the command waits
    os._exit(0)


def _light(result):
    """What the plots read of a result, as :class:`~cvsim.histories.Histories` (with its
    limit checks): unpickling it loads neither the solver nor the property library."""
    from .histories import Histories
    light = Histories(result.network, result.status, result.message, result.columns,
                      result.data, result.fine_data, result.events)
    light.limits = list(getattr(result, "limits", []))
    light.rupture = dict(getattr(result, "rupture", {}) or {})  # the rupture page's times
    return light


class _Pending:
    """Figures sent to the helpers and not collected yet."""

    def __init__(self, names: list[str]):
        self.names = names
        self.busy: list = []     # connections that owe an answer
        self.errors: list[str] = []


class Painters:
    """Helper processes that draw a run's plots (see the module notes)."""

    def __init__(self, process, connections: list):
        self.process = process          # the first helper (the others are its children)
        self.connections = connections  # one pipe per helper

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
        pipes = [ctx.Pipe() for _ in range(n)]
        mine = [m for m, _ in pipes]
        theirs = [t for _, t in pipes]
        try:
            p = ctx.Process(target=_helpers, args=(theirs, mine), daemon=True,
                            name="cvsim-plots")
            p.start()
        except OSError:
            for conn in mine + theirs:
                conn.close()
            return None
        for conn in theirs:
            conn.close()
        return cls(p, mine)

    def draw(self, result, folder: Path, names: list[str]) -> list[Path]:
        """Draw the figures ``names`` of ``result`` into ``folder``, shared among the
        helpers; returns the paths in the order of ``names``. Raises RuntimeError
        naming what failed (the caller draws the rest itself)."""
        return self.collect(self.submit(result, folder, names))

    def submit(self, result, folder: Path, names: list[str]) -> "_Pending":
        """Send the figures ``names`` of ``result`` to the helpers and return at once
        (the caller writes its other files meanwhile); :meth:`collect` waits for them."""
        data = pickle.dumps(_light(result), protocol=pickle.HIGHEST_PROTOCOL)
        shares = [[] for _ in self.connections]
        load = [0.0] * len(self.connections)
        for name in sorted(names, key=lambda n: -COST.get(n, 1.0)):
            i = load.index(min(load))
            shares[i].append(name)
            load[i] += COST.get(name, 1.0)
        pending = _Pending(list(names))
        for conn, share in zip(self.connections, shares):
            if share:
                try:
                    conn.send((data, str(folder), share))
                except OSError as exc:  # the helper has gone
                    pending.errors.append(f"a plotting process ended ({type(exc).__name__})")
                    continue
                pending.busy.append(conn)
        return pending

    @staticmethod
    def collect(pending: "_Pending") -> list[Path]:
        """The paths :meth:`submit` asked for, once drawn, in the order asked; raises
        RuntimeError naming what failed."""
        drawn = {}
        for conn in pending.busy:
            try:
                status, payload = conn.recv()
            except (EOFError, OSError) as exc:
                pending.errors.append(f"a plotting process ended ({type(exc).__name__})")
                continue
            if status == "ok":
                drawn.update({Path(p).stem: Path(p) for p in payload})
            else:
                pending.errors.append(payload)
        pending.busy = []
        if pending.errors:
            raise RuntimeError("; ".join(pending.errors))
        return [drawn[n] for n in pending.names if n in drawn]

    def close(self) -> None:
        """Tell the helpers to stop and wait for the first one (which waits for the
        others); a stuck one is ended."""
        for conn in self.connections:
            try:
                conn.send(None)
            except (OSError, ValueError):
                pass
            conn.close()
        self.connections = []
        if self.process is not None:
            self.process.join(timeout=5)
            if self.process.is_alive():
                self.process.terminate()
                self.process.join(timeout=5)
            self.process = None

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()
        return False


__all__ = ["Painters"]
