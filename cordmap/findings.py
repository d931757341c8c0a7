"""The findings document (format ``cordmap-findings/1``, and ``/2``: `cordmap.findings_v2`): reading, checking, writing.

A `Findings` value holds one exam as a flat mapping from an item key to a canonical value. Item keys are the
named tuples of `cordmap.items` (equal to plain tuples), the registry of every item's values and which is normal:

* ``("sensory", modality, side, dermatome)`` -> 0 absent, 1 impaired, 2 normal
* ``("motor", side, myotome)`` -> MRC grade 0..5, or ``"NT"``
* ``("reflex", side, reflex)`` -> "absent" | "reduced" | "normal" | "brisk" (tendon reflexes),
  "present" | "absent" (hoffmann, abdominal, cremasteric), "flexor" | "extensor" | "mute" (plantar)
* ``("sign", name, side)`` -> side is "left"/"right" for horner, "" otherwise; values as in the document
* version 2: ``("muscle", side, name)`` -> MRC grade or "NT"; ``("tenderness", vertebra, "")`` and
  ``("band_pain", side, dermatome)`` -> True (`cordmap.findings_v2`)

A key that is missing was not examined. Nothing here treats "not examined" as "normal".
"""
from __future__ import annotations

import json
import os
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import pandas as pd

from . import findings_v2 as v2
from . import items as registry
from .anatomy import MODALITIES, REFLEXES, SIDES, TENDON_REFLEXES, anatomy
from .errors import CordmapError, bad_value, shown
from .files import MAX_FINDINGS_BYTES, read_bounded

FORMAT = "cordmap-findings/1"
FORMATS = (FORMAT, v2.FORMAT2)  # version 2 adds muscles, tenderness and band_pain (`cordmap.findings_v2`)
# "caution": the clinical caution a document written by cordmap (simulate) carries; read and ignored
DOCUMENT_KEYS = ("format", "label", "phase", "sensory", "motor", "reflexes", "signs", "caution", *v2.KEYS)
PHASES = ("chronic", "acute")
# the values of every item come from the registry (`cordmap.items`); these names are what the reader spells them by
SENSORY_GRADES = dict(zip(registry.SENSORY_SCALE.words, registry.SENSORY_SCALE.values))
SENSORY_NAMES = {v: k for k, v in SENSORY_GRADES.items()}
TENDON_GRADES = registry.TENDON_SCALE.values
NINDS = {0: "absent", 1: "reduced", 2: "normal", 3: "normal", 4: "brisk"}  # NINDS myotatic scale 0..4
PRESENCE = registry.PRESENT_NORMAL.values
PLANTAR = registry.PLANTAR_SCALE.values
SIGNS = {name: e.scale.values for name, e in registry.SIGNS.items()}
item_values = registry.item_values
all_items = registry.all_items
item_label = registry.item_label


def reflex_values(reflex: str) -> tuple[str, ...]:
    return registry.REFLEXES[reflex].scale.values


@dataclass(frozen=True)
class Findings:
    """One bedside exam. ``items`` maps item keys (see module doc) to canonical values."""

    items: Mapping[tuple, object] = field(default_factory=dict)
    label: str = ""
    phase: str = "chronic"

    def __post_init__(self):
        if self.phase not in PHASES:
            raise bad_value("phase", self.phase, PHASES, "phase")
        object.__setattr__(self, "items", MappingProxyType({registry.key(k): v for k, v in self.items.items()}))

    def __hash__(self):
        return hash((self.label, self.phase, tuple(sorted(self.items.items(), key=repr))))

    def __repr__(self) -> str:
        from .views import findings_repr

        return findings_repr(self)

    def _repr_html_(self) -> str:
        """A compact table for notebooks: what was entered, the abnormal findings, the caution."""
        from .views import findings_html

        return findings_html(self)

    def get(self, key: tuple, default=None):
        """The value recorded for one item key (see the module doc), or `default` when it was not examined."""
        return self.items.get(key, default)

    def replace(self, updates: Mapping[tuple, object] = (), remove=(), **kw) -> "Findings":
        """A new `Findings` with items updated or removed (and `label` / `phase` changed when given)."""
        items = dict(self.items)
        items.update(dict(updates))
        for k in remove:
            items.pop(k, None)
        return Findings(items, kw.get("label", self.label), kw.get("phase", self.phase))

    def to_dict(self) -> dict:
        """The findings document (format cordmap-findings/1, or /2 when it records a version-2 item) as a dict."""
        return to_document(self)

    def to_json(self, indent: int | None = 2) -> str:
        """The findings document as JSON text."""
        return json.dumps(to_document(self), indent=indent)

    def tidy(self) -> pd.DataFrame:
        """One row per entered item: columns exam, name, side, segment, value (what `from_tidy` reads)."""
        rows = []
        for key, value in self.items.items():
            kind = key[0]
            extra = v2.tidy_row(key, value)
            if extra is not None:
                rows.append(extra)
            elif kind == "sensory":
                rows.append((kind, key[1], key[2], key[3], SENSORY_NAMES[value]))
            elif kind == "motor":
                rows.append((kind, "mrc", key[1], key[2], str(value)))
            elif kind == "reflex":
                rows.append((kind, key[2], key[1], "", value))
            else:
                rows.append((kind, key[1], key[2], "", str(value).lower()))
        return pd.DataFrame(rows, columns=["exam", "name", "side", "segment", "value"])


# ---------------------------------------------------------------- reading

def _expand_range(spec: str, where: str) -> list[str]:
    derms = anatomy().dermatomes
    spec = spec.strip()
    if spec in derms:
        return [spec]
    # a range "A-B"; S4-5 contains a dash itself, so try every split point
    for i, ch in enumerate(spec):
        if ch == "-" and spec[:i] in derms and spec[i + 1:] in derms:
            a, b = derms.index(spec[:i]), derms.index(spec[i + 1:])
            if a > b:
                raise CordmapError(f"{where}: range {shown(spec)} runs caudal to rostral; write the rostral end first")
            return list(derms[a:b + 1])
    first = spec.split("-")[0]
    raise bad_value(where, first if first not in derms else spec, derms, "dermatome")


def _sensory_grade(v, where):
    if isinstance(v, bool):
        raise bad_value(where, v, ["normal", "impaired", "absent", 2, 1, 0], "sensory grade")
    if isinstance(v, int) and v in (0, 1, 2):
        return v
    if isinstance(v, str) and v.strip().lower() in SENSORY_GRADES:
        return SENSORY_GRADES[v.strip().lower()]
    raise bad_value(where, v, ["normal", "impaired", "absent", "2", "1", "0"], "sensory grade")


def _mapping(obj, where) -> Mapping:
    if not isinstance(obj, Mapping):
        raise CordmapError(f"{where}: expected an object, got {type(obj).__name__} {shown(obj, 40)}")
    return obj


def _known(keys, allowed, where, what):
    for k in keys:
        if not isinstance(k, str) or k not in allowed:
            raise bad_value(f"{where}[{shown(k, 40)}]" if where else shown(k, 40), k, allowed, what)


def _one_line(text: str, limit: int = 120) -> str:
    text = " ".join(str(text).split())
    return text if len(text) <= limit else text[: limit - 3] + "..."


def loads(text: str | bytes, where: str = "findings", path_hint: bool = False):
    """JSON text -> a Python value; every failure (bad syntax, deep nesting, an integer past Python's digit limit,
    bad UTF-8) is a one-line `CordmapError`."""
    if isinstance(text, (bytes, bytearray, memoryview)):
        try:
            text = bytes(text).decode("utf-8")
        except UnicodeDecodeError as e:
            raise CordmapError(f"{where}: not UTF-8 text ({e.reason} at byte {e.start})") from None
    try:
        return json.loads(text)
    except json.JSONDecodeError as e:
        hint = "; to read a file, pass a pathlib.Path, not a str" if path_hint and "{" not in text else ""
        raise CordmapError(f"{where}: not valid JSON ({_one_line(e.msg)} at line {e.lineno} column {e.colno}){hint}") \
            from None
    except RecursionError:
        raise CordmapError(f"{where}: not a findings document (JSON nested too deeply)") from None
    except ValueError as e:  # e.g. an integer of more than 4,300 digits
        raise CordmapError(f"{where}: not a findings document ({_one_line(e, 80)})") from None


def read(path: str | os.PathLike) -> Findings:
    """Read a findings file: a regular file of at most `MAX_FINDINGS_BYTES` holding one JSON document."""
    name = shown(str(path), 80)
    return parse(loads(read_bounded(path, "findings file", MAX_FINDINGS_BYTES), name))


def parse(doc) -> Findings:
    """Read a findings document. The form decides what `doc` is, never its first character:

    a `Findings` is returned as it is; a mapping is the document; a `pathlib.Path` (or any ``os.PathLike``) is a
    file to read (`read`); a `str` or `bytes` is JSON text. So ``parse(Path("2024-exam.json"))`` reads that file
    and ``parse("2024-exam.json")`` is refused as JSON text, with a hint.
    """
    if isinstance(doc, Findings):
        return doc
    if isinstance(doc, os.PathLike):
        return read(doc)
    if isinstance(doc, (str, bytes, bytearray, memoryview)):
        doc = loads(doc, path_hint=isinstance(doc, str))
    doc = _mapping(doc, "findings")
    a = anatomy()
    fmt = doc.get("format")
    if fmt not in FORMATS:
        raise CordmapError(f"format: {shown(fmt)} is not a findings format this version reads; expected {FORMAT!r} "
                           f"or {v2.FORMAT2!r}")
    if fmt == FORMAT:
        v2.refuse_in_v1(doc, fmt)
    _known(doc, DOCUMENT_KEYS, "", "key")
    caution = doc.get("caution", "")
    if not isinstance(caution, str):  # written by cordmap's outputs (simulate); read and ignored
        raise CordmapError(f"caution: expected text, got {shown(caution, 40)}")
    label = doc.get("label", "")
    if not isinstance(label, str):
        raise CordmapError(f"label: expected text, got {shown(label, 40)}")
    phase = doc.get("phase", "chronic")
    if phase not in PHASES:
        raise bad_value("phase", phase, PHASES, "phase")
    items: dict[tuple, object] = {}

    sensory = _mapping(doc.get("sensory", {}), "sensory")
    _known(sensory, MODALITIES, "sensory", "modality")
    for mod, by_side in sensory.items():
        by_side = _mapping(by_side, f"sensory.{mod}")
        _known(by_side, SIDES, f"sensory.{mod}", "side")
        for side, entries in by_side.items():
            where0 = f"sensory.{mod}.{side}"
            entries = _mapping(entries, where0)
            seen: dict[str, tuple[int, str]] = {}
            for spec, grade in entries.items():
                where = f"{where0}[{shown(spec, 40)}]"
                if not isinstance(spec, str):
                    raise bad_value(where, spec, ["C2..S4-5", "a range such as T10-L1"], "dermatome")
                g = _sensory_grade(grade, where)
                for d in _expand_range(spec, where):
                    if d in seen and seen[d][0] != g:
                        raise CordmapError(f"{where}: {d} is also graded {SENSORY_NAMES[seen[d][0]]!r} "
                                           f"by {shown(seen[d][1], 40)}; overlapping entries must agree")
                    seen[d] = (g, spec)
                    items[("sensory", mod, side, d)] = g

    motor = _mapping(doc.get("motor", {}), "motor")
    _known(motor, SIDES, "motor", "side")
    for side, entries in motor.items():
        entries = _mapping(entries, f"motor.{side}")
        _known(entries, a.key_myotomes, f"motor.{side}", "myotome")
        for myo, grade in entries.items():
            items[("motor", side, myo)] = registry.read_mrc(grade, f"motor.{side}[{myo!r}]")

    reflexes = _mapping(doc.get("reflexes", {}), "reflexes")
    _known(reflexes, SIDES, "reflexes", "side")
    for side, entries in reflexes.items():
        entries = _mapping(entries, f"reflexes.{side}")
        _known(entries, REFLEXES, f"reflexes.{side}", "reflex")
        for name, value in entries.items():
            where = f"reflexes.{side}[{name!r}]"
            allowed = reflex_values(name)
            if name in TENDON_REFLEXES and isinstance(value, int) and not isinstance(value, bool) and value in NINDS:
                value = NINDS[value]
            if not isinstance(value, str) or value.strip().lower() not in allowed:
                extra = ["0", "1", "2", "3", "4"] if name in TENDON_REFLEXES else []
                raise bad_value(where, value, [*allowed, *extra], "reflex grade")
            items[("reflex", side, name)] = value.strip().lower()

    signs = _mapping(doc.get("signs", {}), "signs")
    _known(signs, ("horner", *SIGNS), "signs", "sign")
    for name, value in signs.items():
        if name == "horner":
            value = _mapping(value, "signs.horner")
            _known(value, SIDES, "signs.horner", "side")
            for side, v in value.items():
                if not isinstance(v, bool):
                    raise bad_value(f"signs.horner[{side!r}]", v, ["true", "false"], "value")
                items[("sign", "horner", side)] = v
            continue
        allowed = SIGNS[name]
        if allowed == (True, False):
            if not isinstance(value, bool):
                raise bad_value(f"signs[{name!r}]", value, ["true", "false"], "value")
        elif not isinstance(value, str) or value.strip().lower() not in allowed:
            raise bad_value(f"signs[{name!r}]", value, allowed, "value")
        else:
            value = value.strip().lower()
        items[("sign", name, "")] = value
    if fmt == v2.FORMAT2:
        v2.parse_into(doc, items, _mapping, _known, _expand_range)
    return Findings(items, label, phase)


load = parse


def to_document(f: Findings) -> dict:
    """The findings document for `f`; consecutive dermatomes with one grade are written as a range."""
    a = anatomy()
    doc: dict = {"format": FORMAT, "label": f.label, "phase": f.phase}
    sensory: dict = {}
    for mod in MODALITIES:
        for side in SIDES:
            run: list[tuple[str, str, int]] = []
            for d in a.dermatomes:
                g = f.items.get(("sensory", mod, side, d))
                if g is None:
                    continue
                if run and run[-1][2] == g and a.dermatomes.index(run[-1][1]) + 1 == a.dermatomes.index(d):
                    run[-1] = (run[-1][0], d, g)
                else:
                    run.append((d, d, g))
            if run:
                sensory.setdefault(mod, {})[side] = {
                    (s if s == e else f"{s}-{e}"): SENSORY_NAMES[g] for s, e, g in run}
    if sensory:
        doc["sensory"] = sensory
    motor = {s: {m: f.items[("motor", s, m)] for m in a.key_myotomes if ("motor", s, m) in f.items} for s in SIDES}
    if any(motor.values()):
        doc["motor"] = {s: v for s, v in motor.items() if v}
    refl = {s: {r: f.items[("reflex", s, r)] for r in REFLEXES if ("reflex", s, r) in f.items} for s in SIDES}
    if any(refl.values()):
        doc["reflexes"] = {s: v for s, v in refl.items() if v}
    signs: dict = {}
    horner = {s: f.items[("sign", "horner", s)] for s in SIDES if ("sign", "horner", s) in f.items}
    if horner:
        signs["horner"] = horner
    for name in SIGNS:
        if ("sign", name, "") in f.items:
            signs[name] = f.items[("sign", name, "")]
    if signs:
        doc["signs"] = signs
    v2.write_into(f, doc)
    return doc


TIDY_COLUMNS = ("exam", "name", "side", "segment", "value")
_SMALL_NUMBER = re.compile(r"[0-9]{1,2}")  # ASCII digits only: int("²") fails, and a grade has one digit


def _tidy_item(exam: str, name: str, side: str, seg: str) -> tuple:
    """The item a tidy row speaks about, to find two rows that give one item two values."""
    if exam == "sensory":
        return (exam, name, side, seg)
    if exam == "motor":
        return (exam, side, seg)
    if exam == "reflex":
        return (exam, side, name)
    if exam == "sign":
        return (exam, name, side if name == "horner" else "")
    if exam in v2.KINDS:
        return v2.tidy_item(exam, name, side, seg)
    return (exam,)


def _tidy_value(exam: str, name: str, value: str) -> object:
    """A tidy row's value as the document carries it ("4" for a tendon reflex is 4, "2" for motor is 2)."""
    if exam in ("motor", "reflex", "muscle") and _SMALL_NUMBER.fullmatch(value):
        return int(value)
    if exam == "sign":
        return {"true": True, "false": False}.get(value.lower(), value)
    return value


def _canonical(exam: str, name: str, value: object) -> object:
    """The value two rows are compared by: 'absent' and '0' for a sensory grade agree, as do 4 and 'brisk'."""
    if exam == "sensory":
        v = str(value).strip().lower()
        return SENSORY_GRADES.get(v, int(v) if _SMALL_NUMBER.fullmatch(v) else v)
    if exam == "reflex" and name in TENDON_REFLEXES and isinstance(value, int):
        return NINDS.get(value, value)
    if isinstance(value, str):
        return value.strip().upper() if exam in ("motor", "muscle") else value.strip().lower()
    return value


def _cell(row, col) -> str:
    v = row.get(col, "") if isinstance(row, Mapping) else getattr(row, col, "")
    if v is None or v != v:  # a missing cell, or pandas' NaN
        return ""
    try:
        return str(v).strip()
    except (ValueError, RecursionError):  # an integer past Python's digit limit, a deeply nested value
        return shown(v)


def from_rows(rows, label: str = "", phase: str = "chronic", row_names=None) -> Findings:
    """Read one exam from tidy rows (mappings or named tuples with exam, name, side, segment, value).

    Two rows that give one item different values are an error naming both rows (``row_names`` gives the names,
    e.g. the file's line numbers; by default row 1, 2, ...), as are two different phases. Rows that repeat a
    value are accepted."""
    doc: dict = {"format": FORMAT, "label": label, "phase": phase}
    seen: dict[tuple, tuple[object, str, str]] = {}
    for i, r in enumerate(rows):
        exam, name, side, seg, value = (_cell(r, c) for c in TIDY_COLUMNS)
        where = row_names[i] if row_names is not None else f"row {i + 1}"
        exams = ("sensory", "motor", "reflex", "sign", "phase", *v2.KINDS)
        if exam not in exams:
            raise bad_value(f"{where}.exam", exam, exams, "exam")
        v = _tidy_value(exam, name, value)
        key = _tidy_item(exam, name, side, seg)
        canon = _canonical(exam, name, v)
        if key in seen and seen[key][0] != canon:
            item = " ".join(p for p in key if p)
            raise CordmapError(f"{seen[key][2]} and {where} give {shown(item, 60)} two values: "
                               f"{shown(seen[key][1], 30)} and {shown(value, 30)}; keep one row per item")
        seen.setdefault(key, (canon, value, where))
        if exam == "sensory":
            doc.setdefault("sensory", {}).setdefault(name, {}).setdefault(side, {})[seg] = v
        elif exam == "motor":
            doc.setdefault("motor", {}).setdefault(side, {})[seg] = v
        elif exam == "reflex":
            doc.setdefault("reflexes", {}).setdefault(side, {})[name] = v
        elif exam in v2.KINDS:
            v2.from_row(doc, exam, name, side, seg, value if exam != "muscle" else v, where)
        elif exam == "sign":
            if name == "horner":
                doc.setdefault("signs", {}).setdefault("horner", {})[side] = v
            else:
                doc.setdefault("signs", {})[name] = v
        else:
            doc["phase"] = value
    return parse(doc)


def from_tidy(df: pd.DataFrame, label: str = "", phase: str = "chronic") -> Findings:
    """Read one exam from a tidy table (columns exam, name, side, segment, value), as `Findings.tidy` writes."""
    return from_rows(list(df.itertuples(index=False)), label, phase)
