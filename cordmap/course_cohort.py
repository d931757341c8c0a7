"""Many courses at once, for researchers: `course_cohort(courses) -> CourseCohort`.

* ``table``: every course's `Course.table` stacked, with ``course`` (its id) and ``t`` (its time in the cohort's
  unit: courses in hours and in days are put on one clock);
* ``conversion``: counts of the impairment grade at the first exam (rows) against the last exam (columns);
* ``conversion_rates``: per first grade, how many courses improved by at least one grade, stayed, or worsened
  (courses whose first or last grade is "ND" are left out and counted in ``not_graded``);
* ``curves``: recovery curves, per score (UEMS, LEMS, total motor, light touch, pinprick) and time: number of
  courses, mean, median and quartiles. With ``bins`` (edges in the cohort's unit) times are grouped into those
  intervals; without, each distinct time is its own point.

Like `cordmap batch`, a bad course does not stop the others: it is listed in ``errors`` (its id and the one-line
message) and the rest are summarised; only a cohort with no good course is an error.
"""
from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .classify import AIS_GRADES
from .course import HOURS_PER, TIME_UNITS, Course, parse_course
from .errors import CordmapError, bad_value

CURVE_MEASURES = ("uems", "lems", "motor_total", "light_touch", "pinprick")


@dataclass(frozen=True)
class CourseCohort:
    table: pd.DataFrame
    conversion: pd.DataFrame
    conversion_rates: pd.DataFrame
    curves: pd.DataFrame
    unit: str
    errors: tuple[tuple[str, str], ...] = ()

    def __repr__(self) -> str:
        n = self.table["course"].nunique() if len(self.table) else 0
        return f"CourseCohort({n} courses, {len(self.errors)} errors, times in {self.unit})"


def course_cohort(courses: Iterable, ids: Sequence[str] | None = None, unit: str = "days",
                  bins: Sequence[float] | None = None) -> CourseCohort:
    """Summarise many courses (each a `Course`, a course document or a `pathlib.Path`)."""
    if unit not in TIME_UNITS:
        raise bad_value("unit", unit, TIME_UNITS, "time unit")
    courses = list(courses)
    if ids is None:
        ids = [str(i) for i in range(len(courses))]
    ids = [str(i) for i in ids]
    if len(ids) != len(courses):
        raise CordmapError(f"ids: {len(ids)} ids for {len(courses)} courses; give one id per course")
    if len(set(ids)) != len(ids):
        raise CordmapError("ids: every course needs its own id")
    good: list[tuple[str, Course]] = []
    errors: list[tuple[str, str]] = []
    for cid, c in zip(ids, courses):
        try:
            good.append((cid, parse_course(c)))
        except CordmapError as e:
            errors.append((cid, str(e)))
    if not good:
        raise CordmapError(f"courses: no course could be read ({len(errors)} errors; the first: "
                           f"{errors[0][1] if errors else 'no courses given'})")
    frames = []
    for cid, c in good:
        t = c.table.copy()
        t.insert(0, "course", cid)
        t.insert(2, "t", t["time"] * HOURS_PER[c.time_unit] / HOURS_PER[unit])
        frames.append(t)
    table = pd.concat(frames, ignore_index=True)
    conversion, rates = _conversion(good)
    return CourseCohort(table, conversion, rates, _curves(table, bins), unit, tuple(errors))


def _conversion(good: list[tuple[str, Course]]) -> tuple[pd.DataFrame, pd.DataFrame]:
    first, last = [], []
    ungraded = 0
    for _, c in good:
        a, b = c.classifications[0].ais, c.classifications[-1].ais
        if a in AIS_GRADES and b in AIS_GRADES:
            first.append(a)
            last.append(b)
        else:
            ungraded += 1
    grades = list(AIS_GRADES)
    counts = pd.crosstab(pd.Categorical(first, grades), pd.Categorical(last, grades), dropna=False)
    counts.index.name, counts.columns.name = "first_ais", "last_ais"
    rows = []
    for g in grades:
        n = int(counts.loc[g].sum())
        k = grades.index(g)
        better = int(counts.loc[g, grades[k + 1:]].sum())
        worse = int(counts.loc[g, grades[:k]].sum())
        rows.append({"first_ais": g, "n": n, "improved": better, "unchanged": n - better - worse, "worsened": worse,
                     "rate_improved": better / n if n else np.nan, "rate_worsened": worse / n if n else np.nan})
    rates = pd.DataFrame(rows)
    rates.attrs["not_graded"] = ungraded
    return counts, rates


def _curves(table: pd.DataFrame, bins: Sequence[float] | None) -> pd.DataFrame:
    scores = table[(table["side"] == "total") & table["measure"].isin(CURVE_MEASURES)]
    wide = scores.pivot_table(index=["course", "exam", "t"], columns="measure", values="numeric", aggfunc="first")
    wide = wide.reset_index()
    wide["motor_total"] = wide["uems"] + wide["lems"]
    long = wide.melt(id_vars=["course", "exam", "t"], value_vars=list(CURVE_MEASURES), var_name="measure",
                     value_name="value").dropna(subset=["value"])
    if bins is not None:
        edges = sorted(float(b) for b in bins)
        if len(edges) < 2:
            raise CordmapError(f"bins: give at least two edges, got {list(bins)!r}")
        long["t"] = pd.cut(long["t"], edges, include_lowest=True)
        long = long.dropna(subset=["t"])
        # one value per course and interval: its last exam in that interval
        long = long.sort_values("exam").groupby(["course", "t", "measure"], observed=True).tail(1)
    g = long.groupby(["measure", "t"], observed=True)["value"]
    out = pd.DataFrame({"n": g.size(), "mean": g.mean(), "median": g.median(), "q25": g.quantile(0.25),
                        "q75": g.quantile(0.75)}).reset_index()
    return out
