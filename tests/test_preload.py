"""CoolProp's fluid library loaded in a background thread (cvsim.preload): the property
values are CoolProp's own, bit for bit, and an import or a fork waits for the load."""
import os
import subprocess
import sys

from cvsim import preload

STATES = """
import CoolProp.CoolProp as CP
print(repr([CP.PropsSI("D", "T", 300.0, "P", 1e5, "Nitrogen"),
            CP.PropsSI("P", "T", 250.0, "Q", 0.0, "CarbonDioxide"),
            CP.PropsSI("H", "P", 101325.0, "Q", 1.0, "Water"),
            CP.PropsSI("S", "T", 190.0, "Dmass", 200.0, "Methane"),
            len(CP.FluidsList())]))
"""


def _python(code: str) -> str:
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=300)
    assert done.returncode == 0, done.stderr
    return done.stdout


def test_library_file_is_coolprops_compiled_module():
    path = preload.library_file()
    assert path is not None and os.path.isfile(path)
    assert os.path.basename(os.path.dirname(path)) == "CoolProp"


def test_preloaded_properties_equal_coolprops_own():
    """The same states, from CoolProp imported as usual and after a background load:
    the same numbers to the last bit, and every fluid listed."""
    plain = _python(STATES)
    loaded = _python("from cvsim import preload\n"
                     "assert preload.start()\n" + STATES +
                     "outcome = preload.wait()\n"
                     "print(outcome)\n"
                     "assert outcome['fluids'] == len(CP.FluidsList()), outcome\n")
    assert loaded.splitlines()[0] == plain.strip()


def test_an_import_of_coolprop_waits_for_the_load():
    out = _python("from cvsim import preload\n"
                  "assert preload.start()\n"
                  "import CoolProp\n"
                  "print(preload._loader.is_alive(), 'fluids' in preload._outcome)\n")
    assert out.split() == ["False", "True"]


def test_a_fork_waits_for_the_load():
    out = _python("import os\n"
                  "from cvsim import preload\n"
                  "assert preload.start()\n"
                  "pid = os.fork()\n"
                  "if pid == 0:\n"
                  "    import CoolProp.CoolProp as CP\n"
                  "    os._exit(0 if len(CP.FluidsList()) > 100 else 3)\n"
                  "print(preload._loader.is_alive(), os.waitpid(pid, 0)[1])\n")
    assert out.split() == ["False", "0"]


def test_nothing_started_once_coolprop_is_imported():
    out = _python("import CoolProp\nfrom cvsim import preload\nprint(preload.start())\n")
    assert out.strip() == "False"


def test_without_the_c_interface_coolprop_loads_as_usual():
    out = _python("from cvsim import preload\n"
                  "preload.FUNCTIONS = ('no_such_function',)\n"
                  "assert preload.start()\n"
                  "import CoolProp.CoolProp as CP\n"
                  "print(preload.wait().get('skipped'), len(CP.FluidsList()) > 100)\n")
    assert out.strip() == "no C interface found True"


def test_turned_off_by_the_environment():
    out = subprocess.run([sys.executable, "-c", "from cvsim import preload; print(preload.start())"],
                         capture_output=True, text=True, timeout=120,
                         env={**os.environ, "CVSIM_PRELOAD": "0"}).stdout
    assert out.strip() == "False"


def test_a_python_without_ctypes_loads_coolprop_as_usual():
    out = _python("import sys\n"
                  "sys.modules['ctypes'] = None  # as a Python built without it\n"
                  "from cvsim import preload\n"
                  "print(preload.start())\n"
                  "import CoolProp.CoolProp as CP\n"
                  "print(len(CP.FluidsList()) > 100)\n")
    assert out.split() == ["False", "True"]
