"""The body picture: per side a band of the dermatomes C2 .. S4-5 (entered above predicted), the key muscles under
their segments, the ranking's conflicts ringed. Drawn with `plotting`'s palette and figure helpers (matplotlib
only inside functions); `plotting` re-exports `draw_body_map` and `body_map_png`.

What counts as a conflict is decided once, by the ranking (`cordmap.hypotheses.agreement`); the picture rings the
items it is given.
"""
from __future__ import annotations

from .anatomy import MODALITIES, SIDES, anatomy
from .errors import bad_value
from .plotting import FONT, GRADE_COLOURS, GRADE_NAMES, INK, MOTOR_COLOURS, NOT_EXAMINED, _footer, _new_figure, _png


def _modality(modality: str) -> str:
    if modality not in MODALITIES:
        raise bad_value("modality", modality, MODALITIES, "modality")
    return modality


def _examined(v) -> bool:
    return v is not None and v != "NT"


def _conflict_keys(conflicts) -> set:
    """Item keys from `conflicts`: keys, or (key, entered, predicted) triples (`Hypothesis.conflict_items`)."""
    return {c[0] if c and isinstance(c[0], tuple) else tuple(c) for c in conflicts or ()}


# Layout in pixels of the figure (x right, y down): a label column, then the 28 dermatomes C2 .. S4-5 left to right
# with a small gap where arm, trunk, leg and sacral dermatomes meet (the order of the app's entry grid). Per side a
# band of four rows: the sensation entered, the sensation predicted, the key muscles entered and predicted (each
# muscle under the column of its segment); the dermatome names run between the two bands.
_BANDS = {"left": 30, "right": 106}  # top of each side's band (its name above it)
_ROW_Y = (0, 11, 24, 35)  # sensation E, P; muscle E, P (offsets in the band)
_ROW_H = 10
_ROW_NAMES = ("entered", "predicted", "muscles: entered", "predicted")
_NAMES_Y = 86  # baseline of the dermatome names
_GAP_BEFORE = ("T1", "L1", "S1")
_LEFT_PX = 78  # the label column


def _columns(width: float) -> dict[str, tuple[float, float]]:
    """x and width of each dermatome's column."""
    derms = anatomy().dermatomes
    gap = 4.0
    w = (width - _LEFT_PX - 8 - gap * len(_GAP_BEFORE)) / len(derms)
    out, x = {}, float(_LEFT_PX)
    for d in derms:
        if d in _GAP_BEFORE:
            x += gap
        out[d] = (x, w)
        x += w
    return out


def draw_body_map(entered=None, predicted=None, modality: str = "pinprick", fig=None, conflicts=()):
    """The body picture: per side one band of the dermatomes C2 .. S4-5, the `modality` grade entered above the one
    predicted, and the key muscles' grades under their segments (entered, predicted). The items of `conflicts` (the
    ranking's: `Hypothesis.conflict_items`, or bare item keys) are ringed. Returns the Figure."""
    from matplotlib.collections import PatchCollection
    from matplotlib.patches import Rectangle

    modality = _modality(modality)
    a = anatomy()
    fig = fig or _new_figure((540, 230))
    W, H = fig.get_size_inches() * 100  # the layout is in pixels at 100 dpi (sharper at a higher dpi)
    pt = 1.0
    ax = fig.add_axes([0, 0, 1, 1])
    ax.set_axis_off()
    ax.set_xlim(0, W)
    ax.set_ylim(H, 0)
    cols = _columns(W)
    marked = _conflict_keys(conflicts)
    sources = (entered, predicted)
    faces, boxes, blanks, digits, rings = [], [], [], [], []
    for side in SIDES:
        top = _BANDS[side]
        for r, (kind, src) in enumerate((("sensory", 0), ("sensory", 1), ("motor", 0), ("motor", 1))):
            y = top + _ROW_Y[r]
            for d, (x, w) in cols.items():
                if kind == "motor" and d not in a.key_myotomes:
                    continue
                key = ("sensory", modality, side, d) if kind == "sensory" else ("motor", side, d)
                f = sources[src]
                v = None if f is None else f.get(key)
                rect = Rectangle((x + 0.5, y), w - 1, _ROW_H)
                if not _examined(v):
                    blanks.append(rect)
                else:
                    boxes.append(rect)
                    faces.append(GRADE_COLOURS[v] if kind == "sensory" else MOTOR_COLOURS[v])
                if kind == "motor":
                    text = str(v) if _examined(v) else "NT" if v == "NT" else ""
                    digits.append((x + w / 2, y + _ROW_H / 2, text, "white" if _examined(v) and v <= 2 else INK))
                if src == 0 and key in marked:
                    rings.append(Rectangle((x - 0.5, y - 1.5), w + 1, 2 * _ROW_H + 4))
        ax.text(3, top - 3, f"Patient's {side}", ha="left", va="bottom", fontsize=7 * pt, weight="bold",
                family=FONT, color=INK)
        for r, name in enumerate(_ROW_NAMES):
            ax.text(_LEFT_PX - 3, top + _ROW_Y[r] + _ROW_H / 2, name, ha="right",
                    va="center", fontsize=5.8 * pt, family=FONT, color="#444444")
    ax.add_collection(PatchCollection(boxes, facecolors=faces, edgecolors="#9a9a9a", linewidths=0.4), autolim=False)
    ax.add_collection(PatchCollection(blanks, facecolors=NOT_EXAMINED, edgecolors="#c4c4c4", linewidths=0.4,
                                      hatch="////"), autolim=False)
    for x, y, text, colour in digits:
        ax.text(x, y + 0.5, text, ha="center", va="center", fontsize=(4.6 if text == "NT" else 5.6) * pt,
                family=FONT, color=colour)
    marks = PatchCollection(rings, facecolors="none", edgecolors=INK, linewidths=1.6, zorder=3)
    marks.set_gid("conflicts")
    ax.add_collection(marks, autolim=False)
    for d, (x, w) in cols.items():
        ax.text(x + w / 2, _NAMES_Y, d, ha="center", va="baseline", fontsize=(4.6 if len(d) > 2 else 5.8) * pt,
                family=FONT, color=INK)
    # title and legend (the legend sits above the caution line, never on it)
    mod = modality.replace("_", " ")
    n = len(rings)
    fig.text(4 / W, 1 - 3 / H, f"{mod.capitalize()} and key muscles: entered against predicted", ha="left", va="top",
             fontsize=7.4 * pt, weight="bold", family=FONT, color=INK)
    _grade_legend(ax, 160 * H / 230, n)
    _footer(fig)
    return fig


def _grade_legend(ax, y: float, n_marked: int) -> None:
    """Two lines of keys at pixel row `y`: the sensation grades and the ringed conflicts; the muscle grades."""
    from matplotlib.collections import PatchCollection
    from matplotlib.patches import Rectangle

    pt = 1.0
    rects, faces = [], []
    x = 6.0
    for g in (2, 1, 0, None):
        rects.append(Rectangle((x, y), 12, 9))
        faces.append(GRADE_COLOURS[g] if g is not None else NOT_EXAMINED)
        name = GRADE_NAMES[g] if g is not None else "not examined"
        ax.text(x + 15, y + 5, name, ha="left", va="center", fontsize=6 * pt, family=FONT, color=INK)
        x += 20 + 5.2 * len(name)
    rects.append(Rectangle((x, y - 1), 24, 11))
    faces.append("none")
    ax.text(x + 28, y + 5, f"ringed: conflicts with the exam ({n_marked})", ha="left", va="center",
            fontsize=6 * pt, family=FONT, color=INK)
    y2 = y + 15
    ax.text(6, y2 + 5, "muscle grade (MRC)", ha="left", va="center", fontsize=6 * pt, family=FONT, color=INK)
    for g in range(6):
        x = 96 + g * 15
        rects.append(Rectangle((x, y2), 13, 10))
        faces.append(MOTOR_COLOURS[g])
        ax.text(x + 6.5, y2 + 5.5, str(g), ha="center", va="center", fontsize=5.6 * pt, family=FONT,
                color="white" if g <= 2 else INK)
    edges = ["#9a9a9a"] * (len(rects))
    edges[3], edges[4] = "#c4c4c4", INK
    widths = [0.4] * len(rects)
    widths[4] = 1.6
    ax.add_collection(PatchCollection(rects, facecolors=faces, edgecolors=edges, linewidths=widths), autolim=False)
    ax.add_collection(PatchCollection([Rectangle(rects[3].get_xy(), 12, 9)], facecolors=NOT_EXAMINED,
                                      edgecolors="#c4c4c4", linewidths=0.4, hatch="////"), autolim=False)


def body_map_png(entered=None, predicted=None, modality: str = "pinprick", dpi: int = 100,
                 size: tuple[int, int] = (540, 230), conflicts=()) -> bytes:
    """PNG bytes of `draw_body_map` at `size` pixels (width, height)."""
    fig = _new_figure(size, dpi)
    draw_body_map(entered, predicted, modality, fig=fig, conflicts=conflicts)
    return _png(fig, dpi)
