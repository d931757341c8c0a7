"""Rank a cohort: many exams into one DataFrame, one row per case, a case's error as its row.

`rank_many` takes what a researcher holds: a list of `Findings` or findings documents (dicts, JSON text,
`pathlib.Path` files), a mapping {case id: exam}, or a tidy DataFrame with the batch CSV's columns (case_id, exam,
name, side, segment, value). The exams are scored with one matrix product per chunk (`rank.batch_scores`) and read
as `rank()` lists them (`rank.batch_leaders`); `cordmap batch` writes the same rows to a CSV.

The fit column is "empty" (nothing entered), "normal" (no lesion explains the findings better than a normal cord)
or "lesion"; the two-lesion check ("poor") is made by `rank` only (it costs a pair search per case).
"""
from __future__ import annotations

import json
from collections.abc import Callable, Mapping
from pathlib import Path

import pandas as pd

from .cohort import Case
from .errors import CordmapError, shown
from .findings import TIDY_COLUMNS, Findings, from_rows, parse

BATCH_FIELDS = ["case_id", "status", "fit", "pattern", "side", "top", "bottom", "params", "probability",
                "vertebral_levels", "same_exam", "second", "second_probability", "error"]
CHUNK = 256  # exams per matrix product

Progress = Callable[[str, int, int], None]  # (phase, done, total)


def rank_exams(good: list[Findings], progress: Progress | None = None) -> dict[int, dict]:
    """Rank many exams with one matrix product per chunk: {index in `good`: result row} (as rank() shows them)."""
    from . import atlas as atlas_mod
    from .lesions import NORMAL
    from .rank import batch_leaders, batch_scores

    out: dict[int, dict] = {}
    for phase in ("chronic", "acute"):
        sel = [i for i, f in enumerate(good) if f.phase == phase]
        if not sel:
            continue
        at = atlas_mod.get(phase)
        for start in range(0, len(sel), CHUNK):
            chunk = sel[start:start + CHUNK]
            scores = batch_scores([good[i] for i in chunk], at)
            for row, i in zip(scores, chunk):
                (les, p1, levels, same), (les2, p2, _, _) = batch_leaders(at, row, 2)  # as rank() lists them
                fit = "empty" if not good[i].items else "normal" if les.pattern == NORMAL else "lesion"
                out[i] = {"status": "ok", "fit": fit, "pattern": les.pattern, "side": les.side,
                          "top": les.top, "bottom": les.bottom, "params": json.dumps(les.all_params()),
                          "probability": round(p1, 4), "vertebral_levels": " ".join(levels),
                          "same_exam": "; ".join(o.describe() for o in same), "second": les2.describe(),
                          "second_probability": round(p2, 4), "error": ""}
            if progress:
                progress(phase, min(start + CHUNK, len(sel)), len(sel))
    return out


def rank_cases(cases: list[Case], progress: Progress | None = None) -> list[dict]:
    """One result row per case, in order: the ranking's leaders for a good case, status 'error' and the message
    for a bad one (BATCH_FIELDS are the keys)."""
    good = [c.findings for c in cases if c.ok]
    results = rank_exams(good, progress)
    rows, k = [], 0
    for c in cases:
        if c.ok:
            rows.append({"case_id": c.case_id, **results[k]})
            k += 1
        else:
            rows.append({f: "" for f in BATCH_FIELDS} | {"case_id": c.case_id, "status": "error", "error": c.error})
    return rows


def _case(case_id: str, exam) -> Case:
    try:
        if isinstance(exam, Mapping) and "case_id" in exam:
            exam = {k: v for k, v in exam.items() if k != "case_id"}
        return Case(case_id, parse(exam))
    except CordmapError as e:
        return Case(case_id, error=str(e))


def _doc_case_id(exam, default: str) -> str:
    cid = exam.get("case_id") if isinstance(exam, Mapping) else None
    return cid if isinstance(cid, str) and cid.strip() else str(cid) if isinstance(cid, int) and not \
        isinstance(cid, bool) else default


def _tidy_cases(df: pd.DataFrame) -> list[Case]:
    need = ("case_id", *TIDY_COLUMNS)
    missing = [c for c in need if c not in df.columns]
    if missing:
        raise CordmapError(f"rank_many: a tidy table needs the columns {', '.join(need)}; missing "
                           f"{shown(', '.join(missing), 80)}")
    groups: dict[str, list[tuple[dict, str]]] = {}
    for n, row in enumerate(df[list(need)].itertuples(index=False), start=1):
        cid = "" if row.case_id is None or row.case_id != row.case_id else str(row.case_id).strip()
        groups.setdefault(cid, []).append((row._asdict(), f"row {n}"))
    out = []
    for cid, rows in groups.items():
        if not cid:
            out.append(Case(f"{rows[0][1]}", error=f"{rows[0][1]}: no case_id ({len(rows)} rows without one)"))
            continue
        try:
            out.append(Case(cid, from_rows([r for r, _ in rows], row_names=[w for _, w in rows])))
        except CordmapError as e:
            out.append(Case(cid, error=str(e)))
    return out


def cases_of(exams) -> list[Case]:
    """The cases of what `rank_many` takes, each with its Findings or its error (see `rank_many`)."""
    if isinstance(exams, pd.DataFrame):
        return _tidy_cases(exams)
    if isinstance(exams, (str, bytes, Path, Findings)) or (isinstance(exams, Mapping) and "format" in exams):
        raise CordmapError("rank_many: expected many exams (a list, a {case_id: exam} mapping or a tidy DataFrame), "
                           "got one; use cordmap.rank for one exam")
    if isinstance(exams, Mapping):
        return [_case(str(cid), exam) for cid, exam in exams.items()]
    try:
        items = list(exams)
    except TypeError:
        raise CordmapError(f"rank_many: expected a list of exams or a tidy DataFrame, got {type(exams).__name__}") \
            from None
    cases, seen = [], set()
    for i, exam in enumerate(items, start=1):
        cid = _doc_case_id(exam, str(i))
        case = _case(cid, exam)
        if cid in seen:
            case = Case(cid, error=f"exam {i}: case_id {shown(cid, 40)} is already used")
        seen.add(cid)
        cases.append(case)
    return cases


def rank_many(exams, progress: Progress | None = None) -> pd.DataFrame:
    """Rank many exams: one row per case, in input order, with the columns of `cordmap batch` (`BATCH_FIELDS`).

    `exams`: a list of `Findings`, findings documents (a dict may carry its `case_id`), JSON texts or
    `pathlib.Path` files (case ids 1, 2, ... by position unless a document names its own); a mapping
    {case_id: exam}; or a tidy DataFrame with the columns case_id, exam, name, side, segment, value (the batch
    CSV's). A case that cannot be read is a row with status 'error' and the message in `error`, never an exception.
    `progress(phase, done, total)` is called after each chunk of 256 exams."""
    rows = rank_cases(cases_of(exams), progress)
    df = pd.DataFrame(rows, columns=BATCH_FIELDS)
    for col in ("probability", "second_probability"):
        df[col] = pd.to_numeric(df[col], errors="coerce")
    return df
