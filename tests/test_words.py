"""Plain words everywhere a person reads (issue 12): no internal parameter name ("depth 0.42", "horns 0",
"contra 1") and no pattern id with an underscore in any text output: the lesion descriptions, `cordmap demo` and
`cordmap rank` (text and the ranking JSON's text fields) and the case sheet."""
from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from cordmap import atlas as atlas_mod
from cordmap.casebook import load_cases
from cordmap.cli import main
from cordmap.lesions import PATTERNS, Lesion
from cordmap.rank import rank
from cordmap.words import describe

PARAMS = sorted({p.name for pat in PATTERNS.values() for p in pat.params})
IDS = sorted(p for p in PATTERNS if "_" in p)
# a parameter name with its value ("depth 0.42,", "horns 0)", "size=0.7"), or a pattern id with its underscore
INTERNAL = re.compile(r"\b(" + "|".join(PARAMS) + r")(=| |: )[0-9][0-9.]*\s*([,);]|$)|\b(" + "|".join(IDS) + r")\b")
VIGNETTES = Path(__file__).parent / "vignettes"
# cases of every kind of answer: roots, cauda equina, conus, compressions, degenerations, normal, two lesions
SAMPLE = ("a02", "a11", "a15", "a19", "a25", "b07", "b09", "b15", "b20", "b31", "c04", "c12", "a26")


def _bad(text: str) -> list[str]:
    return [m.group(0) for m in INTERNAL.finditer(text)]


def test_the_check_catches_the_old_words():
    for old in ("posterior compression C5 (depth 0.42, severity 0.5)", "posterior T1 (horns 0)",
                "left cauda equina S3-Co1 (contra 1, medial 0)", "central C7-S3 (size 0.7)", "lateral_compression"):
        assert _bad(old), old


def test_every_atlas_lesion_is_described_in_plain_words():
    seen = set()
    for phase in ("chronic", "acute"):
        at = atlas_mod.get(phase)
        for v in at.variants:
            for top in {PATTERNS[v.pattern].tops[0], PATTERNS[v.pattern].tops[1]}:
                bottom = PATTERNS[v.pattern].bottom_fixed or top
                text = describe(Lesion(v.pattern, v.side, top, bottom, dict(v.params)))
                assert not _bad(text), text
                seen.add(text)
    assert len(seen) > 100


def test_symmetric_lesions_have_no_side():
    for p in ("complete", "central", "anterior", "posterior", "anterior_compression", "conus"):
        pat = PATTERNS[p]
        text = Lesion(p, "both", pat.tops[0]).describe()
        assert "left" not in text and "right" not in text and "both" not in text, text


def _ranking_texts(d: dict) -> list[str]:
    out = [d.get("advice", ""), *d["cautions"]]
    for h in d["hypotheses"]:
        out += [h["description"], *h["explains"], *h["conflicts"], *(w["why"] for w in h["imaging"]),
                *(v["description"] for v in h["variants"])]
    for t in d["next_tests"]:
        out += [t["finding"], t["why"], *(a["means"] for a in t["answers"])]
    return out


def _cases():
    return [c for c in load_cases(VIGNETTES) if c.id.split("-")[0] in SAMPLE]


def test_ranking_json_and_table_text_fields(tmp_path):
    for case in _cases():
        r = rank(case.findings, top=5)
        for text in _ranking_texts(json.loads(r.to_json())):
            assert not _bad(text), (case.id, text)
        for h in r.hypotheses:
            assert not _bad(h.summary) and not _bad(h.same_exam_text()), (case.id, h.summary)


def test_cli_demo_and_rank_text(capsys, tmp_path):
    assert main(["demo", "--show", "10"]) == 0
    out = capsys.readouterr().out
    assert "Cautions" in out and not _bad(out), _bad(out)
    for case in _cases()[:6]:
        path = tmp_path / f"{case.id}.json"
        path.write_text(case.findings.to_json())
        assert main(["rank", str(path), "--show", "5"]) == 0
        out = capsys.readouterr().out
        assert not _bad(out), (case.id, _bad(out))


def test_case_sheet_text(monkeypatch):
    pytest.importorskip("matplotlib")
    from matplotlib.figure import Figure

    from widgets.report import report_png

    texts: list[str] = []
    real = Figure.text

    def spy(self, x, y, s, *args, **kw):
        texts.append(str(s))
        return real(self, x, y, s, *args, **kw)

    monkeypatch.setattr(Figure, "text", spy)
    for case in _cases()[:4]:
        report_png(case.findings, rank(case.findings, top=5))
    assert texts and not [t for t in texts if _bad(t)]
