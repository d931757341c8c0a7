"""The classification's scores: upper- and lower-extremity motor scores (25 per limb), light touch and pinprick
(56 per side); "ND" for a side with an item not examined."""
from __future__ import annotations

from .anatomy import SIDES, anatomy
from .classify_exam import Exam, why
from .classify_result import ND, Score
from .findings import item_label

UPPER = ("C5", "C6", "C7", "C8", "T1")
LOWER = ("L2", "L3", "L4", "L5", "S1")


def _score(ex: Exam, items: dict[str, list[tuple]], maximum: int) -> tuple[Score, list[str]]:
    """Sum per side of the values of the given keys; "ND" for a side with a missing or NT item."""
    sums: dict[str, int | str] = {}
    unknown: list[str] = []
    for side, keys in items.items():
        vals = [ex.findings.get(k) for k in keys]
        missing = [item_label(k) for k, v in zip(keys, vals) if v is None or v == "NT"]
        sums[side] = ND if missing else sum(vals)
        unknown += missing
    total = ND if ND in sums.values() else sums["left"] + sums["right"]
    return Score(sums["left"], sums["right"], total, maximum), unknown


def scores(ex: Exam, reasons: list[tuple[str, str]]) -> tuple[Score, Score, Score, Score]:
    """Upper- and lower-extremity motor, light touch and pinprick scores; the reasons of each "ND" appended."""
    a = anatomy()
    uems, u1 = _score(ex, {s: [("motor", s, k) for k in UPPER] for s in SIDES}, 25)
    lems, u2 = _score(ex, {s: [("motor", s, k) for k in LOWER] for s in SIDES}, 25)
    lt, u3 = _score(ex, {s: [("sensory", "light_touch", s, d) for d in a.dermatomes] for s in SIDES}, 56)
    pp, u4 = _score(ex, {s: [("sensory", "pinprick", s, d) for d in a.dermatomes] for s in SIDES}, 56)
    for name, unk in (("uems", u1), ("lems", u2), ("light_touch", u3), ("pinprick", u4)):
        if unk:
            reasons.append((f"scores.{name}", why(unk)))
    return uems, lems, lt, pp
