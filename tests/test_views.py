"""Notebook views: short reprs, HTML tables with the cautions (escaped), docstrings on every public name."""
import inspect
import subprocess
import sys
from html import escape

import pytest

import cordmap
from cordmap import cautions, demo
from cordmap.findings import Findings


@pytest.fixture(scope="module")
def ranking():
    return cordmap.rank(demo.case(), top=10)


def test_readme_repr_prints_under_20_lines():
    code = "import cordmap; r = cordmap.rank(cordmap.demo_case()); print(repr(r))"
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    lines = r.stdout.rstrip("\n").splitlines()
    assert 3 <= len(lines) < 20
    assert "left half of the cord (Brown-Séquard) at T6" in lines[1]
    assert any(cautions.DECISION_SUPPORT in x for x in lines)


@pytest.mark.parametrize("name", demo.names())
def test_every_value_has_a_short_repr(name):
    f = demo.case(name)
    r = cordmap.rank(f, top=25)
    for value in (f, r, r.classification, *r.hypotheses[:3]):
        text = repr(value)
        assert text.count("\n") < 19, type(value).__name__
        assert len(text) < 3000


def test_repr_of_an_empty_ranking():
    r = cordmap.rank(Findings())
    assert "nothing entered" in repr(r) and r.hypotheses == ()
    assert cautions.DECISION_SUPPORT in r._repr_html_()


def test_html_views_carry_the_cautions(ranking):
    html = ranking._repr_html_()
    for c in ranking.cautions:
        assert escape(c) in html
    assert "<table" in html and "left half of the cord (Brown-Séquard) at T6" in html
    assert cautions.DECISION_SUPPORT in ranking.best._repr_html_()
    assert "Decision support, not a diagnosis" in ranking.classification._repr_html_()
    assert cautions.DECISION_SUPPORT in demo.case()._repr_html_()
    assert "upper-extremity motor score" in html  # words, not raw field names


def test_html_escapes_what_the_user_wrote():
    f = Findings({("motor", "left", "L3"): 2}, label="<script>alert(1)</script> & co")
    html = f._repr_html_()
    assert "<script>" not in html and "&lt;script&gt;" in html and "&amp; co" in html


def _public(obj):
    for name, member in inspect.getmembers(obj):
        if name.startswith("_") or name in ("count", "index"):
            continue
        if inspect.isfunction(member) or isinstance(member, property):
            yield name, member


def test_docstrings_on_every_public_name():
    missing = []
    for name in cordmap.__all__:
        obj = getattr(cordmap, name)
        if isinstance(obj, dict):
            continue
        doc = inspect.getdoc(obj) or ""
        if not doc or doc.startswith(f"{name}("):  # a dataclass' generated signature is no docstring
            missing.append(name)
        if inspect.isclass(obj):
            for attr, member in _public(obj):
                fn = member.fget if isinstance(member, property) else member
                if fn.__qualname__.split(".")[0] != obj.__name__:
                    continue  # inherited (ValueError's, say)
                if not (inspect.getdoc(member) or "").strip():
                    missing.append(f"{name}.{attr}")
    assert missing == []
