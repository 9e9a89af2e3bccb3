"""Output folders (issue items 1, 2, 3, 7 and 12): cvsim never deletes a file it did
not write, checks --out before it computes, lets one run at a time write a folder,
and cleans up after runs that were killed while writing."""
import os
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from cvsim import outfolder
from cvsim.cli import main
from cvsim.errors import OutputError



def run(scenario, out, *extra):
    return main(["run", str(scenario), "--out", str(out), "--quiet", "--no-plots", *extra])


def leftovers(parent: Path) -> list[str]:
    return sorted(p.name for p in parent.iterdir() if ".partial-" in p.name or ".old-" in p.name)


# ------------------------------------------------------------------ item 1

def test_a_users_file_in_an_earlier_result_is_never_deleted(small, tmp_path, capsys):
    out = tmp_path / "out"
    assert run(small, out) == 0
    (out / "notes.txt").write_text("my notes")
    before = (out / "history.csv").read_text()
    capsys.readouterr()
    code = run(small, out, "--set", "run.end=5 s")
    err = capsys.readouterr().err
    assert code == 2
    assert "notes.txt" in err and "did not write" in err and "Traceback" not in err
    assert (out / "notes.txt").read_text() == "my notes"
    assert (out / "history.csv").read_text() == before  # the earlier result untouched
    # once the user's file is gone, the folder is replaced as before
    (out / "notes.txt").unlink()
    assert run(small, out, "--set", "run.end=5 s") == 0
    assert (out / "history.csv").read_text() != before
    assert leftovers(tmp_path) == []


def test_the_marker_lists_what_cvsim_wrote_and_an_edited_result_file_is_kept(small, tmp_path):
    out = tmp_path / "out"
    assert run(small, out) == 0
    manifest = outfolder.read_manifest(out)
    assert set(manifest) == {p.name for p in out.iterdir()} - {outfolder.MARKER}
    assert outfolder.foreign_files(out) == []
    with open(out / "summary.txt", "a") as fh:  # the user annotates a result file
        fh.write("checked by J. Doe\n")
    assert outfolder.foreign_files(out) == ["summary.txt"]


# ------------------------------------------------------------------ item 2

def test_a_file_made_in_the_folder_while_the_run_computes_is_kept_aside(
        small, tmp_path, capsys, monkeypatch):
    import cvsim.api
    out = tmp_path / "out"
    assert run(small, out) == 0
    real_run = cvsim.api.run

    def run_while_the_user_saves_a_file(*args, **kwargs):
        (out / "late.txt").write_text("saved during the run")
        return real_run(*args, **kwargs)

    monkeypatch.setattr(cvsim.api, "run", run_while_the_user_saves_a_file)
    capsys.readouterr()
    assert run(small, out, "--set", "run.end=5 s") == 0
    err = capsys.readouterr().err
    kept = [p for p in tmp_path.iterdir() if p.name.startswith("out.kept-")]
    assert len(kept) == 1
    assert (kept[0] / "late.txt").read_text() == "saved during the run"
    assert [p.name for p in kept[0].iterdir()] == ["late.txt"]  # cvsim's own files removed
    assert "late.txt" in err and str(kept[0]) in err
    assert (out / "summary.json").exists() and not (out / "late.txt").exists()
    assert leftovers(tmp_path) == []


HOLDER = textwrap.dedent("""
    import sys, time
    from cvsim.outfolder import claim
    with claim(sys.argv[1]):
        print("locked", flush=True)
        time.sleep(60)
""")


def test_a_second_run_into_a_folder_being_written_is_refused(small, tmp_path, capsys):
    out = tmp_path / "out"
    holder = subprocess.Popen([sys.executable, "-c", HOLDER, str(out)], stdout=subprocess.PIPE,
                              text=True)
    try:
        assert holder.stdout.readline().strip() == "locked"
        code = run(small, out)
        err = capsys.readouterr().err
        assert code == 2
        assert "being written by another cvsim run" in err and str(holder.pid) in err
        assert not out.exists()
    finally:
        holder.kill()  # killed, not ended: the system drops its lock
        holder.wait()
    assert run(small, out) == 0
    assert not (tmp_path / ".out.lock").exists()


def test_a_claim_in_the_same_process_is_reused_not_deadlocked(tmp_path):
    out = tmp_path / "out"
    with outfolder.claim(out) as outer:
        with outfolder.atomic_folder(out) as tmp:
            (tmp / "a.txt").write_text("a")
        with outfolder.claim(out) as inner:
            assert inner is outer
    assert (out / "a.txt").read_text() == "a"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]  # lock file gone


# ------------------------------------------------------------------ item 3

@pytest.mark.parametrize("command", ["run", "sweep", "find", "relief"])
def test_a_foreign_out_is_refused_before_anything_is_computed(command, small, tmp_path,
                                                              monkeypatch, capsys):
    import cvsim.api
    import cvsim.sizing
    import cvsim.study.seek
    import cvsim.study.sweep

    def must_not_run(*args, **kwargs):
        raise AssertionError("computed before the output folder was checked")

    for module, name in ((cvsim.api, "run"), (cvsim.study.sweep, "sweep"),
                         (cvsim.study.seek, "seek"), (cvsim.sizing, "size_relief")):
        monkeypatch.setattr(module, name, must_not_run)
    out = tmp_path / "mine"
    out.mkdir()
    (out / "thesis.tex").write_text("years of work")
    argv = {"run": ["run", str(small)],
            "sweep": ["sweep", str(small), "--vary", "links.vent.diameter=2 mm, 3 mm"],
            "find": ["find", str(small), "--vary", "links.vent.diameter=2 mm:4 mm",
                     "--smallest", "--meet", "end_time <= 1 min"],
            "relief": ["relief", str(small), "--valve", "vent", "--load", "1 kg/s"]}[command]
    code = main(argv + ["--out", str(out)])
    err = capsys.readouterr().err
    assert code == 2, err
    assert "not an earlier cvsim output folder" in err and "Traceback" not in err
    assert (out / "thesis.tex").read_text() == "years of work"


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0,
                    reason="permissions do not bind the superuser")
def test_an_unwritable_place_is_refused_before_solving(small, tmp_path, capsys):
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o500)
    try:
        assert run(small, locked / "out") == 2
        assert "no permission" in capsys.readouterr().err
    finally:
        locked.chmod(0o700)


def _deny_writing(monkeypatch, *places):
    """``os.access`` as an ordinary user without write permission on ``places`` sees it
    (a superuser's os.access always says yes, and CI runs as the superuser)."""
    real = os.access
    denied = {os.path.realpath(p) for p in places}

    def access(path, mode, *args, **kwargs):
        if mode & os.W_OK and os.path.realpath(path) in denied:
            return False
        return real(path, mode, *args, **kwargs)
    monkeypatch.setattr(outfolder.os, "access", access)


def _no_solving(monkeypatch):
    import cvsim.api

    def solve(*args, **kwargs):
        raise AssertionError("solved before the output folder was checked")
    monkeypatch.setattr(cvsim.api, "run", solve)


def test_an_unwritable_place_is_refused_before_solving_for_any_user(small, tmp_path, capsys,
                                                                     monkeypatch):
    """Issue 10 item 3, as it runs in CI (as the superuser): the permission check comes
    before the solve, and the message says what to do."""
    locked = tmp_path / "locked"
    locked.mkdir()
    _deny_writing(monkeypatch, locked)
    _no_solving(monkeypatch)
    assert run(small, locked / "out") == 2
    err = capsys.readouterr().err
    assert "no permission" in err and "--out" in err and "Traceback" not in err
    assert list(locked.iterdir()) == []


def test_an_earlier_result_that_cannot_be_changed_is_refused_up_front(small, tmp_path, capsys,
                                                                      monkeypatch):
    """Issue 10 item 7: an earlier result folder without write permission is refused
    before solving, kept as it was, and no hidden .old- or .partial- folder is left."""
    out = tmp_path / "out"
    assert run(small, out) == 0
    before = sorted(p.name for p in out.iterdir())
    capsys.readouterr()
    _deny_writing(monkeypatch, out)
    _no_solving(monkeypatch)
    assert run(small, out) == 2
    err = capsys.readouterr().err
    assert "cannot be replaced" in err and "no permission" in err and "Traceback" not in err
    assert sorted(p.name for p in out.iterdir()) == before
    assert leftovers(tmp_path) == []


# ------------------------------------------------------------------ item 7

def test_leftovers_of_killed_runs_are_cleaned_and_nothing_else(small, tmp_path):
    out = tmp_path / "out"
    partial = tmp_path / ".out.partial-dead1"  # killed while writing
    partial.mkdir()
    (partial / outfolder.MARKER).write_text(outfolder.MARKER_HEAD + "\n")
    (partial / "history.csv").write_text("1,2\n" * 1000)
    empty_old = tmp_path / ".out.old-dead2"  # an earlier version's empty leftover
    empty_old.mkdir()
    legacy = tmp_path / ".out.old-dead3" / "x"  # an earlier version's old result
    legacy.mkdir(parents=True)
    (legacy / outfolder.MARKER).write_text("written by cvsim; this folder is replaced\n")
    (legacy / "history.csv").write_text("old")
    not_ours = tmp_path / ".out.partial-foreign"  # no marker: not cvsim's, not touched
    not_ours.mkdir()
    (not_ours / "data.bin").write_text("x")
    other = tmp_path / ".other.partial-dead4"  # another destination's: not touched
    other.mkdir()
    (other / outfolder.MARKER).write_text("")
    assert run(small, out) == 0
    assert leftovers(tmp_path) == sorted([".out.partial-foreign", ".other.partial-dead4"])


def test_a_failed_swap_leaves_no_hidden_folder(small, tmp_path, monkeypatch):
    out = tmp_path / "out"
    assert run(small, out) == 0
    real_rename = os.rename

    def rename(src, dst):
        if ".partial-" in str(src):
            raise PermissionError(13, "Permission denied")
        return real_rename(src, dst)

    monkeypatch.setattr(os, "rename", rename)
    with pytest.raises(OutputError, match="cannot write results"):
        with outfolder.atomic_folder(out) as tmp:
            (tmp / "history.csv").write_text("new")
    monkeypatch.undo()
    assert leftovers(tmp_path) == []


def test_output_folders_get_the_usual_permissions(small, tmp_path):
    out = tmp_path / "out"
    assert run(small, out) == 0
    umask = os.umask(0)
    os.umask(umask)
    assert (out.stat().st_mode & 0o777) == (0o777 & ~umask)


SLOW_RUN = """\
title: a run that takes minutes
fluid: Nitrogen
vessels:
  tank: {volume: 0.01 m3, initial: {pressure: 20 barg, temperature: 15 degC}}
reservoirs:
  air: {pressure: 1 atm, temperature: 15 degC}
links:
  vent: {from: tank, to: air, device: orifice, diameter: 0.5 mm, discharge_coefficient: 0.8}
run: {end: 1e7 s, record_every: 50 s}
"""


@pytest.mark.skipif(os.name != "posix", reason="signals")
def test_sigterm_ends_a_run_like_ctrl_c_and_writes_nothing(tmp_path):
    scenario = tmp_path / "slow.yaml"
    scenario.write_text(SLOW_RUN)
    out = tmp_path / "out"
    proc = subprocess.Popen([sys.executable, "-m", "cvsim.cli", "run", str(scenario), "--out",
                             str(out), "--quiet", "--no-plots"], stderr=subprocess.PIPE,
                            text=True)
    lock = tmp_path / ".out.lock"
    deadline = time.monotonic() + 60
    while not lock.exists() and time.monotonic() < deadline:  # solving has begun
        time.sleep(0.05)
    time.sleep(0.3)
    proc.terminate()
    err = proc.communicate(timeout=30)[1]
    assert proc.returncode == 143
    assert "terminated; no output written" in err and "Traceback" not in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["slow.yaml"]


# ------------------------------------------------------------------ item 12

def test_an_out_under_a_file_names_the_file(small, tmp_path, capsys):
    afile = tmp_path / "afile.txt"
    afile.write_text("")
    assert run(small, afile / "sub") == 2
    err = capsys.readouterr().err
    assert f"'{afile}' is a file, not a folder" in err and "File exists" not in err


def test_an_out_name_too_long_is_one_clear_message(small, tmp_path, capsys):
    assert run(small, tmp_path / ("x" * 10_000)) == 2
    err = capsys.readouterr().err
    assert "10000 characters long" in err and "Traceback" not in err


def test_a_report_added_after_the_table_joins_the_manifest(small, tmp_path):
    out = tmp_path / "out"
    assert main(["sweep", str(small), "--vary", "links.vent.diameter=2 mm, 3 mm", "--workers",
                 "1", "--out", str(out), "--report", "--no-plots", "--quiet"]) == 0
    assert (out / "report.html").exists()
    assert "report.html" in outfolder.read_manifest(out)
    assert outfolder.foreign_files(out) == []
    # so the next sweep into the folder replaces it without a word
    assert main(["sweep", str(small), "--vary", "links.vent.diameter=2 mm, 4 mm", "--workers",
                 "1", "--out", str(out), "--no-plots", "--quiet"]) == 0
    assert not (out / "report.html").exists()
    assert not [p for p in tmp_path.iterdir() if ".kept-" in p.name]
