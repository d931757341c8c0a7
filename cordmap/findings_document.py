"""The findings document (format ``cordmap-findings/1``, and ``/2``: `cordmap.findings_v2`): reading a file, JSON
text or a mapping (`parse`, `read`, `loads`), checking every value (a `CordmapError` naming its path), and writing
it (`to_document`). Item keys and values: `cordmap.findings_value`."""
from __future__ import annotations

import json
import os
from collections.abc import Mapping

from . import findings_v2 as v2
from . import items as registry
from .anatomy import MODALITIES, REFLEXES, SIDES, TENDON_REFLEXES, anatomy
from .errors import CordmapError, bad_value, shown
from .files import MAX_FINDINGS_BYTES, read_bounded
from .findings_value import PHASES, SENSORY_GRADES, SENSORY_NAMES, SIGNS, Findings, reflex_values

FORMAT = "cordmap-findings/1"
FORMATS = (FORMAT, v2.FORMAT2)  # version 2 adds muscles, tenderness and band_pain (`cordmap.findings_v2`)
# "caution": the clinical caution a document written by cordmap (simulate) carries; read and ignored
DOCUMENT_KEYS = ("format", "label", "phase", "sensory", "motor", "reflexes", "signs", "caution", *v2.KEYS)
NINDS = {0: "absent", 1: "reduced", 2: "normal", 3: "normal", 4: "brisk"}  # NINDS myotatic scale 0..4


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
