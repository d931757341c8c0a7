"""A cohort file, read case by case: a tidy CSV with a case_id column, or JSONL (one findings document a line).

The file is streamed (only a CSV's rows are kept, grouped by case, until the end), must be a regular file, and
every problem belongs to a case: a bad line, a row set that gives one item two values, a duplicate case id in
JSONL. `read_cases` yields every case of the input in the order it first appears, each with its `Findings` or its
error, so a batch can report every case and carry on past the bad ones. Only a file that is not a cohort at all
(not readable, no case_id column) raises `CordmapError`.
"""
from __future__ import annotations

import csv
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

from .errors import CordmapError, shown
from .files import MAX_COHORT_BYTES, MAX_FINDINGS_BYTES, open_regular
from .findings import TIDY_COLUMNS, Findings, from_rows, loads, parse

MAX_LINE = MAX_FINDINGS_BYTES  # one JSONL line or CSV row holds one case at most
MAX_CASE_ID = 200  # characters


@dataclass(frozen=True)
class Case:
    case_id: str
    findings: Findings | None = None
    error: str = ""

    @property
    def ok(self) -> bool:
        return self.findings is not None


def _lines(fh) -> Iterator[tuple[int, str | None]]:
    """(line number, text) for each line; text None for a line over `MAX_LINE` bytes (skipped to its end).
    Bytes that are not UTF-8 become U+FFFD, which the findings reader then names as a bad value of that case."""
    n = 0
    while True:
        raw = fh.readline(MAX_LINE + 1)
        if not raw:
            return
        n += 1
        if len(raw) > MAX_LINE and not raw.endswith(b"\n"):
            while raw and not raw.endswith(b"\n"):
                raw = fh.readline(1 << 20)
            yield n, None
            continue
        text = raw.decode("utf-8", errors="replace")
        if n == 1:
            text = text.removeprefix("\ufeff")
        yield n, text


def _case_id(value, n: int) -> tuple[str, str]:
    """(case id, error) of a JSONL document's case_id (text or a whole number; the line number when absent)."""
    if value is None:
        return str(n), ""
    if isinstance(value, bool) or not isinstance(value, (str, int)):
        return f"line {n}", f"line {n}: case_id {shown(value, 40)} is not text or a whole number"
    text = value if isinstance(value, str) else shown(value, MAX_CASE_ID)
    if not text.strip() or len(text) > MAX_CASE_ID or "\n" in text or "\r" in text:
        return f"line {n}", f"line {n}: case_id {shown(text, 40)} must be 1..{MAX_CASE_ID} characters on one line"
    return text, ""


def _jsonl(fh) -> Iterator[Case]:
    first: dict[str, int] = {}
    for n, line in _lines(fh):
        if line is None:
            yield Case(f"line {n}", error=f"line {n}: over the {MAX_LINE // (1 << 20)} MB limit for one case")
            continue
        if not line.strip():
            continue
        cid = str(n)
        try:
            doc = loads(line, f"line {n}")
            if not isinstance(doc, dict):
                raise CordmapError(f"line {n}: expected a findings document (a JSON object), got "
                                   f"{type(doc).__name__} {shown(doc, 40)}")
            cid, err = _case_id(doc.pop("case_id", None), n)
            if err:
                raise CordmapError(err)
            if cid in first:
                raise CordmapError(f"line {n}: case_id {shown(cid, 40)} is already used on line {first[cid]}")
            first[cid] = n
            yield Case(cid, parse(doc))
        except CordmapError as e:
            msg = str(e)
            yield Case(cid, error=msg if msg.startswith(f"line {n}") else f"line {n}: {msg}")


def _csv(fh, name: str) -> Iterator[Case]:
    lines = _lines(fh)
    numbers: list[int] = []

    def texts():
        for n, text in lines:
            numbers.append(n)
            yield text if text is not None else "\x00"  # an over-long line: the csv reader names it
    reader = csv.reader(texts())
    try:
        header = [h.strip() for h in next(reader)]
    except StopIteration:
        raise CordmapError(f"{name}: empty; a cohort table needs a header row") from None
    except csv.Error as e:
        raise CordmapError(f"{name}: not a cohort table ({e})") from None
    need = ("case_id", *TIDY_COLUMNS)
    missing = [c for c in need if c not in header]
    if missing:
        raise CordmapError(f"{name}: a cohort table needs the columns {', '.join(need)}; missing "
                           f"{shown(', '.join(missing), 80)}")
    col = {c: header.index(c) for c in need}
    cases: dict[str, list[tuple[dict, str]]] = {}
    broken: dict[str, str] = {}
    orphans: list[Case] = []
    while True:
        try:
            values = next(reader)
        except StopIteration:
            break
        except csv.Error as e:
            n = numbers[-1] if numbers else 0
            orphans.append(Case(f"line {n}", error=f"line {n}: not a table row ({shown(str(e), 80)})"))
            continue
        n = numbers[-1]
        if not values or not any(v.strip() for v in values):
            continue
        cid = values[col["case_id"]].strip() if len(values) > col["case_id"] else ""
        if not cid or len(cid) > MAX_CASE_ID:
            orphans.append(Case(f"line {n}", error=f"line {n}: case_id {shown(cid, 40)} must be 1..{MAX_CASE_ID} "
                                                   "characters"))
            continue
        rows = cases.setdefault(cid, [])
        if len(values) != len(header):
            broken.setdefault(cid, f"line {n}: {len(values)} values, the header has {len(header)} columns")
            continue
        rows.append(({c: values[i] for c, i in col.items()}, f"line {n}"))
    for cid, rows in cases.items():
        if cid in broken:
            yield Case(cid, error=broken[cid])
            continue
        try:
            yield Case(cid, from_rows([r for r, _ in rows], row_names=[w for _, w in rows]))
        except CordmapError as e:
            yield Case(cid, error=str(e))
    yield from orphans


def read_cases(path) -> Iterator[Case]:
    """Every case of a cohort file, in input order (a CSV's rows without a usable case id come last)."""
    path = Path(path)
    name = shown(str(path), 80)
    fh = open_regular(path, "cohort file", MAX_COHORT_BYTES)
    with fh:
        if path.suffix.lower() == ".jsonl":
            yield from _jsonl(fh)
        else:
            yield from _csv(fh, name)

