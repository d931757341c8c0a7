"""The core floor, proven by imports: `import cordmap` and every core module load with the front end's packages
blocked (a meta-path finder refuses ipywidgets, jupyter_server, voila and the rest), and plain `import cordmap`
loads no plotting library nor jsonschema (three floors, one way; DEVELOPERS.md states the rule)."""
import json
import pathlib
import pkgutil
import subprocess
import sys

import cordmap

# what the core may never load: the front end and the notebook server
BLOCKED = ("ipywidgets", "jupyter_server", "voila", "widgets", "IPython", "ipykernel", "jupyter_core", "tornado",
           "nbclient", "nbconvert", "traitlets")
# what `import cordmap` itself must not load (plotting and report import matplotlib inside their functions)
NOT_AT_IMPORT = ("matplotlib", "jsonschema")

BLOCKER = """
import importlib.abc, json, sys
BLOCKED = {blocked!r}

class Refuse(importlib.abc.MetaPathFinder):
    def find_spec(self, name, path=None, target=None):
        if name.split(".")[0] in BLOCKED:
            raise ImportError(f"blocked for the core: {{name}}")
        return None

sys.meta_path.insert(0, Refuse())
"""

CODE = BLOCKER + """
import importlib
import cordmap
after_import = sorted(m for m in sys.modules if m.split(".")[0] in {not_at_import!r})
from cordmap import Lesion, simulate
f = simulate(Lesion("hemisection", "left", "T6"))
for name in {modules!r}:
    importlib.import_module(name)
loaded = sorted(m for m in sys.modules if m.split(".")[0] in BLOCKED)
print(json.dumps({{"blocked_loaded": loaded, "after_import": after_import}}))
"""


def core_modules() -> list[str]:
    root = pathlib.Path(cordmap.__file__).resolve().parent
    return sorted(f"cordmap.{m.name}" for m in pkgutil.iter_modules([str(root)]) if m.name != "__main__")


def _run(code: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)


def test_core_imports_with_the_front_end_blocked():
    code = CODE.format(blocked=BLOCKED, not_at_import=NOT_AT_IMPORT, modules=core_modules())
    out = _run(code)
    assert out.returncode == 0, out.stderr[-2000:]
    got = json.loads(out.stdout.strip().splitlines()[-1])
    assert got == {"blocked_loaded": [], "after_import": []}


def test_the_blocker_blocks():
    """The finder is not a test that cannot fail: importing the front end under it fails."""
    out = _run(BLOCKER.format(blocked=BLOCKED) + "import widgets.serve\n")
    assert out.returncode != 0 and "blocked for the core: widgets" in out.stderr


def test_every_core_module_is_walked():
    names = core_modules()
    assert {"cordmap.cli", "cordmap.items", "cordmap.cautions", "cordmap.rank", "cordmap.report"} <= set(names)
    assert "cordmap.serve" not in names  # the launcher lives in the front end (widgets.serve)
