"""The findings document format v1: reading, writing, errors."""
import dataclasses
import json

import pytest

from cordmap.errors import CordmapError
from cordmap.findings import Findings, parse

DOC = {"format": "cordmap-findings/1", "label": "invented", "phase": "acute",
       "sensory": {"pinprick": {"left": {"C2-T9": "normal", "T10-S4-5": 0}}},
       "motor": {"right": {"L2": 3, "L3": "NT"}},
       "reflexes": {"left": {"knee": 4, "plantar": "extensor", "hoffmann": "absent"}},
       "signs": {"horner": {"left": True}, "bladder": "retention", "voluntary_anal_contraction": False}}


def test_round_trip():
    f = parse(DOC)
    assert f.items[("sensory", "pinprick", "left", "S4-5")] == 0
    assert f.items[("sensory", "pinprick", "left", "T9")] == 2
    assert f.items[("motor", "right", "L3")] == "NT"
    assert f.items[("reflex", "left", "knee")] == "brisk"  # NINDS 4 = enhanced (Hallett, Neurology 1993)
    assert parse(f.to_json()) == f
    assert parse(json.dumps(DOC)) == f
    assert ("sensory", "pinprick", "right", "T10") not in f.items  # missing = not examined


def test_file_and_tidy(tmp_path):
    from cordmap.findings import from_tidy

    p = tmp_path / "f.json"
    p.write_text(json.dumps(DOC))
    f = parse(p)
    with pytest.raises(CordmapError, match="pass a pathlib.Path"):
        parse(str(p))  # a str is JSON text, whatever it looks like; a path is a Path
    back = from_tidy(f.tidy(), label=f.label, phase=f.phase)
    assert back.items == f.items


@pytest.mark.parametrize("patch, needle", [
    ({"format": "cordmap-findings/9"}, "format"),
    ({"sensory": {"pinprick": {"left": {"T13": "normal"}}}}, "sensory.pinprick.left['T13']: unknown dermatome"),
    ({"sensory": {"pinprick": {"left": {"T13": "normal"}}}}, "did you mean T12"),
    ({"sensory": {"pinprick": {"left": {"T10": "numb"}}}}, "sensory grade"),
    ({"sensory": {"pinprik": {}}}, "did you mean pinprick"),
    ({"sensory": {"pinprick": {"left": {"T8-T10": "normal", "T10": "absent"}}}}, "overlapping"),
    ({"sensory": {"pinprick": {"left": {"T10-T8": "normal"}}}}, "rostral end first"),
    ({"motor": {"left": {"L2": 6}}}, "MRC grade"),
    ({"motor": {"left": {"L1": 3}}}, "myotome"),
    ({"reflexes": {"left": {"plantar": "up"}}}, "flexor"),
    ({"signs": {"bladder": "full"}}, "retention"),
    ({"phase": "subacute"}, "phase"),
    ({"colour": 1}, "unknown key"),
])
def test_errors_name_the_path(patch, needle):
    doc = {"format": "cordmap-findings/1", **patch}
    with pytest.raises(CordmapError) as e:
        parse(doc)
    assert needle in str(e.value) and "\n" not in str(e.value)


def test_not_json():
    with pytest.raises(CordmapError, match="not valid JSON"):
        parse("{not json")


def test_findings_is_frozen():
    f = Findings({("motor", "left", "L2"): 3})
    with pytest.raises(dataclasses.FrozenInstanceError):
        f.label = "x"
    with pytest.raises(TypeError):
        f.items[("motor", "left", "L2")] = 4
