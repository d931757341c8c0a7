"""The published JSON Schemas (cordmap/data/schemas): current, valid, and in agreement with the readers.

jsonschema is a test dependency only; the core never imports it.
"""
import json
import math
import re
from pathlib import Path

import pytest
from fuzz_docs import documents, valid_documents

from cordmap import CordmapError, demo, rank, schemas
from cordmap.findings import parse

jsonschema = pytest.importorskip("jsonschema")

ROOT = Path(__file__).resolve().parent.parent
VIGNETTES = sorted((ROOT / "tests" / "vignettes").glob("*.json"))

# What a JSON Schema cannot say and the reader checks; a rejected document that validates must be explained by one
# of these (each is a check across values, or JSON Schema's own number model):
KNOWN_DIFFERENCES = {
    # a range must run rostral to caudal ("T10-L1"); the pattern knows the dermatomes but not their order
    "caudal first": re.compile(r"runs caudal to rostral"),
    # two overlapping entries of one side must agree ("T8-T12": absent and "T10": normal)
    "overlap": re.compile(r"overlapping entries must agree"),
}


def _integral_floats(obj) -> bool:
    """JSON Schema counts 3.0 as an integer; the reader takes only whole numbers written without a fraction."""
    if isinstance(obj, float):
        return math.isfinite(obj) and obj == int(obj)
    if isinstance(obj, dict):
        return any(_integral_floats(v) for v in obj.values())
    if isinstance(obj, list):
        return any(_integral_floats(v) for v in obj)
    return False


def validator(name):
    return jsonschema.Draft202012Validator(schemas.load(name))


@pytest.mark.parametrize("name", schemas.NAMES)
def test_shipped_schema_is_current_and_valid(name):
    assert schemas.path(name).read_text(encoding="utf-8") == schemas.text(name), \
        "stale schema: run python -m cordmap.schemas"
    s = schemas.load(name)
    jsonschema.Draft202012Validator.check_schema(s)
    assert s["$schema"] == "https://json-schema.org/draft/2020-12/schema"


def _readme_documents():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    findings = [d for d in (json.loads(b) for b in re.findall(r"```json\n(.*?)```", text, re.S))
                if d.get("format") in ("cordmap-findings/1", "cordmap-findings/2")]  # not the course example
    lines = [json.loads(line) for b in re.findall(r"```jsonl\n(.*?)```", text, re.S) for line in b.splitlines()
             if line.strip()]
    assert findings and lines
    return findings, lines


def test_every_example_and_test_document_validates():
    v = validator("findings")
    docs = list(valid_documents())
    docs += [json.loads(p.read_text(encoding="utf-8"))["findings"] for p in VIGNETTES]
    readme_docs, readme_lines = _readme_documents()
    docs += readme_docs
    assert len(docs) > 70
    for doc in docs:
        parse(doc)  # the reader accepts it ...
        errors = [e.message[:200] for e in v.iter_errors(doc)]
        assert errors == [], doc.get("label")  # ... and so does the schema
    line = validator("batch-line")
    for doc in readme_lines:
        assert list(line.iter_errors(doc)) == []
        parse({k: v for k, v in doc.items() if k != "case_id"})
    assert not line.is_valid({"format": "cordmap-findings/1", "case_id": "two\nlines"})
    assert not line.is_valid({"format": "cordmap-findings/1", "case_id": " "})
    assert not v.is_valid({"format": "cordmap-findings/1", "case_id": "a"})  # case_id belongs to cohort lines


def test_reader_and_schema_agree_on_fuzzed_documents():
    v = validator("findings")
    counts = {"accepted": 0, "rejected": 0, "not json": 0, "explained": 0, "validator limit": 0}
    unexplained = []
    for form, value in documents(3000, seed=29):
        if form == "dict":
            doc = value
        else:
            try:
                doc = json.loads(value)
            except (ValueError, RecursionError, UnicodeDecodeError):
                counts["not json"] += 1
                continue
        try:
            parse(doc)
            ok, why = True, ""
        except CordmapError as e:
            ok, why = False, str(e)
        try:
            valid = v.is_valid(doc)
        except (RecursionError, ValueError):  # nested thousands deep, or an integer of 5,000 digits (only a dict
            counts["validator limit"] += 1  # holds one; JSON text cannot): the validator's limits, not the schema's
            continue
        if ok:
            counts["accepted"] += 1
            assert valid, f"the reader accepts, the schema refuses: {json.dumps(doc)[:300]}"
        else:
            counts["rejected"] += 1
            if valid:
                if any(p.search(why) for p in KNOWN_DIFFERENCES.values()) or _integral_floats(doc):
                    counts["explained"] += 1
                else:
                    unexplained.append((why, json.dumps(doc, default=str)[:200]))
    print(counts)
    assert counts["accepted"] > 100 and counts["rejected"] > 1000
    assert counts["validator limit"] < 0.05 * counts["rejected"]
    assert unexplained == []


@pytest.mark.parametrize("doc, difference", [
    ({"format": "cordmap-findings/1", "sensory": {"pinprick": {"left": {"L1-T10": "absent"}}}}, "caudal first"),
    ({"format": "cordmap-findings/1", "sensory": {"pinprick": {"left": {"T8-T12": "absent", "T10": "normal"}}}},
     "overlap"),
])
def test_the_listed_differences_are_real(doc, difference):
    assert validator("findings").is_valid(doc)
    with pytest.raises(CordmapError) as e:
        parse(doc)
    assert KNOWN_DIFFERENCES[difference].search(str(e.value))


def test_reader_and_schema_agree_on_text_grades():
    v = validator("findings")
    for grade in ("normal", " Absent\t", "IMPAIRED\u3000", "absent\n", 0, 2):
        doc = {"format": "cordmap-findings/1", "sensory": {"pinprick": {"left": {" T10 ": grade}}}}
        parse(doc)
        assert v.is_valid(doc), grade
    for grade in ("normally", "ab sent", "", 3, True, None, "²"):
        doc = {"format": "cordmap-findings/1", "sensory": {"pinprick": {"left": {"T10": grade}}}}
        with pytest.raises(CordmapError):
            parse(doc)
        assert not v.is_valid(doc), grade
    kelvin = {"format": "cordmap-findings/1", "reflexes": {"left": {"knee": "bris\u212a"}}}  # .lower() gives k
    parse(kelvin)
    assert v.is_valid(kelvin)


def test_outputs_validate():
    r_v, c_v = validator("ranking"), validator("classification")
    for name in demo.names():
        r = rank(demo.case(name), top=5)
        assert list(r_v.iter_errors(r.to_dict())) == []
        assert list(c_v.iter_errors(r.classification.to_dict())) == []
    from cordmap.findings import Findings

    empty = rank(Findings(), top=3)
    assert list(r_v.iter_errors(empty.to_dict())) == []
    assert not c_v.is_valid({**r.classification.to_dict(), "caution": ""})  # the caution is required
    assert not r_v.is_valid({**r.to_dict(), "cautions": []})


def test_course_schema_and_reader_agree():
    """The shipped demo course validates; documents the course reader refuses for their shape fail the schema too
    (times out of order and acute-after-chronic are the reader's own checks, stated in the schema)."""
    from importlib import resources

    from cordmap.course import parse_course

    v = validator("course")
    demo = json.loads(resources.files("cordmap.data").joinpath("courses/demo-compression.json").read_text("utf-8"))
    assert list(v.iter_errors(demo)) == []
    first = demo["exams"][0]
    bad = [{**demo, "exams": []}, {**demo, "time_unit": "weeks"}, {**demo, "extra": 1},
           {**demo, "exams": [{"time": -1, "findings": first["findings"]}]},
           {**demo, "exams": [{"time": 0}]},
           {**demo, "exams": [{"time": 0, "findings": first["findings"], "file": "x.json"}]}]
    for doc in bad:
        with pytest.raises(CordmapError):
            parse_course(doc)
        assert not v.is_valid(doc)
