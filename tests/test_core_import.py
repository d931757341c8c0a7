"""The core imports and runs with no Jupyter, ipywidgets, matplotlib or jsonschema loaded (three floors, one way)."""
import json
import subprocess
import sys

CODE = """
import json, sys
import cordmap
from cordmap import Lesion, simulate
f = simulate(Lesion("hemisection", "left", "T6"))
bad = sorted(m for m in sys.modules if m.split(".")[0] in
             ("ipywidgets", "IPython", "jupyter_core", "voila", "ipykernel", "matplotlib", "widgets", "tornado",
              "jsonschema"))
print(json.dumps(bad))
"""


def test_core_loads_no_front_end():
    out = subprocess.run([sys.executable, "-c", CODE], capture_output=True, text=True, check=True)
    assert json.loads(out.stdout.strip().splitlines()[-1]) == []


def test_core_never_imports_front_end_modules():
    import pathlib

    root = pathlib.Path(__file__).resolve().parents[1] / "cordmap"
    for path in root.glob("*.py"):
        text = path.read_text()
        assert "import ipywidgets" not in text and "from ipywidgets" not in text, path
        if path.name not in ("plotting.py", "report.py", "serve.py"):
            assert "import matplotlib" not in text, path
