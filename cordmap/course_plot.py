"""The course picture: levels and scores against time, the leading hypothesis as a band per exam, alarms marked.

Our own design. Three panels share one time axis:

* levels: sensory (solid) and motor (dashed) level per side, rostral up, on the classification's scale; the
  segments of the diaphragm (C5 and above) shaded; each exam's impairment grade written above it;
* scores: upper- and lower-extremity motor, light touch and pinprick, each as a share of its maximum;
* hypotheses: one block per exam with its leading hypothesis and probability, coloured by family.

Alarms are a dark line through all panels at the exam where they are seen, with a numbered tag; the numbers are
explained under the picture. Acute-phase exams (spinal shock) have a grey hatch. The time axis is log(1 + t), so the
first hours and the later weeks both stay readable; the ticks are the exams' own times. Left is blue, right orange
(the pair that survives red-green colour blindness, as in `cordmap.plotting`). Every picture carries the caution.

matplotlib is used through `cordmap.plotting`'s figure helpers only, so ``import cordmap`` loads no plotting library.
"""
from __future__ import annotations

import numpy as np

from .classify import levels
from .course import UNIT_SHORT, Course, level_index
from .course_alarms import NOTE
from .plotting import FONT, INK, _footer, _new_figure, _png

SIDE_COLOURS = {"left": "#2f5fb3", "right": "#d9751e"}
MOTOR_COLOURS = {"left": "#8fb3ea", "right": "#f3bf8a"}  # lighter, dashed, drawn over the sensory line
SCORE_STYLE = {"uems": ("#3d2b6b", "-", "UEMS"), "lems": ("#1f8a70", "-", "LEMS"),
               "light_touch": ("#8c8c8c", "--", "light touch"), "pinprick": ("#b8663a", ":", "pinprick")}
SCORE_MAX = {"uems": 50, "lems": 50, "light_touch": 112, "pinprick": 112}
FAMILY_COLOURS = {"compression": "#3fb0d9", "lateral_compression": "#7fa7d9", "complete": "#3d2b6b",
                  "hemisection": "#e3a13f", "central": "#74406a", "anterior": "#b8663a", "posterior": "#2f5fb3",
                  "posterolateral": "#5b3a6e", "conus": "#1f6f6a", "cauda_equina": "#1f8a70", "root": "#a3a3a3",
                  "anterior_horn": "#c8501e", "motor_neuron": "#8e5a9e", "normal": "#eef2f5"}
ALARM_INK = "#111111"
ALARM_FILL = "#e0b02a"
SHORT_RULE = {"level_ascent": "level up", "breathing": "breathing", "became_complete": "now complete",
              "grade_fell": "grade down", "sacral_loss": "sacral loss", "motor_fall": "power down"}


def _x(times) -> np.ndarray:
    return np.log1p(np.asarray(times, dtype=float))


def _lightness(hex_colour: str) -> float:
    r, g, b = (int(hex_colour[i:i + 2], 16) / 255 for i in (1, 3, 5))
    return 0.299 * r + 0.587 * g + 0.114 * b


def draw_course(course, fig=None, size: tuple[int, int] = (960, 680), dpi: int = 100):
    """The course picture as a matplotlib Figure. `course`: a `Course` (followed here), a `CourseReport`, or
    anything `cordmap.course.parse_course` reads."""
    from .course_report import CourseReport, follow

    report = course if isinstance(course, CourseReport) else follow(course)
    c: Course = report.course
    fig = fig if fig is not None else _new_figure(size, dpi)
    lv = levels()
    t = np.array(c.times)
    x = _x(t)
    span = max(x[-1] - x[0], 1.0)
    lo, hi = x[0] - 0.08 * span, x[-1] + 0.08 * span
    # block edges of each exam: halfway to its neighbours (in the drawn coordinate)
    mids = (x[:-1] + x[1:]) / 2
    edges = np.concatenate([[x[0] - 0.06 * span], mids, [x[-1] + 0.06 * span]])

    title = c.label or "(no label)"
    fig.text(0.015, 0.975, f"Course: {title[:110]}", ha="left", va="top", fontsize=10.5, family=FONT, color=INK,
             weight="bold")
    ax_l = fig.add_axes((0.075, 0.50, 0.74, 0.40))
    ax_s = fig.add_axes((0.075, 0.28, 0.74, 0.18), sharex=ax_l)
    ax_h = fig.add_axes((0.075, 0.17, 0.74, 0.08), sharex=ax_l)

    # levels
    idx = {(m, s): [level_index(getattr(getattr(k, m), s)) for k in report.classifications]
           for m in ("sensory_level", "motor_level") for s in ("left", "right")}
    known = [v for vals in idx.values() for v in vals if v is not None]
    top = max(min(known, default=0) - 3, 0)
    bottom = min(max(known, default=len(lv) - 1) + 3, len(lv) - 1)
    c5 = lv.index("C5")
    if top <= c5:
        ax_l.axhspan(top - 0.5, c5 + 0.5, color="#f3d9d0", zorder=0)
        ax_l.text(hi, c5 + 0.4, "diaphragm C3-C5 and above ", ha="right", va="bottom", fontsize=7, color="#8a3b1e",
                  family=FONT)
    for (m, s), vals in idx.items():
        xs = [xi for xi, v in zip(x, vals) if v is not None]
        ys = [v for v in vals if v is not None]
        off = -0.08 if s == "left" else 0.08  # two sides at one level stay visible
        sensory = m == "sensory_level"
        ax_l.plot(xs, np.array(ys) + off, color=SIDE_COLOURS[s] if sensory else MOTOR_COLOURS[s],
                  ls="-" if sensory else (0, (3, 2)), lw=2.6 if sensory else 1.6, marker="o" if sensory else "s",
                  ms=6 if sensory else 3.5, zorder=3 if sensory else 4,
                  label=f"{'sensory' if sensory else 'motor'} level {s}")
    ax_l.set_ylim(bottom + 0.5, top - 0.5)
    step = 1 if bottom - top <= 14 else 2
    ticks = list(range(top, bottom + 1, step))
    ax_l.set_yticks(ticks)
    ax_l.set_yticklabels([lv[i] for i in ticks], fontsize=7.5, family=FONT)
    ax_l.set_ylabel("level (rostral up)", fontsize=8, family=FONT)
    ax_l.grid(axis="y", color="#e6e6e6", lw=0.6)
    for xi, k in zip(x, report.classifications):
        ax_l.text(xi, top - 0.55, f"AIS {k.ais}", ha="center", va="bottom", fontsize=8, family=FONT, color=INK,
                  bbox={"boxstyle": "round,pad=0.2", "fc": "white", "ec": "#999999", "lw": 0.6}, clip_on=False)
    if ax_l.get_legend_handles_labels()[0]:
        ax_l.legend(loc="upper left", bbox_to_anchor=(1.005, 1.0), frameon=False, prop={"family": FONT, "size": 7.5})

    # scores
    for m, (col, ls, name) in SCORE_STYLE.items():
        vals = [getattr(k, m).total for k in report.classifications]
        pts = [(xi, 100 * v / SCORE_MAX[m]) for xi, v in zip(x, vals) if isinstance(v, int)]
        if pts:
            ax_s.plot(*zip(*pts), color=col, ls=ls, lw=1.8, marker="o", ms=3.5, label=name)
    ax_s.set_ylim(-5, 105)
    ax_s.set_yticks([0, 50, 100])
    ax_s.set_yticklabels(["0", "50%", "100%"], fontsize=7.5, family=FONT)
    ax_s.set_ylabel("score", fontsize=8, family=FONT)
    ax_s.grid(axis="y", color="#e6e6e6", lw=0.6)
    if ax_s.get_legend_handles_labels()[0]:
        ax_s.legend(loc="upper left", bbox_to_anchor=(1.005, 1.05), frameon=False, prop={"family": FONT, "size": 7.5})

    # hypotheses
    ax_h.set_ylim(0, 1)
    ax_h.set_yticks([])
    ax_h.set_ylabel("leads", fontsize=8, family=FONT, rotation=0, ha="right", va="center")
    for k, lead in enumerate(report.leads):
        a, b = edges[k], edges[k + 1]
        if lead is None:
            ax_h.text((a + b) / 2, 0.5, "not ranked", ha="center", va="center", fontsize=6.5, color="#777777")
            continue
        col = FAMILY_COLOURS.get(lead.family, "#bbbbbb")
        ax_h.axvspan(a + 0.004 * span, b - 0.004 * span, 0.05, 0.95, color=col, lw=0)
        side = "" if lead.side == "both" else f"{lead.side[0].upper()} "
        name = "normal cord" if lead.pattern == "normal" else f"{side}{lead.family.replace('_', ' ')} {lead.top}"
        ink = "white" if _lightness(col) < 0.55 else INK
        width_px = (b - a) / (hi - lo) * 0.74 * fig.get_size_inches()[0] * fig.dpi
        fs = 7 if width_px > 95 else 6
        text = f"{name}\n{lead.probability:.0%}" if width_px > 48 else f"{lead.probability:.0%}"
        ax_h.text((a + b) / 2, 0.5, text, ha="center", va="center", fontsize=fs, color=ink, family=FONT)

    # acute phase
    for k, e in enumerate(c.exams):
        if e.findings.phase == "acute":
            for ax in (ax_l, ax_s):
                ax.axvspan(edges[k], edges[k + 1], facecolor="none", edgecolor="#bbbbbb", hatch="///", lw=0, zorder=0)
    if any(e.findings.phase == "acute" for e in c.exams):
        ax_s.text(lo, -4, " hatched: acute phase (spinal shock)", fontsize=6.5, color="#666666", va="bottom")

    # alarms
    urgent = [a for a in report.alarms if a.severity != NOTE]
    by_exam: dict[int, list] = {}
    for a in urgent:
        by_exam.setdefault(a.exam, []).append(a)
    notes = []
    for n, (k, group) in enumerate(sorted(by_exam.items()), start=1):
        for ax in (ax_l, ax_s):
            ax.axvline(x[k], color=ALARM_INK, lw=1.1, ls=(0, (4, 2)), zorder=5)
        ax_l.plot([x[k]], [bottom + 0.1], marker="v", ms=15, color=ALARM_FILL, mec=ALARM_INK, mew=1.1, zorder=6,
                  clip_on=False)
        ax_l.annotate(f"alarm {n}", (x[k], bottom + 0.1), xytext=(9, 1), textcoords="offset points", ha="left",
                      va="center", fontsize=7.5, weight="bold", color=ALARM_INK, zorder=7, family=FONT,
                      bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.85})
        rules = ", ".join(dict.fromkeys(SHORT_RULE.get(a.rule, a.rule) for a in group))
        notes.append(f"{n} at {c.when(k)}: {rules}.")
    ax_h.set_xlim(lo, hi)
    ax_h.set_xticks(x)
    ax_h.set_xticklabels([f"{ti:g}" for ti in t], fontsize=7.5, family=FONT)
    ax_h.set_xlabel(f"{c.time_unit} since {c.since.replace('_', ' ')} (log(1 + t) scale; ticks at the exams)",
                    fontsize=8, family=FONT)
    for ax in (ax_l, ax_s):
        ax.tick_params(labelbottom=False)
    for ax in (ax_l, ax_s, ax_h):
        for sp in ("top", "right"):
            ax.spines[sp].set_visible(False)
    head = "Alarms (urgent): " if notes else "No alarm raised by the rules."
    fig.text(0.075, 0.085, head + ("   ".join(notes) if notes else ""), ha="left", va="top", fontsize=8,
             family=FONT, color=ALARM_INK if notes else "#555555", weight="bold" if notes else "normal", wrap=True)
    fig.text(0.075, 0.058, "Cautions: " + " ".join(report.cautions[1:3]), ha="left", va="top", fontsize=6.5,
             family=FONT, color="#555555", wrap=True)
    _footer(fig)
    fig.cordmap_unit = UNIT_SHORT[c.time_unit]
    return fig


def course_png(course, dpi: int = 100, size: tuple[int, int] = (960, 680)) -> bytes:
    """The course picture as PNG bytes (see `draw_course`)."""
    return _png(draw_course(course, size=size, dpi=dpi), dpi)
