"""JSON Schemas (draft 2020-12) of cordmap's file formats, built from the same tables the readers check against.

The schemas ship as package data in ``cordmap/data/schemas/`` so editors and other programs can check files without
cordmap; ``python -m cordmap.schemas`` rewrites them from `build()`, and ``tests/test_schemas.py`` checks that the
shipped files equal what `build()` makes and that schema and reader agree (the differences a schema cannot express
are listed there). This module needs no JSON Schema library: it only writes dicts.

* ``findings.schema.json``: ``cordmap-findings/1`` and ``/2`` as `cordmap.findings.parse` reads them (text grades
  are matched as the reader matches them: surrounding whitespace ignored, any case);
* ``batch-line.schema.json``: one line of a JSONL cohort (a findings document with an optional ``case_id``);
* ``ranking.schema.json``: ``cordmap-ranking/1`` as `Ranking.to_dict` writes it;
* ``classification.schema.json``: ``cordmap-classification/1`` as `Classification.to_dict` writes it.
"""
from __future__ import annotations

import json
import sys
from functools import cache
from pathlib import Path

DRAFT = "https://json-schema.org/draft/2020-12/schema"
BASE = "https://cordmap.invalid/schemas/"  # identifiers only: nothing is fetched from there
NAMES = ("findings", "batch-line", "ranking", "classification", "course")
FOLDER = Path(__file__).resolve().parent / "data" / "schemas"


@cache
def _whitespace() -> str:
    """A regex class of the characters Python's str.strip() removes (the reader strips text values)."""
    chars = [chr(c) for c in range(0x110000) if chr(c).isspace()]
    return "[" + "".join(f"\\u{ord(c):04x}" for c in chars) + "]"


@cache
def _case_map(upper: bool) -> dict[str, str]:
    """{ASCII letter: every character whose .upper() (or .lower()) is that letter}, e.g. the Kelvin sign for k."""
    out: dict[str, list[str]] = {}
    for code in range(0x110000):
        c = chr(code)
        t = c.upper() if upper else c.lower()
        if len(t) == 1 and t.isascii() and t.isalpha():
            out.setdefault(t, []).append(c)
    return {k: "".join(sorted(v)) for k, v in out.items()}


def _letter(ch: str, upper: bool) -> str:
    """A regex class of every character the reader's .lower() (or .upper()) turns into `ch`."""
    if not ch.isalpha():
        return ch.replace("-", "\\-")
    same = _case_map(upper)[ch]
    return "[" + "".join(c if c.isascii() else f"\\u{ord(c):04x}" for c in same) + "]"


def _words(words, upper: bool = False) -> dict:
    """Text the reader accepts as one of `words` after .strip() and .lower() (or .upper())."""
    alts = "|".join("".join(_letter(c, upper) for c in w) for w in words)
    ws = _whitespace()
    return {"type": "string", "pattern": f"^{ws}*({alts}){ws}*$"}


def _integer(lo: int, hi: int) -> dict:
    return {"type": "integer", "minimum": lo, "maximum": hi}


def _object(keys, value: dict) -> dict:
    """An object whose keys are among `keys`, each holding `value`."""
    return {"type": "object", "propertyNames": {"enum": list(keys)}, "additionalProperties": value}


def _findings_properties() -> dict:
    from .anatomy import MODALITIES, REFLEXES, SIDES, TENDON_REFLEXES, anatomy
    from .findings import FORMAT, PHASES, PLANTAR, PRESENCE, SENSORY_GRADES, SIGNS, TENDON_GRADES

    a = anatomy()
    derm = "|".join(d.replace("-", "\\-") for d in a.dermatomes)
    ws = _whitespace()
    grade = {"oneOf": [_integer(0, 2), _words(SENSORY_GRADES)]}
    sensory_side = {"type": "object",
                    "propertyNames": {"pattern": f"^{ws}*({derm})(-({derm}))?{ws}*$"},
                    "additionalProperties": grade,
                    "description": "dermatome or range (rostral end first, e.g. T10-L1) -> grade"}
    motor_grade = {"oneOf": [_integer(0, 5), {"type": "string", "pattern": f"^{ws}*([0-5]|" + "".join(
        _letter(c, True) for c in "NT") + f"){ws}*$"}], "description": "MRC grade 0-5, or NT (not testable)"}
    reflex = {}
    for r in REFLEXES:
        if r in TENDON_REFLEXES:
            reflex[r] = {"oneOf": [_integer(0, 4), _words(TENDON_GRADES)],
                         "description": "absent/reduced/normal/brisk, or the NINDS grade 0-4"}
        else:
            reflex[r] = _words(PLANTAR if r == "plantar" else PRESENCE)
    reflex_side = {"type": "object", "properties": reflex, "additionalProperties": False}
    signs = {"horner": _object(SIDES, {"type": "boolean"})}
    for name, allowed in SIGNS.items():
        signs[name] = {"type": "boolean"} if allowed == (True, False) else _words(allowed)
    from .findings_v2 import FORMAT2, VERTEBRAE, muscle_names

    derm_spec = {"type": "string", "pattern": f"^{ws}*({derm})(-({derm}))?{ws}*$",
                 "description": "dermatome or range (rostral end first)"}
    vertebra = {"type": "string", "pattern": f"^{ws}*({'|'.join(VERTEBRAE)}){ws}*$"}
    return {
        "format": {"enum": [FORMAT, FORMAT2],
                   "description": f"{FORMAT2} adds muscles, tenderness and band_pain"},
        "label": {"type": "string", "description": "free text, never a patient identifier"},
        "phase": {"enum": list(PHASES), "description": "acute: spinal shock; chronic by default"},
        "caution": {"type": "string", "description": "the clinical caution cordmap writes; ignored on reading"},
        "sensory": _object(MODALITIES, _object(SIDES, sensory_side)),
        "motor": _object(SIDES, _object(a.key_myotomes, motor_grade)),
        "reflexes": _object(SIDES, reflex_side),
        "signs": {"type": "object", "properties": signs, "additionalProperties": False},
        "muscles": _object(SIDES, _object(muscle_names(), motor_grade)) | {
            "description": f"{FORMAT2}: non-key limb muscles per side, MRC 0-5 or NT"},
        "tenderness": {"type": "array", "items": vertebra,
                       "description": f"{FORMAT2}: vertebrae tender to percussion"},
        "band_pain": _object(SIDES, {"type": "array", "items": derm_spec}) | {
            "description": f"{FORMAT2}: dermatomes of band-like or radicular pain per side"},
    }


def _version_rule() -> dict:
    """A cordmap-findings/1 document may not use the keys of version 2."""
    from .findings import FORMAT
    from .findings_v2 import KEYS

    return {"if": {"properties": {"format": {"const": FORMAT}}},
            "then": {"not": {"anyOf": [{"required": [k]} for k in KEYS]}}}


def _findings() -> dict:
    return {"$schema": DRAFT, "$id": BASE + "findings.schema.json",
            "title": "cordmap findings (cordmap-findings/1 and /2)",
            "description": "One bedside exam. A key that is missing was not examined (never read as normal).",
            "type": "object", "required": ["format"], "properties": _findings_properties(),
            "additionalProperties": False, **_version_rule()}


def _batch_line() -> dict:
    from .cohort import MAX_CASE_ID

    ws = _whitespace()
    props = _findings_properties()
    props["case_id"] = {"oneOf": [
        {"type": "string", "minLength": 1, "maxLength": MAX_CASE_ID, "pattern": f"[^{ws[1:-1]}]",
         "not": {"pattern": "[\\r\\n]"}},
        {"type": "integer"}], "description": "the case's id (the line number when absent); unique in the file"}
    return {"$schema": DRAFT, "$id": BASE + "batch-line.schema.json",
            "title": "one line of a cordmap JSONL cohort",
            "description": "A findings document (cordmap-findings/1 or /2) with an optional case_id, on one line.",
            "type": "object", "required": ["format"], "properties": props, "additionalProperties": False,
            **_version_rule()}


def _classification_def() -> dict:
    from .classify import AIS_GRADES, FORMAT, NA, ND, levels

    level = {"enum": [*levels(), ND, NA]}
    sided = {"type": "object", "required": ["left", "right"], "properties": {"left": level, "right": level},
             "additionalProperties": False}
    count = {"oneOf": [{"type": "integer", "minimum": 0}, {"const": ND}]}
    score = {"type": "object", "required": ["left", "right", "total"],
             "properties": {"left": count, "right": count, "total": count}, "additionalProperties": False}
    return {
        "type": "object",
        "required": ["format", "sensory_level", "motor_level", "neurological_level", "complete", "ais", "zpp",
                     "scores", "not_determinable", "notes", "caution"],
        "properties": {
            "format": {"const": FORMAT},
            "sensory_level": sided, "motor_level": sided,
            "neurological_level": level,
            "complete": {"oneOf": [{"type": "boolean"}, {"const": ND}]},
            "ais": {"enum": [*AIS_GRADES, ND]},
            "zpp": {"type": "object", "required": ["sensory", "motor"],
                    "properties": {"sensory": sided, "motor": sided}, "additionalProperties": False},
            "scores": {"type": "object", "required": ["uems", "lems", "light_touch", "pinprick"],
                       "properties": {k: score for k in ("uems", "lems", "light_touch", "pinprick")},
                       "additionalProperties": False},
            "not_determinable": {"type": "object", "additionalProperties": {"type": "string"},
                                 "description": "field -> why it is ND"},
            "notes": {"type": "array", "items": {"type": "string"}},
            "caution": {"type": "string", "minLength": 1},
        },
        "additionalProperties": False,
    }


def _classification() -> dict:
    return {"$schema": DRAFT, "$id": BASE + "classification.schema.json",
            "title": "cordmap ISNCSCI classification (cordmap-classification/1)", **_classification_def()}


def _ranking() -> dict:
    from .anatomy import SIDES, anatomy
    from .lesions import CUSTOM, PATTERNS
    from .rank import FORMAT

    segs = list(anatomy().segments)
    lesion_props = {"pattern": {"enum": [*PATTERNS, CUSTOM]}, "side": {"enum": [*SIDES, "both"]},
                    "top": {"enum": segs}, "bottom": {"enum": segs},
                    "params": {"type": "object", "additionalProperties": {"type": "number"}}}
    lesion = {"type": "object", "required": list(lesion_props), "properties": lesion_props,
              "additionalProperties": False}
    texts = {"type": "array", "items": {"type": "string"}}
    probability = {"type": "number", "minimum": 0, "maximum": 1}
    hyp_props = {"rank": {"type": "integer", "minimum": 1}, **lesion_props, "probability": probability,
                 "log_likelihood": {"type": "number"}, "vertebral_levels": texts, "explains": texts,
                 "conflicts": texts, "same_exam": {"type": "array", "items": {"$ref": "#/$defs/lesion"}},
                 "same_exam_count": {"type": "integer", "minimum": 0},
                 "variants": {"type": "array", "items": {"$ref": "#/$defs/variant"}}}
    required = list(hyp_props)
    variant = {"type": "object", "required": list(lesion_props), "additionalProperties": False,
               "properties": {**lesion_props, "description": {"type": "string"}}}
    window = {"type": "object", "required": ["levels", "why"], "additionalProperties": False,
              "properties": {"levels": texts, "why": {"type": "string"}, "only_if": {"type": "boolean"}}}
    hyp_props.update({"description": {"type": "string"}, "imaging": {"type": "array", "items": window}})
    hypothesis = {"type": "object", "required": required, "properties": hyp_props,
                  "additionalProperties": False}
    answer = {"type": "object", "required": ["if", "means"], "additionalProperties": False,
              "properties": {"if": {"type": "string"}, "means": {"type": "string"}}}
    test = {"type": "object", "required": ["finding", "why"],
            "properties": {"finding": {"type": "string"}, "why": {"type": "string"},
                           "answers": {"type": "array", "items": answer}}, "additionalProperties": False}
    return {
        "$schema": DRAFT, "$id": BASE + "ranking.schema.json", "title": "cordmap ranking (cordmap-ranking/1)",
        "description": "What `cordmap rank --json` prints: the leading hypotheses (one per lesion family, side and "
                       "rostral segment), the fit verdict, the next tests and the cautions.",
        "type": "object",
        "required": ["format", "hypotheses", "fit", "next_tests", "cautions", "marginals"],
        "properties": {
            "format": {"const": FORMAT},
            "hypotheses": {"type": "array", "items": {"$ref": "#/$defs/hypothesis"}},
            "fit": {"enum": ["good", "poor", "normal", "empty"]},
            "advice": {"type": "string"},
            "next_tests": {"type": "array", "items": test},
            "cautions": {**texts, "minItems": 1},
            "marginals": {"type": "object", "required": ["pattern", "top"],
                          "properties": {"pattern": {"type": "object", "additionalProperties": probability},
                                         "top": {"type": "object", "propertyNames": {"enum": segs},
                                                 "additionalProperties": probability}},
                          "additionalProperties": False},
            "classification": {"$ref": "#/$defs/classification"},
        },
        "additionalProperties": False,
        "$defs": {"lesion": lesion, "variant": variant, "hypothesis": hypothesis,
                  "classification": _classification_def()},
    }


def _course() -> dict:
    from .course import MAX_EXAMS, SINCE, TIME_UNITS

    findings = {"type": "object", "required": ["format"], "properties": _findings_properties(),
                "additionalProperties": False}
    exam = {"type": "object", "required": ["time"],
            "properties": {"time": {"type": "number", "minimum": 0,
                                    "description": "hours or days (time_unit) since the reference point (since)"},
                           "findings": {"$ref": "#/$defs/findings"},
                           "file": {"type": "string", "minLength": 1,
                                    "description": "a findings file, relative to the course file's folder"}},
            "oneOf": [{"required": ["findings"]}, {"required": ["file"]}], "additionalProperties": False}
    return {"$schema": DRAFT, "$id": BASE + "course.schema.json", "title": "cordmap course (cordmap-course/1)",
            "description": "Serial exams of one anonymous patient, each at a time since onset or since the first "
                           "exam; no dates, no identifiers. Two rules only the reader checks: times strictly "
                           "increase, and no acute exam follows a chronic one.",
            "type": "object", "required": ["format", "exams"],
            "properties": {"format": {"const": "cordmap-course/1"}, "label": {"type": "string"},
                           "time_unit": {"enum": list(TIME_UNITS)}, "since": {"enum": list(SINCE)},
                           "exams": {"type": "array", "minItems": 1, "maxItems": MAX_EXAMS, "items": exam}},
            "additionalProperties": False, "$defs": {"findings": findings}}


def build(name: str) -> dict:
    """The schema `name` (one of NAMES) as built from the current tables."""
    makers = {"findings": _findings, "batch-line": _batch_line, "ranking": _ranking,
              "classification": _classification, "course": _course}
    if name not in makers:
        from .errors import bad_value

        raise bad_value("schema", name, NAMES, "schema")
    return makers[name]()


def path(name: str) -> Path:
    """Where the shipped schema `name` is (``cordmap/data/schemas/<name>.schema.json``)."""
    return FOLDER / f"{name}.schema.json"


def load(name: str) -> dict:
    """The shipped schema `name`."""
    if name not in NAMES:
        from .errors import bad_value

        raise bad_value("schema", name, NAMES, "schema")
    return json.loads(path(name).read_text(encoding="utf-8"))


def text(name: str) -> str:
    """The schema as the shipped file holds it (2-space indent, ASCII, newline at the end)."""
    return json.dumps(build(name), indent=2, ensure_ascii=True) + "\n"


def main(argv=None) -> int:
    """Rewrite the shipped schemas from `build()`."""
    FOLDER.mkdir(parents=True, exist_ok=True)
    for name in NAMES:
        path(name).write_text(text(name), encoding="utf-8")
        print(f"wrote {path(name)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
