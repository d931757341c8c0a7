"""Short text and HTML views of the values a researcher evaluates in a notebook.

`Findings`, `Ranking`, `Hypothesis` and `Classification` show themselves through these functions: a `repr` of a few
lines (never more than `MAX_REPR_LINES`) and a `_repr_html_` table that Jupyter renders, each with the caution.
The DataFrame route stays `.table` / `.tidy()`. All text put into HTML is escaped here.
"""
from __future__ import annotations

from html import escape

from . import cautions as C

MAX_REPR_LINES = 19  # a repr is read at a glance: under 20 lines
SHOWN = 5  # hypotheses a ranking's repr lists (its HTML lists all it holds)

FIELD_WORDS = {
    "sensory_level": "sensory level", "motor_level": "motor level", "neurological_level": "neurological level",
    "complete": "completeness", "ais": "impairment grade (AIS)", "zpp": "zone of partial preservation",
    "scores": "score", "uems": "upper-extremity motor score", "lems": "lower-extremity motor score",
    "light_touch": "light touch", "pinprick": "pinprick", "sensory": "sensory", "motor": "motor",
    "left": "left", "right": "right",
}
FIT_WORDS = {"good": "one lesion explains the findings", "poor": "poor fit: no single lesion explains them well",
             "normal": "normal: no lesion explains them better than a normal cord",
             "empty": "nothing entered"}


def field_words(field: str) -> str:
    """A classification field path in words: 'scores.uems' -> 'upper-extremity motor score'."""
    parts = [FIELD_WORDS.get(p, p.replace("_", " ")) for p in field.split(".")]
    if parts[0] == "score" and len(parts) > 1:
        parts = parts[1:] if parts[1].endswith("score") else [f"{parts[1]} score", *parts[2:]]
    return ", ".join(parts)


def _clip(lines: list[str]) -> str:
    if len(lines) > MAX_REPR_LINES:
        lines = [*lines[:MAX_REPR_LINES - 1], f"  ... ({len(lines) - MAX_REPR_LINES + 1} more lines)"]
    return "\n".join(lines)


# ------------------------------------------------------------------ text

def findings_counts(f) -> dict[str, int]:
    """How many items of each part of the exam were entered."""
    out = {"sensory": 0, "motor": 0, "reflex": 0, "sign": 0}
    for key in f.items:  # findings format 2: non-key muscles count as motor, tenderness and band pain as signs
        out[{"muscle": "motor", "tenderness": "sign", "band_pain": "sign"}.get(key[0], key[0])] += 1
    return out


def findings_repr(f) -> str:
    n = findings_counts(f)
    label = f"{f.label!r}, " if f.label else ""
    return (f"Findings({label}phase={f.phase!r}, {len(f.items)} items: {n['sensory']} sensory, {n['motor']} motor, "
            f"{n['reflex']} reflexes, {n['sign']} signs; .tidy() for the table)")


def hypothesis_line(h) -> str:
    """One line: rank, lesion, probability, vertebral levels to image."""
    levels = ", ".join(h.vertebral_levels) or "none (no lesion)"
    return f"{h.rank:>2}. {h.lesion.describe()}  {h.probability:.1%}  image {levels}"


def hypothesis_repr(h) -> str:
    return (f"Hypothesis({hypothesis_line(h).strip()}; explains {len(h.explains)}, conflicts {len(h.conflicts)}; "
            ".to_dict() for all fields)")


def classification_line(c) -> str:
    """The classification on one line, in words (`classify.classification_line`, the one formatter)."""
    from .classify import classification_line as line

    return line(c)


def classification_repr(c) -> str:
    from .classify import rows

    lines = ["Classification (ISNCSCI 2019 rules)", *(f"  {what}: {value}" for what, value in rows(c))]
    if c.reasons:
        lines.append(f"  not determinable: {', '.join(field_words(f) for f, _ in c.reasons)}")
    lines.append(f"  caution: {c.to_dict()['caution']}")
    return _clip(lines)


def ranking_repr(r) -> str:
    lines = [f"Ranking({len(r.hypotheses)} hypotheses, {r.examined} findings examined; fit: "
             f"{FIT_WORDS.get(r.fit, r.fit)})"]
    if r.advice and r.fit != "good":
        lines.append(f"  {r.advice}")
    lines += [f"  {hypothesis_line(h)}" for h in r.hypotheses[:SHOWN]]
    if len(r.hypotheses) > SHOWN:
        lines.append(f"  ... {len(r.hypotheses) - SHOWN} more: .table for all as a DataFrame")
    if r.next_tests:
        lines.append(f"  next test: {r.next_tests[0].why}")
    if r.classification is not None:
        lines.append(f"  ISNCSCI: {classification_line(r.classification)}")
    lines += [f"  caution: {c}" for c in r.cautions]
    return _clip(lines)


# ------------------------------------------------------------------ HTML

_STYLE = ("border-collapse:collapse;font-size:12px;text-align:left")
_CELL = "padding:2px 8px;border-bottom:1px solid #ddd;text-align:left;vertical-align:top"
_CAUTION = ("margin:6px 0;padding:4px 8px;border-left:4px solid #a3470f;background:#fdf1e7;color:#6b2e08;"
            "font-size:12px")


def _table(header: list[str], body: list[list[str]]) -> str:
    """An HTML table; every cell is escaped here."""
    head = "".join(f"<th style='{_CELL}'>{escape(h)}</th>" for h in header)
    rows = "".join("<tr>" + "".join(f"<td style='{_CELL}'>{escape(str(c))}</td>" for c in row) + "</tr>"
                   for row in body)
    return f"<table style='{_STYLE}'><thead><tr>{head}</tr></thead><tbody>{rows}</tbody></table>"


def cautions_html(cautions) -> str:
    """The cautions as one boxed block (escaped)."""
    items = "".join(f"<li>{escape(c)}</li>" for c in cautions)
    return f"<div class='cordmap-caution' style='{_CAUTION}'><b>Caution</b><ul style='margin:2px 0'>{items}</ul></div>"


def _title(text: str) -> str:
    return f"<div style='font-weight:bold;font-size:13px;margin:4px 0'>{escape(text)}</div>"


def findings_html(f) -> str:
    from .rank import sensory_summary

    n = findings_counts(f)
    body = [["label", f.label or "(none)"], ["phase", f.phase],
            ["entered", f"{n['sensory']} sensory, {n['motor']} motor, {n['reflex']} reflexes, {n['sign']} signs"],
            ["abnormal sensory", sensory_summary(f) or "none entered"]]
    from .items import abnormal

    weak = [f"{k[1]} {k[2]} {v}" for k, v in f.items.items() if k[0] == "motor" and abnormal(k, v)]
    body.append(["motor below 5", ", ".join(weak) or "none entered"])
    return (_title("cordmap findings (cordmap-findings/1)") + _table(["", ""], body)
            + cautions_html((C.DECISION_SUPPORT,)))


def hypothesis_html(h) -> str:
    body = [["lesion", h.lesion.describe()], ["probability", f"{h.probability:.1%}"],
            ["image vertebrae", ", ".join(h.vertebral_levels) or "none (no lesion)"],
            ["explains", "; ".join(h.explains) or "-"], ["conflicts", "; ".join(h.conflicts) or "-"]]
    if h.variants:
        body.append(["or (imaging tells which)", "; ".join(v.describe() for v in h.variants)])
    if h.same_exam:
        body.append(["same predicted exam", h.same_exam_text()])
    return _title(f"Hypothesis {h.rank}") + _table(["", ""], body) + cautions_html((C.DECISION_SUPPORT,))


def ranking_html(r) -> str:
    parts = [_title(f"cordmap ranking: {r.examined} findings examined; {FIT_WORDS.get(r.fit, r.fit)}")]
    if r.advice and r.fit != "good":
        parts.append(f"<p style='font-size:12px;margin:2px 0'>{escape(r.advice)}</p>")
    parts.append(cautions_html(r.cautions))
    if r.hypotheses:
        body = [[h.rank, h.lesion.describe(), f"{h.probability:.1%}", ", ".join(h.vertebral_levels) or "none",
                 len(h.explains), len(h.conflicts), "; ".join(v.describe() for v in (*h.variants, *h.same_exam))]
                for h in r.hypotheses]
        parts.append(_table(["#", "lesion", "probability", "image vertebrae", "explains", "conflicts",
                             "or (imaging tells which)"], body))
    if r.next_tests:
        parts.append(_title("Next tests"))
        parts.append(_table(["test", "why"], [[t.finding, t.why] for t in r.next_tests]))
    if r.classification is not None:
        parts.append(f"<p style='font-size:12px;margin:4px 0'><b>ISNCSCI:</b> "
                     f"{escape(classification_line(r.classification))}</p>")
    parts.append("<p style='font-size:11px;color:#666;margin:2px 0'>.table gives the hypotheses as a DataFrame</p>")
    return "<div class='cordmap-ranking'>" + "".join(parts) + "</div>"


def classification_html(c) -> str:
    from .classify import rows

    body = [list(r) for r in rows(c)]
    body += [[f"not determinable: {field_words(f)}", why] for f, why in c.reasons]
    body += [["note", n] for n in c.notes]
    return (_title("ISNCSCI classification (2019 rules)") + _table(["", ""], body)
            + cautions_html((c.to_dict()["caution"],)))
