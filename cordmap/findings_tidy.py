"""The findings as a tidy table (columns exam, name, side, segment, value): `tidy_table` writes one
(`Findings.tidy`), `from_rows` / `from_tidy` read one exam from rows, refusing two rows that give one item two
values."""
from __future__ import annotations

import re
from collections.abc import Mapping

import pandas as pd

from . import findings_v2 as v2
from .anatomy import TENDON_REFLEXES
from .errors import CordmapError, bad_value, shown
from .findings_document import FORMAT, NINDS, parse
from .findings_value import SENSORY_GRADES, SENSORY_NAMES, Findings

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


def tidy_table(f: Findings) -> pd.DataFrame:
    """One row per entered item: columns exam, name, side, segment, value (what `from_tidy` reads)."""
    rows = []
    for key, value in f.items.items():
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
