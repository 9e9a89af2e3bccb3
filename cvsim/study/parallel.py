"""Run many independent simulations at once: local worker processes, or a Dask cluster.

:class:`Workers` hands jobs to a function in other processes and gives the
results back as they complete, as ``(index, ok, value)``: ``ok`` is False
when the job could not give a value (its worker died, or the function raised),
and ``value`` is then the reason in words. Sweeps and target seeking turn that
into a failed row and go on; nothing here stops because one job failed.

Local processes (the default) need nothing beyond the standard library. The
worker processes are started once and reused for every job (and, in target
seeking, for every round), so each pays the CoolProp import (about 1 s) at
most once. The start method, measured on the 2-core Linux machine (see
``docs/decisions.md``):

* ``fork`` starts a worker in about 0.07 s, sharing the modules the parent
  has already imported; it is used on Linux when the parent runs a single
  thread (forking a process with other threads can copy a held lock);
* ``forkserver`` (with cvsim and CoolProp preloaded in the server) otherwise
  on Linux: 1.6 s for the first worker, then fast and thread-safe;
* ``spawn`` elsewhere (macOS, Windows), about 1.6 s per worker.

Local workers never outlive their parent: each asks Linux to kill it when its
parent ends (``prctl(PR_SET_PDEATHSIG)``) and, everywhere, watches its parent
from a thread and ends itself when the parent is gone. Workers ignore Ctrl-C
(the terminal sends it to every process of the command); the parent decides,
and when it stops early (Ctrl-C, SIGTERM, an error) its workers end at once,
running cases included, rather than after the cases they were running.

A Dask cluster is used when a scheduler address is given (``tcp://host:8786``):
``distributed.Client(address)``, ``client.map`` and ``as_completed``. Dask is an
optional extra (``pip install -e '.[cluster]'`` in the checkout) imported only then.
"""
from __future__ import annotations

import multiprocessing
import os
import sys
import threading
from collections.abc import Callable, Iterable, Iterator

from ..errors import ClusterError

#: modules every worker needs; imported once per worker (or once in the parent
#: before forking, or once in the fork server)
PRELOAD = ("cvsim.api", "cvsim.scenario", "cvsim.study.outcomes", "cvsim.study.sweep", "CoolProp.CoolProp")
#: jobs handed to local workers ahead of those running, per worker: enough to
#: keep every worker busy, few enough that a crash names a small set of suspects
QUEUE_PER_WORKER = 2
#: a job that was running when a worker process died this many times is failed
CRASHES_TO_FAIL = 2
#: seconds to wait for a Dask scheduler to answer, and for its first worker
CONNECT_TIMEOUT = 10.0
#: [s] how often a local worker looks whether its parent is still there
WATCH_INTERVAL = 0.5
#: prctl option that sends a signal to a process when its parent ends (Linux)
PR_SET_PDEATHSIG = 1


def default_workers() -> int:
    """CPUs this process may run on."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not Linux
        return max(1, os.cpu_count() or 1)


def default_start_method() -> str:
    """``fork`` on Linux in a single-threaded parent, ``forkserver`` on Linux
    otherwise, ``spawn`` elsewhere (see the module notes)."""
    if not sys.platform.startswith("linux"):
        return "spawn"
    return "fork" if threading.active_count() == 1 else "forkserver"


def warm_up() -> None:
    """Import what every job needs (run once in each worker)."""
    import importlib
    for name in PRELOAD:
        importlib.import_module(name)


def worker_start(stop=None, owner: int | None = None) -> None:
    """Run once in each local worker: Ctrl-C is the parent's to handle, SIGTERM
    ends the worker, and the worker ends when its parent or ``owner`` (the
    process that made the pool; with ``forkserver`` the parent is the fork
    server, which lives as long as its children) ends, or when ``stop`` (a
    multiprocessing Event) is set; then :func:`warm_up`."""
    import signal
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    parent = os.getppid()
    _die_with_parent()
    watched = _identity(owner) if owner is not None else None
    threading.Thread(target=_watch, args=(parent, watched, stop), name="cvsim-parent-watch",
                     daemon=True).start()
    warm_up()


def _die_with_parent() -> None:
    """Linux: have the kernel kill this process when its parent ends."""
    if not sys.platform.startswith("linux"):
        return
    try:
        import ctypes
        import signal
        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0)
    except (OSError, AttributeError):  # pragma: no cover - no libc: the watch thread remains
        pass


def _identity(pid: int) -> tuple[int, str | None]:
    """(pid, start time) of a process: the start time (Linux, from /proc) tells
    the process from a later one that reuses its number."""
    try:
        with open(f"/proc/{pid}/stat") as fh:
            return pid, fh.read().rsplit(") ", 1)[1].split()[19]
    except (OSError, IndexError):
        return pid, None


def _gone(identity: tuple[int, str | None]) -> bool:
    """True when the process ``identity`` (from :func:`_identity`) has ended."""
    pid, started = identity
    if started is not None:
        try:
            with open(f"/proc/{pid}/stat") as fh:
                fields = fh.read().rsplit(") ", 1)[1].split()
        except (OSError, IndexError):
            return True
        return fields[0] in ("Z", "X") or fields[19] != started  # ended, or another process
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    except OSError:
        return False
    return False


def _watch(parent: int, owner, stop) -> None:
    """End this process once its parent is gone (it is then adopted by another
    process), the owner of the pool has ended, or ``stop`` is set."""
    import time
    while True:
        if (os.getppid() != parent or (owner is not None and _gone(owner))
                or (stop is not None and stop.is_set())):
            os._exit(1)
        time.sleep(WATCH_INTERVAL)


def versions() -> dict:
    """cvsim and CoolProp versions of this process (asked of every Dask worker)."""
    from .. import __version__
    from ..fluid import coolprop_version
    return {"cvsim": __version__, "coolprop": coolprop_version()}


class Workers:
    """Parallel workers: local processes (``workers`` of them, default one per
    CPU) or, with ``cluster`` (a scheduler address), a Dask cluster.

    Use as a context manager; :meth:`map` may be called many times and reuses
    the same processes or connection.
    """

    def __init__(self, workers: int | None = None, cluster: str | None = None,
                 start_method: str | None = None):
        if workers is not None and cluster is not None:
            raise ClusterError("give either a number of local workers or a cluster address, "
                               "not both (--workers or --cluster)")
        if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int)
                                    or workers < 1):
            raise ClusterError(f"the number of workers must be a whole number of 1 or more, "
                               f"not {workers!r} (--workers)")
        self._impl = _Dask(cluster) if cluster else _Local(workers or default_workers(),
                                                           start_method)

    @property
    def slots(self) -> int:
        """How many jobs run at the same time."""
        return self._impl.slots()

    def describe(self) -> str:
        """Where the jobs run, in words (for outputs and the report)."""
        return self._impl.describe()

    def map(self, fn: Callable, jobs: Iterable) -> Iterator[tuple[int, bool, object]]:
        """Run ``fn(job)`` for every job; yield ``(index, ok, value)`` as each ends.

        ``fn`` must be a module-level function (it is pickled by reference) and
        the jobs and values plain picklable data.
        """
        jobs = list(jobs)
        if not jobs:
            return iter(())
        return self._impl.map(fn, jobs)

    def close(self) -> None:
        self._impl.close()

    def start(self) -> "Workers":
        """Start the local worker processes now (before the caller starts any
        thread, such as a progress bar's, so that forking stays safe)."""
        self._impl.start()
        return self

    def stop(self) -> None:
        """End the workers now, running jobs included (on Ctrl-C, SIGTERM or
        an error in the caller)."""
        self._impl.stop()

    def __enter__(self) -> "Workers":
        try:
            return self.start()
        except BaseException:  # Ctrl-C while the workers start: none may stay behind
            self.stop()
            raise

    def __exit__(self, exc_type, exc, tb) -> None:
        if exc_type is None:
            self.close()
        else:
            self.stop()


# ------------------------------------------------------------------ local

class _Local:
    def __init__(self, workers: int, start_method: str | None):
        self.workers = workers
        self.start_method = start_method
        self.method_used = None
        self._pool = None
        self._stop = None

    def slots(self) -> int:
        return self.workers

    def describe(self) -> str:
        method = self.method_used or self.start_method or default_start_method()
        return f"{self.workers} local worker process{'es' if self.workers != 1 else ''} " \
               f"(start method {method})"

    def start(self):
        pool = self._ensure()
        # a first job makes the pool start all its processes at once, now
        pool.submit(warm_up).result()

    def _ensure(self):
        if self._pool is None:
            from concurrent.futures import ProcessPoolExecutor
            method = self.start_method or default_start_method()
            ctx = multiprocessing.get_context(method)
            if method == "forkserver":
                ctx.set_forkserver_preload(list(PRELOAD))
            elif method == "fork":
                warm_up()  # imported once here, shared by every forked worker
            if self._stop is None:
                self._stop = ctx.Event()
            self._pool = ProcessPoolExecutor(self.workers, mp_context=ctx,
                                             initializer=worker_start,
                                             initargs=(self._stop, os.getpid()))
            self.method_used = method
        return self._pool

    def map(self, fn, jobs):
        from concurrent.futures import FIRST_COMPLETED, wait
        from concurrent.futures.process import BrokenProcessPool

        waiting = list(range(len(jobs)))[::-1]  # next job at the end
        crashes = [0] * len(jobs)
        window = QUEUE_PER_WORKER * self.workers
        running: dict = {}
        while waiting or running:
            pool = self._ensure()
            broken = False
            while waiting and len(running) < window:
                # a job that was running at a crash runs alone, so that a second crash
                # is its own and takes no innocent job with it
                if crashes[waiting[-1]] and running:
                    break
                i = waiting.pop()
                try:
                    running[pool.submit(fn, jobs[i])] = i
                except BrokenProcessPool:
                    waiting.append(i)
                    broken = True
                    break
                if crashes[i]:
                    break
            if not broken:
                done, _ = wait(running, return_when=FIRST_COMPLETED)
                for fut in done:
                    try:
                        value = fut.result()
                    except BrokenProcessPool:
                        broken = True
                        continue
                    except Exception as exc:  # the job's own failure: report, go on
                        yield running.pop(fut), False, f"{type(exc).__name__}: {exc}"
                        continue
                    yield running.pop(fut), True, value
            if broken:
                # every job still running is a suspect; run it again in a new pool,
                # and fail it if it was running at a crash twice
                self._discard()
                for fut, i in sorted(running.items(), key=lambda item: -item[1]):
                    crashes[i] += 1
                    if crashes[i] >= CRASHES_TO_FAIL:
                        yield i, False, ("the worker process running this case ended "
                                         "abruptly twice (a crash in a library, or out of "
                                         "memory); run it alone with 'cvsim run' to see why")
                    else:
                        waiting.append(i)
                running = {}

    def _discard(self):
        if self._pool is not None:
            self._pool.shutdown(wait=False, cancel_futures=True)
            self._pool = None

    def close(self):
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None

    def stop(self):
        if self._pool is None:
            return
        if self._stop is not None:
            self._stop.set()  # every worker's watch thread ends its process
        processes = list((getattr(self._pool, "_processes", None) or {}).values())
        for proc in processes:  # and at once, where the pool shows its processes
            if proc.is_alive():
                proc.terminate()
        self._pool.shutdown(wait=True, cancel_futures=True)
        self._pool = None


# ------------------------------------------------------------------- Dask

class _Dask:
    def __init__(self, address: str):
        if not isinstance(address, str) or "://" not in address:
            raise ClusterError(f"'{address}' is not a Dask scheduler address: write it as "
                               "tcp://host:8786 (--cluster)")
        try:
            import distributed
        except ImportError:
            raise ClusterError("running on a Dask cluster (--cluster) needs the optional "
                               "packages dask and distributed: pip install -e '.[cluster]' "
                               "in the cvsim checkout (its distribution is cvsim-vessels)"
                               ) from None
        self.address = address
        self._distributed = distributed
        try:
            self.client = distributed.Client(address, timeout=CONNECT_TIMEOUT,
                                             set_as_default=False)
        except (OSError, TimeoutError, ValueError) as exc:
            raise ClusterError(f"cannot reach the Dask scheduler at '{address}' ({exc}); "
                               "check the address and that the scheduler is running "
                               "('dask scheduler' on that machine)") from None
        try:
            self._check_workers()
        except BaseException:
            self.client.close()
            raise

    def _check_workers(self):
        try:
            self.client.wait_for_workers(1, timeout=CONNECT_TIMEOUT)
        except (TimeoutError, OSError):
            raise ClusterError(f"the Dask scheduler at '{self.address}' has no workers; "
                               "start some with 'dask worker "
                               f"{self.address}'") from None
        mine = versions()
        try:
            theirs = self.client.run(versions)
        except ImportError as exc:
            raise ClusterError(f"the Dask workers cannot import cvsim ({exc}): on every "
                               f"worker machine, install the same cvsim ({mine['cvsim']}, "
                               f"CoolProp {mine['coolprop']}) from a copy of the checkout "
                               "(pip install -e '.[cluster]')") from None
        other = {addr: v for addr, v in theirs.items() if v != mine}
        if other:
            addr, v = next(iter(other.items()))
            raise ClusterError(f"Dask worker {addr} runs cvsim {v['cvsim']} with CoolProp "
                               f"{v['coolprop']}, this machine cvsim {mine['cvsim']} with "
                               f"CoolProp {mine['coolprop']}; install the same versions "
                               "everywhere so that every case is computed alike")

    def start(self):
        pass

    def stop(self):
        self.close()  # map() cancels the cases not finished as it is left

    def slots(self) -> int:
        return max(1, sum(self.client.nthreads().values()))

    def describe(self) -> str:
        n = len(self.client.nthreads())
        return (f"Dask cluster at {self.address} ({n} worker{'s' if n != 1 else ''}, "
                f"{self.slots()} thread{'s' if self.slots() != 1 else ''})")

    def map(self, fn, jobs):
        futures = self.client.map(fn, jobs, pure=False)
        index = {f.key: i for i, f in enumerate(futures)}
        try:
            for fut in self._distributed.as_completed(futures, loop=self.client.loop):
                i = index[fut.key]
                if fut.status == "finished":
                    value = fut.result()
                    fut.release()
                    yield i, True, value
                elif fut.status == "error":
                    exc = fut.exception()
                    fut.release()
                    yield i, False, f"on the Dask cluster: {type(exc).__name__}: {exc}"
                else:  # cancelled or lost with its worker
                    fut.release()
                    yield i, False, (f"on the Dask cluster: the case was {fut.status} "
                                     "(its worker left the cluster?)")
        finally:
            for f in futures:
                if not f.done():
                    f.cancel()

    def close(self):
        self.client.close()


__all__ = ["Workers", "default_start_method", "default_workers", "versions", "warm_up",
           "worker_start"]
