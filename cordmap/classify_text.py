"""The classification in words: `rows` (what the text, the report and the notebook views show), `classification_line`
(the one line the command line, the app, the report and the views show) and `main_text` (the plain text, with the
caution)."""
from __future__ import annotations

from . import cautions
from .classify_result import NA, ND, Classification, Score, Sided


def rows(c: Classification) -> list[tuple[str, str]]:
    """The classification in words, (what, value) pairs in reading order: what the text, the report and the
    notebook views show (no raw field names, no raw True/False)."""
    complete = {True: "yes (no sacral sparing)", False: "no (sacral sparing present)"}.get(
        c.complete, "not determinable (ND)")

    def sided(v: Sided) -> str:
        return f"left {_value_words(v.left)}, right {_value_words(v.right)}"

    return [
        ("Impairment grade (AIS)", _value_words(c.ais)),
        ("Neurological level of injury", _value_words(c.neurological_level)),
        ("Complete", complete),
        ("Sensory level", sided(c.sensory_level)),
        ("Motor level", sided(c.motor_level)),
        ("Zone of partial preservation, sensory", sided(c.zpp_sensory)),
        ("Zone of partial preservation, motor", sided(c.zpp_motor)),
        *((title, _score_words(s)) for title, s in (
            ("Upper-extremity motor score", c.uems), ("Lower-extremity motor score", c.lems),
            ("Light touch score", c.light_touch), ("Pinprick score", c.pinprick))),
    ]


def classification_line(c: Classification) -> str:
    """The classification on one line, in words: what the command line, the app, the report and the notebook views
    show of it (the one formatter)."""
    complete = {True: "complete", False: "incomplete"}.get(c.complete, "completeness not determinable")
    return (f"AIS {c.ais}, neurological level {c.neurological_level}, {complete}; sensory level "
            f"left {c.sensory_level.left} / right {c.sensory_level.right}; motor level left {c.motor_level.left} / "
            f"right {c.motor_level.right}; upper-extremity motor score {c.uems.total}, lower-extremity motor score "
            f"{c.lems.total}")


def _value_words(v) -> str:
    return {ND: "not determinable (ND)", NA: "does not apply (NA)"}.get(v, str(v))


def _score_words(s: Score) -> str:
    return f"left {s.left}, right {s.right}, total {s.total} (of {2 * s.maximum_per_side})"


def main_text(c: Classification) -> str:
    """Readable plain text of one classification, ending with the clinical caution."""
    lines = ["Classification by the ISNCSCI 2019 rules", *(f"{what}: {value}" for what, value in rows(c))]
    if c.reasons:
        lines.append("Not determinable (ND):")
        from .views import field_words

        lines += [f"  {field_words(field)}: {why}" for field, why in c.reasons]
    if c.notes:
        lines.append("Notes:")
        lines += [f"  {n}" for n in c.notes]
    lines.append(cautions.BANNER)
    return "\n".join(lines)
