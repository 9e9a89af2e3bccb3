"""The garbage collector's pause while a command loads its libraries (cvsim.collector)."""
import gc
import subprocess
import sys

from cvsim import collector


def test_settle_without_a_pause_leaves_the_collector_alone():
    frozen = gc.get_freeze_count()
    enabled = gc.isenabled()
    collector.settle()
    assert gc.get_freeze_count() == frozen and gc.isenabled() == enabled


def test_pause_then_settle_freezes_what_was_loaded_and_resumes():
    assert gc.isenabled()
    try:
        collector.pause()
        assert not gc.isenabled() and collector.paused()
        loaded = [[i] for i in range(1000)]  # stands for the imported libraries
        collector.settle()
        assert gc.isenabled() and not collector.paused()
        assert gc.get_freeze_count() >= len(loaded)
    finally:
        gc.unfreeze()
        gc.enable()


def test_a_pause_taken_elsewhere_is_not_ended_here():
    gc.disable()
    try:
        collector.pause()   # the program turned collections off itself: not ours to end
        collector.settle()
        assert not gc.isenabled()
    finally:
        gc.enable()


SCRIPT = """
import gc, sys
import cvsim.cli as cli, cvsim.collector as collector
def main(argv):  # the command's own work stands in here; it settles once loaded
    before = gc.isenabled()
    collector.settle()
    print([before, gc.isenabled()], flush=True)  # the command may leave by os._exit
    return 0
cli.main = main
cli.command(sys.argv[1:])
"""


def _collector_states(command: str) -> str:
    done = subprocess.run([sys.executable, "-c", SCRIPT, command], capture_output=True,
                          text=True, timeout=120)
    return done.stdout.strip()


def test_run_loads_paused_and_resumes():
    assert _collector_states("run") == "[False, True]"


def test_study_commands_keep_the_collector_on():
    # a sweep's worker pool and a cluster client live long: their collector is left on
    assert _collector_states("sweep") == "[True, True]"
