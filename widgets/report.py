"""A one-page case sheet (PNG, A4 landscape at 110 dpi) in our own layout, caution first and last."""
from __future__ import annotations

import io
import textwrap

from cordmap import cautions

from . import pictures
from .style import ACCENT, INK, MUTED, RULE, WARN_BG, WARN_INK


def _png_axes(fig, rect, png: bytes, title: str):
    import matplotlib.image as mpimg

    ax = fig.add_axes(rect)
    ax.imshow(mpimg.imread(io.BytesIO(png), format="png"))
    ax.set_axis_off()
    ax.set_title(title, fontsize=9, color=INK, loc="left")
    return ax


def report_png(findings, ranking, selected: int = 0, dpi: int = 110) -> bytes:
    from matplotlib.figure import Figure
    from matplotlib.patches import Rectangle

    fig = Figure(figsize=(11.69, 8.27), dpi=dpi, facecolor="white")
    # caution band across the top
    fig.patches.append(Rectangle((0.02, 0.905), 0.96, 0.075, transform=fig.transFigure, facecolor=WARN_BG,
                                 edgecolor=WARN_INK, linewidth=1.2))
    fig.text(0.03, 0.965, "CAUTION", fontsize=10, weight="bold", color=WARN_INK, va="top")
    fig.text(0.11, 0.965, "\n".join(textwrap.wrap(cautions.BANNER, 150)), fontsize=8.5, color=WARN_INK, va="top")
    fig.text(0.02, 0.875, "cordmap case sheet", fontsize=16, weight="bold", color=ACCENT, va="top")
    label = findings.label or "unlabelled exam"
    fig.text(0.30, 0.872, f"{label[:110]}  ·  phase: {findings.phase}  ·  {len(findings.items)} items entered",
             fontsize=9, color=MUTED, va="top")

    hyps = ranking.hypotheses if ranking else ()
    y = 0.80
    fig.text(0.02, y + 0.02, "Lesion hypotheses, most likely first", fontsize=11, weight="bold", color=INK)
    verdict = {"poor": "POOR FIT", "normal": "NORMAL", "empty": "NOTHING ENTERED"}.get(ranking.fit if ranking else "")
    if verdict:
        fig.text(0.02, y - 0.01, f"{verdict}: " + "\n".join(textwrap.wrap(ranking.advice or "", 80)), fontsize=9,
                 weight="bold", color="#4b2a7b", va="top")
        y -= 0.05
    for h in hyps[:6]:
        y -= 0.045
        fig.patches.append(Rectangle((0.02, y), 0.10, 0.012, transform=fig.transFigure, facecolor=RULE))
        fig.patches.append(Rectangle((0.02, y), 0.10 * h.probability, 0.012, transform=fig.transFigure,
                                     facecolor=ACCENT))
        fig.text(0.13, y + 0.013, f"{h.rank}. {h.lesion.describe()}  {h.probability:.0%}  · image "
                 f"{', '.join(h.vertebral_levels) or '—'}", fontsize=9, color=INK, va="center", weight="bold")
        fig.text(0.13, y - 0.008, textwrap.shorten(h.summary, 95), fontsize=8, color=MUTED, va="center")

    if hyps:
        h = hyps[min(selected, len(hyps) - 1)]
        _png_axes(fig, (0.53, 0.40, 0.22, 0.42), pictures.section(h.lesion.top, h.lesion),
                  f"#{h.rank} cross-section at {h.lesion.top}")
        body = pictures.body_map(findings, pictures.predicted(h), "pinprick", h.conflict_items)
        _png_axes(fig, (0.76, 0.40, 0.22, 0.42), body,
                  "pinprick: entered vs predicted")

    yb = 0.34
    fig.text(0.02, yb, "Worth examining next", fontsize=11, weight="bold", color=INK)
    for t in (ranking.next_tests if ranking else ())[:5]:
        yb -= 0.035
        fig.text(0.03, yb, textwrap.shorten(f"• {t.finding}: {t.why}", 80), fontsize=9, color=INK)
    c = ranking.classification if ranking else None
    fig.text(0.53, 0.34, "Classification of the entered exam", fontsize=11, weight="bold", color=INK)
    if c is not None:
        d = c.to_dict()
        rows = [f"AIS {d['ais']} · neurological level {d['neurological_level']} · complete: {d['complete']}",
                f"sensory level L {d['sensory_level']['left']} / R {d['sensory_level']['right']} · "
                f"motor level L {d['motor_level']['left']} / R {d['motor_level']['right']}"]
        sc = d.get("scores", {})
        if sc:
            rows.append(" · ".join(f"{k.replace('_', ' ')} {v['total']}" for k, v in sc.items()))
    else:
        rows = ["not available"]
    for i, line in enumerate(rows):
        fig.text(0.53, 0.30 - 0.035 * i, line, fontsize=9, color=INK)
    extra = [x for x in (ranking.cautions if ranking else ()) if x not in cautions.GENERAL]
    for i, line in enumerate(extra[:3]):
        fig.text(0.53, 0.18 - 0.03 * i, textwrap.shorten("• " + line, 95), fontsize=8.5, color=WARN_INK)
    # caution again at the foot
    fig.patches.append(Rectangle((0.02, 0.02), 0.96, 0.055, transform=fig.transFigure, facecolor="white",
                                 edgecolor=WARN_INK, linewidth=1))
    fig.text(0.03, 0.062, "\n".join(textwrap.wrap(" ".join(cautions.GENERAL), 165)), fontsize=8, color=WARN_INK,
             va="top")
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi)
    return buf.getvalue()
