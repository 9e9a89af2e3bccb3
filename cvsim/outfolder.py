"""Output folders: written whole or not at all, never over a file cvsim did not
write, and by one run at a time.

A run, sweep or search *claims* its output folder before it computes anything
(:func:`claim`):

1. the path is checked at once - a parent that is a file, a folder cvsim did
   not write, a result folder holding files cvsim did not write, a folder it
   cannot write in - so a wrong ``--out`` costs nothing;
2. the folder is locked: a lock file ``.<name>.lock`` beside it, held with
   ``fcntl.flock`` (the system drops it when the process ends, even when it is
   killed); a second run that asks for the same folder is refused with the
   process that holds it. Where ``fcntl`` is missing the lock file is created
   exclusively and holds the process id (a lock of a process that is gone is
   taken over);
3. leftovers of earlier runs into the same folder that were killed while
   writing (hidden ``.<name>.partial-*`` and ``.<name>.old-*`` folders that carry
   cvsim's marker) are removed.

The files are then written into a hidden ``.<name>.partial-*`` folder beside
the destination (:meth:`OutputFolder.writing`). When all are written the
marker file ``.cvsim-output`` lists them (size and path: the *manifest*) and
the folder is swapped in: the earlier result is renamed to a hidden
``.<name>.old-*``, the new one renamed into place, then the earlier one's files
are removed one by one, and only those its manifest lists with the size it
lists. Whatever else is found there at that moment (a file made while the run
was computing, a result file edited since) is not deleted: that folder is
renamed to ``<name>.kept-<date>-<time>`` beside the results and a warning says
so (:class:`OutputWarning`).
"""
from __future__ import annotations

import contextlib
import os
import secrets
import shutil
import time
import warnings
from pathlib import Path

from .errors import OutputError

#: the file that marks a folder as cvsim's own output and lists what it wrote
MARKER = ".cvsim-output"
MARKER_HEAD = ("written by cvsim; the files listed below are replaced on the next run "
               "into this folder, anything else found here is kept")
MANIFEST_TAG = "cvsim-manifest 1"
#: files cvsim wrote before its marker listed them (markers without a manifest)
LEGACY_NAMES = frozenset((
    "history.csv", "steps.csv", "summary.txt", "summary.json", "inputs.txt", "report.html",
    "overview.png", "pressure.png", "temperature.png", "mass.png", "flow.png", "opening.png",
    "wall.png", "relief-sizing.txt", "relief-sizing.json", "sweep.csv", "sweep.json",
    "sweep.txt", "sweep.png", "cases.csv", "cases.json", "cases.txt", "cases.png",
    "seek.txt", "seek.json"))
LEGACY_FOLDERS = frozenset(("run",))
#: longest name of an output folder [bytes]: room for the hidden names beside it
#: (``.<name>.partial-xxxxxxxx``) within the usual limit of 255
NAME_BYTES = 200
#: files named in a message about foreign files (the rest are counted)
NAMES_SHOWN = 5


class OutputWarning(UserWarning):
    """Something about an output folder the user should know (files kept aside)."""


# ------------------------------------------------------------------ manifest

def read_manifest(folder: Path) -> dict | None:
    """``{relative path: size}`` of the files cvsim wrote into ``folder`` (from
    its marker); ``None`` for a marker of an earlier cvsim without a list."""
    try:
        lines = (folder / MARKER).read_text(encoding="utf-8", errors="replace").splitlines()
    except OSError:
        return None
    if MANIFEST_TAG not in lines:
        return None
    out = {}
    for line in lines[lines.index(MANIFEST_TAG) + 1:]:
        size, _, name = line.partition(" ")
        if name and size.isdigit():
            out[name] = int(size)
    return out


def _walk(folder: Path) -> list[str]:
    """Relative paths (``/``-separated) of every file and link under ``folder``."""
    out = []
    for root, dirs, files in os.walk(folder):
        rel = Path(root).relative_to(folder)
        for name in files + [d for d in dirs if os.path.islink(os.path.join(root, d))]:
            out.append((rel / name).as_posix())
    return sorted(out)


def write_manifest(folder: Path, names: list[str] | None = None) -> None:
    """Write the marker of ``folder`` listing ``names`` (relative paths; default
    every file in it) with their sizes."""
    names = _walk(folder) if names is None else sorted(set(names))
    entries = [f"{(folder / name).lstat().st_size} {name}" for name in names
               if name != MARKER]
    (folder / MARKER).write_text("\n".join([MARKER_HEAD, MANIFEST_TAG] + entries) + "\n",
                                 encoding="utf-8")


def foreign_files(folder: Path) -> list[str]:
    """Files in a cvsim output folder that cvsim did not write (or that changed
    size since), as relative paths."""
    manifest = read_manifest(folder)
    out = []
    for name in _walk(folder):
        if name == MARKER:
            continue
        if manifest is None:
            top = name.split("/", 1)
            if (len(top) == 1 and name in LEGACY_NAMES) or (
                    len(top) == 2 and top[0] in LEGACY_FOLDERS
                    and top[1].split("/")[-1] in LEGACY_NAMES):
                continue
            out.append(name)
        elif manifest.get(name) != _size(folder / name):
            out.append(name)
    return out


def _size(path: Path) -> int | None:
    try:
        st = path.lstat()
    except OSError:
        return None
    return st.st_size if not path.is_symlink() else None


def _names(names: list[str]) -> str:
    shown = ", ".join(names[:NAMES_SHOWN])
    more = len(names) - NAMES_SHOWN
    return shown + (f" and {more} more" if more > 0 else "")


# ---------------------------------------------------------------------- lock

class _Lock:
    """An exclusive lock on ``path`` (a lock file) for this process."""

    def __init__(self, path: Path, what: Path):
        self.path = path
        self.what = what
        self.fd: int | None = None

    def acquire(self) -> None:
        try:
            import fcntl
        except ImportError:  # pragma: no cover - Windows
            fcntl = None
        for _ in range(50):
            if fcntl is None:  # pragma: no cover - Windows
                if self._acquire_exclusive():
                    return
                continue
            fd = os.open(self.path, os.O_RDWR | os.O_CREAT, 0o644)
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except OSError:
                holder = _read(fd)
                os.close(fd)
                self._busy(holder)
            # the holder before us may have removed the file as it let go
            try:
                same = os.path.samestat(os.fstat(fd), os.stat(self.path))
            except FileNotFoundError:
                same = False
            if not same:
                os.close(fd)
                continue
            os.ftruncate(fd, 0)
            os.write(fd, _holder_text().encode())
            self.fd = fd
            return
        raise OutputError(f"cannot lock the output folder '{self.what}' "
                          f"(lock file '{self.path}' keeps changing)")

    def _acquire_exclusive(self) -> bool:  # pragma: no cover - Windows
        try:
            fd = os.open(self.path, os.O_RDWR | os.O_CREAT | os.O_EXCL, 0o644)
        except FileExistsError:
            try:
                holder = self.path.read_text()
            except OSError:
                return False
            pid = holder.split()[0] if holder.split() else ""
            if pid.isdigit() and not _alive(int(pid)):
                with contextlib.suppress(OSError):
                    self.path.unlink()
                return False
            self._busy(holder)
        os.write(fd, _holder_text().encode())
        self.fd = fd
        return True

    def _busy(self, holder: str):
        words = holder.split(None, 1)
        who = (f"process {words[0]}, started {words[1].strip()}" if len(words) == 2
               else "another process")
        raise OutputError(f"'{self.what}' is being written by another cvsim run ({who}); "
                          "wait until it ends or choose another folder with --out")

    def release(self) -> None:
        if self.fd is None:
            return
        with contextlib.suppress(OSError):
            self.path.unlink()
        os.close(self.fd)
        self.fd = None


def _holder_text() -> str:
    return f"{os.getpid()} {time.strftime('%Y-%m-%d %H:%M:%S')}\n"


def _read(fd: int) -> str:
    try:
        os.lseek(fd, 0, os.SEEK_SET)
        return os.read(fd, 200).decode("utf-8", "replace")
    except OSError:
        return ""


def _alive(pid: int) -> bool:  # pragma: no cover - Windows
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:
        return True
    return True


# -------------------------------------------------------------------- folder

class OutputFolder:
    """An output folder claimed by this process (see the module notes).

    ``notes`` collects what the user should be told (files kept aside); each is
    also issued as an :class:`OutputWarning`.
    """

    def __init__(self, path):
        self.path = Path(os.path.abspath(os.fspath(path)))
        self.notes: list[str] = []
        self._lock: _Lock | None = None
        self._depth = 0

    # ------------------------------------------------------------- checks
    def check(self) -> None:
        """Refuse at once a destination that cannot be written or replaced."""
        out = self.path
        if len(out.name.encode()) > NAME_BYTES:
            raise OutputError(f"the output folder name is {len(out.name)} characters long; "
                              f"use a name of at most {NAME_BYTES} characters (--out)")
        for p in [out] + list(out.parents):
            try:
                exists = p.exists() or p.is_symlink()
            except OSError as exc:
                raise OutputError(f"cannot use '{out}' as output folder: "
                                  f"{exc.strerror or exc}") from None
            if not exists:
                continue
            if p != out and not p.is_dir():
                raise OutputError(f"cannot use '{out}' as output folder: '{p}' is a file, "
                                  "not a folder; choose another --out")
            if p != out:
                if not os.access(p, os.W_OK | os.X_OK):
                    raise OutputError(f"cannot write into '{p}' (no permission); choose an "
                                      "output folder where you may write (--out)")
                break
        if out.is_symlink():
            raise OutputError(f"'{out}' is a symbolic link; give the folder it points to, "
                              "or another folder (--out)")
        if not out.exists():
            return
        if not out.is_dir():
            raise OutputError(f"'{out}' is a file; choose a folder with --out")
        marked = (out / MARKER).is_file()
        try:
            empty = not any(out.iterdir())
        except OSError as exc:
            raise OutputError(f"cannot read the folder '{out}': {exc.strerror}") from None
        if not empty and not marked:
            raise OutputError(f"'{out}' exists and is not an earlier cvsim output folder; "
                              "choose a new folder with --out (cvsim replaces only its own "
                              "output folders).")
        if marked:
            foreign = foreign_files(out)
            if foreign:
                raise OutputError(
                    f"the earlier results in '{out}' sit beside {len(foreign)} file"
                    f"{'s' if len(foreign) != 1 else ''} cvsim did not write "
                    f"({_names(foreign)}); move {'them' if len(foreign) != 1 else 'it'} "
                    "elsewhere or choose another folder with --out (cvsim replaces only "
                    "what it wrote).")
            for root, dirs, _ in os.walk(out):
                for d in [root] + [os.path.join(root, x) for x in dirs]:
                    if not os.access(d, os.W_OK | os.X_OK):
                        raise OutputError(f"the earlier results in '{out}' cannot be "
                                          f"replaced: no permission to change '{d}'; make "
                                          "it writable or choose another folder with --out")

    # -------------------------------------------------------------- claim
    def acquire(self) -> "OutputFolder":
        self.check()
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise OutputError(f"cannot create the output folder '{self.path}': "
                              f"{exc.strerror or exc}") from None
        lock = _Lock(self.path.parent / f".{self.path.name}.lock", self.path)
        try:
            lock.acquire()
        except OSError as exc:
            raise OutputError(f"cannot lock the output folder '{self.path}': "
                              f"{exc.strerror or exc}") from None
        self._lock = lock
        try:
            self.check()  # again, now that no other cvsim run can change it
            self.clean_stale()
        except BaseException:
            lock.release()
            self._lock = None
            raise
        return self

    def release(self) -> None:
        if self._lock is not None:
            self._lock.release()
            self._lock = None

    def clean_stale(self) -> list[Path]:
        """Remove cvsim's own leftovers of killed runs into this folder; returns
        what was removed (or kept aside, when it held files cvsim did not write)."""
        parent, name = self.path.parent, self.path.name
        done = []
        for prefix in (f".{name}.partial-", f".{name}.old-"):
            for p in parent.glob(_glob_escape(prefix) + "*"):
                if not p.is_dir() or p.is_symlink():
                    continue
                if prefix.endswith("partial-"):
                    if (p / MARKER).is_file() or not any(p.iterdir()):
                        shutil.rmtree(p, ignore_errors=True)
                        done.append(p)
                else:
                    inner = p / "x"  # earlier cvsim versions moved the old result into x/
                    if [c.name for c in p.iterdir()] == ["x"] and (inner / MARKER).is_file():
                        self._dispose(inner)
                        with contextlib.suppress(OSError):
                            os.rmdir(p)
                    else:
                        self._dispose(p)
                    done.append(p)
        return done

    # -------------------------------------------------------------- write
    @contextlib.contextmanager
    def writing(self):
        """Yield a fresh hidden folder beside the destination; when the block
        ends without an error, list its files in the marker and swap it in; on
        an error (or an interrupt) remove it."""
        parent = self.path.parent
        try:
            tmp = _fresh_dir(parent, f".{self.path.name}.partial-")
            (tmp / MARKER).write_text(MARKER_HEAD + "\n", encoding="utf-8")
        except OSError as exc:
            raise OutputError(f"cannot create the output folder '{self.path}': "
                              f"{exc.strerror or exc}") from None
        try:
            yield tmp
            write_manifest(tmp)
            self._swap(tmp)
        except OSError as exc:
            shutil.rmtree(tmp, ignore_errors=True)
            raise OutputError(f"cannot write results into '{self.path}': "
                              f"{exc.strerror or exc}") from None
        except BaseException:
            shutil.rmtree(tmp, ignore_errors=True)
            raise

    def _swap(self, tmp: Path) -> None:
        out = self.path
        old = None
        if out.exists() or out.is_symlink():
            old = _fresh_name(out.parent, f".{out.name}.old-")
            os.rename(out, old)
        try:
            os.rename(tmp, out)
        except OSError:
            if old is not None:  # put the earlier result back where it was
                with contextlib.suppress(OSError):
                    os.rename(old, out)
            raise
        if old is not None:
            self._dispose(old)

    def _dispose(self, old: Path) -> None:
        """Remove an earlier result's own files (those its manifest lists, at the
        size it lists); keep anything else aside, visibly, and say so."""
        if old.is_dir() and not old.is_symlink():
            if (old / MARKER).is_file():
                manifest = read_manifest(old)
                foreign = set(foreign_files(old))
                for name in _walk(old):
                    if name not in foreign and name != MARKER and (
                            manifest is None or name in manifest):
                        with contextlib.suppress(OSError):
                            os.unlink(old / name)
                with contextlib.suppress(OSError):  # what is left is not cvsim's
                    os.unlink(old / MARKER)
            for root, dirs, _ in os.walk(old, topdown=False):
                for d in dirs:
                    with contextlib.suppress(OSError):
                        os.rmdir(os.path.join(root, d))
            with contextlib.suppress(OSError):
                os.rmdir(old)
        if not (old.exists() or old.is_symlink()):
            return
        names = _walk(old) if old.is_dir() and not old.is_symlink() else [old.name]
        kept = _fresh_name(self.path.parent, f"{self.path.name}.kept-"
                           + time.strftime("%Y%m%d-%H%M%S"), sep="-")
        try:
            os.rename(old, kept)
        except OSError:
            kept = old
        note = (f"{len(names)} file{'s' if len(names) != 1 else ''} that cvsim did not write "
                f"{'were' if len(names) != 1 else 'was'} found in '{self.path}' as it was "
                f"replaced ({_names(names)}); nothing of it was deleted: see '{kept}'")
        self.notes.append(note)
        warnings.warn(note, OutputWarning, stacklevel=2)

    @contextlib.contextmanager
    def adding(self, name: str):
        """Yield a temporary path in the (written) folder; when the block ends
        without an error it becomes ``name`` there and joins the manifest."""
        target = self.path / name
        tmp = self.path / f".{name}.partial-{secrets.token_hex(4)}"
        try:
            yield tmp
            os.replace(tmp, target)
            write_manifest(self.path, list(read_manifest(self.path) or {}) + [name])
        except BaseException:
            with contextlib.suppress(OSError):
                tmp.unlink()
            raise


def _glob_escape(text: str) -> str:
    import glob
    return glob.escape(text)


def _fresh_name(parent: Path, prefix: str, sep: str = "") -> Path:
    path = parent / prefix
    if sep and not (path.exists() or path.is_symlink()):
        return path
    for _ in range(1000):
        path = parent / f"{prefix}{sep}{secrets.token_hex(3) if not sep else _ + 2}"
        if not (path.exists() or path.is_symlink()):
            return path
    raise OutputError(f"cannot find a free name beside '{parent / prefix}'")


def _fresh_dir(parent: Path, prefix: str) -> Path:
    """A new folder (permissions as the umask allows, unlike ``mkdtemp``)."""
    for _ in range(100):
        path = parent / f"{prefix}{secrets.token_hex(4)}"
        try:
            os.mkdir(path)
        except FileExistsError:
            continue
        return path
    raise OutputError(f"cannot create a folder beside '{parent / prefix}'")


#: folders this process has claimed (a claim inside a claim of the same folder
#: reuses it: the command line claims before solving, the writers again)
_HELD: dict[Path, OutputFolder] = {}


@contextlib.contextmanager
def claim(path):
    """Check and lock the output folder ``path`` for this process (see the
    module notes); yields the :class:`OutputFolder`. Raises
    :class:`~cvsim.errors.OutputError` with what to do when it cannot be used."""
    folder = OutputFolder(path)
    held = _HELD.get(folder.path)
    if held is not None:
        held._depth += 1
        try:
            yield held
        finally:
            held._depth -= 1
        return
    folder.acquire()
    _HELD[folder.path] = folder
    try:
        yield folder
    finally:
        del _HELD[folder.path]
        folder.release()


@contextlib.contextmanager
def atomic_folder(out_dir):
    """Write an output folder all at once or not at all: claim it and yield a
    hidden folder beside it that replaces it when the block ends without an
    error (see the module notes)."""
    with claim(out_dir) as folder, folder.writing() as tmp:
        yield tmp


__all__ = ["MARKER", "OutputFolder", "OutputWarning", "atomic_folder", "claim",
           "foreign_files", "read_manifest", "write_manifest"]
