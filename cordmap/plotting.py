"""Pictures: one segment's cross-section (with a lesion) and, in `body_map.py`, a body map of entered vs predicted
findings; the palette and the figure helpers both use.

Only this module touches matplotlib, and only inside functions, so ``import cordmap`` stays light. Figures are
built as ``matplotlib.figure.Figure`` on an explicit Agg canvas: no pyplot, no global state, no display.

Public API
----------
* ``draw_section(seg, lesion=None, ax=None, lamination=True, labels=True) -> Figure``
* ``section_png(seg, lesion=None, dpi=100, size=(420, 420)) -> bytes``  (size in pixels)
* ``draw_body_map(entered, predicted, modality="pinprick", conflicts=()) -> Figure``: per side a band of the
  dermatomes C2 .. S4-5 (entered above predicted) and the key muscles; the ranking's conflicts ringed
* ``body_map_png(entered, predicted, modality="pinprick", dpi=100, size=(540, 230), conflicts=()) -> bytes``

What counts as a conflict is decided once, by the ranking (`cordmap.hypotheses.agreement`); the picture rings
the items it is given.

Every figure carries the caution ``cordmap.cautions.DECISION_SUPPORT`` as a footer.

Colours
-------
The palette is our own. Tract identity is carried by hue, lamination by lightness. The hues were picked by hand
from the two colour families that survive red-green colour blindness (blue/violet versus yellow/orange) plus
neutral greys for gray matter, then checked: each colour was passed through a simulation of deuteranopia
(the Machado, Oliveira & Fernandes 2009 matrix for severity 1.0, applied in linear RGB; matrix from memory) and
the pairwise CIELAB distance (CIE76) of the simulated colours was required to stay >= 15 for the main classes.
``tests/test_plotting.py`` repeats that check, so a palette edit that breaks it fails. Exam grades use one
lightness-ordered ramp (pale = normal, amber = impaired, dark violet = absent), readable without hue at all.
"""
from __future__ import annotations

import io
from functools import cache

import numpy as np

from .anatomy import anatomy
from .cautions import DECISION_SUPPORT
from .errors import CordmapError, bad_value
from .model import EXTENT, STRUCTURES, S, Section, section

# ---------------------------------------------------------------- palette (ours, see module doc)

TRACT_COLOURS = {  # base colours of the main classes, checked for deuteranopia (see module doc)
    "gracilis": "#2f5fb3",  # blue
    "cuneatus": "#3fb0d9",  # sky
    "lateral_corticospinal": "#c8501e",  # red-orange
    "lateral_spinothalamic": "#e0b02a",  # gold
    "dorsal_spinocerebellar": "#8e5a9e",  # violet
    "gray": "#8c8c8c",
    "white": "#ecebe6",
}
STRUCTURE_COLOURS = {
    "outside": "#ffffff",
    "gracilis": TRACT_COLOURS["gracilis"],
    "cuneatus": TRACT_COLOURS["cuneatus"],
    "lateral_corticospinal": TRACT_COLOURS["lateral_corticospinal"],
    "anterior_corticospinal": "#e39570",
    "lateral_spinothalamic": TRACT_COLOURS["lateral_spinothalamic"],
    "anterior_spinothalamic": "#eed68c",
    "dorsal_spinocerebellar": TRACT_COLOURS["dorsal_spinocerebellar"],
    "ventral_spinocerebellar": "#bd9ac8",
    "descending_sympathetic": "#b39a74",
    "other_white": TRACT_COLOURS["white"],
    "dorsal_horn": "#a3a3a3",
    "intermediate_gray": "#b8b8b8",
    "ventral_horn": "#7c7c7c",
    "anterior_commissure": "#adadad",
    "entry_zone": "#cfcfcf",
    "intermediolateral": "#1f6f6a",
    "sacral_parasympathetic": "#1f6f6a",
    "clarke": "#5b3a6e",
    "central_canal": "#ffffff",
    "dorsal_root": "#bccde2",
    "ventral_root": "#eac6b2",
}
LAMINATED = ("gracilis", "cuneatus", "lateral_spinothalamic", "lateral_corticospinal")
# short labels of our own for the main structures, drawn on the patient's right half
SHORT_LABELS = {
    "gracilis": "gracile",
    "cuneatus": "cuneate",
    "dorsal_spinocerebellar": "spinocereb.",
    "lateral_corticospinal": "CST",
    "lateral_spinothalamic": "STT",
    "anterior_corticospinal": "ant. CST",
    "dorsal_horn": "dorsal horn",
    "ventral_horn": "ventral horn",
    "dorsal_root": "dorsal root",
    "ventral_root": "ventral root",
}
GRADE_COLOURS = {2: "#eef2f5", 1: "#e3a13f", 0: "#3d2b6b"}  # normal, impaired, absent
GRADE_NAMES = {2: "normal", 1: "impaired", 0: "absent"}
MOTOR_COLOURS = {5: "#eef2f5", 4: "#f2d69c", 3: "#e3a13f", 2: "#b8663a", 1: "#74406a", 0: "#3d2b6b"}
NOT_EXAMINED = "#ffffff"
INK = "#222222"
LESION_COLOUR = "#111111"
FONT = "DejaVu Sans"


def _rgb(hex_colour: str) -> np.ndarray:
    h = hex_colour.lstrip("#")
    return np.array([int(h[i:i + 2], 16) / 255 for i in (0, 2, 4)])


def _shade(rgb: np.ndarray, t: float) -> np.ndarray:
    """Lamination shade: t = 0 (most rostral body segment) darker than the base, t = 1 (most caudal) lighter."""
    w = -0.32 + 0.92 * float(np.clip(t, 0, 1))
    return rgb * (1 + w) if w < 0 else rgb + (1 - rgb) * w


def _body_t(j) -> np.ndarray:
    return (np.asarray(j, dtype=float) - 1) / 28  # body index 1 (C2) .. 29 (S5)


@cache
def _lut() -> np.ndarray:
    """RGB per (structure id, body index + 1)."""
    lut = np.zeros((len(STRUCTURES), 32, 3))
    for sid, name in enumerate(STRUCTURES):
        base = _rgb(STRUCTURE_COLOURS[name])
        lut[sid, :] = base
        if name in LAMINATED:
            for j in range(1, 30):
                lut[sid, j + 1] = _shade(base, _body_t(j))
    return lut


def section_rgba(sec: Section, upsample: int = 2) -> np.ndarray:
    """The coloured raster of a section, (n*u, n*u, 4) floats; transparent outside the cord and roots.

    Borders between structures are darkened by one (upsampled) pixel so the parts read at small size.
    """
    if sec is section(sec.segment) and upsample == 2:
        return _default_rgba(sec.segment)
    return _rgba(sec, upsample)


@cache
def _default_rgba(seg: str) -> np.ndarray:
    out = _rgba(section(seg), 2)
    out.flags.writeable = False
    return out


def _rgba(sec: Section, upsample: int) -> np.ndarray:
    st = np.repeat(np.repeat(sec.structure, upsample, 0), upsample, 1)
    body = np.repeat(np.repeat(sec.body, upsample, 0), upsample, 1)
    rgb = _lut()[st, np.clip(body + 1, 0, 31)]
    edge = np.zeros(st.shape, dtype=bool)
    edge[:, 1:] |= st[:, 1:] != st[:, :-1]
    edge[1:, :] |= st[1:, :] != st[:-1, :]
    edge &= st > 0
    rgb[edge] *= 0.72
    alpha = (st > 0).astype(float)
    return np.concatenate([rgb, alpha[..., None]], axis=2).astype(np.float32)


# ---------------------------------------------------------------- geometry helpers

def _mm(seg: str) -> tuple[float, float]:
    """(transverse, anteroposterior) diameter in mm of one segment."""
    row = anatomy().segment_table.set_index("segment").loc[seg]
    return float(row["transverse_mm"]), float(row["ap_mm"])


def _segment(seg: str) -> str:
    a = anatomy()
    if seg not in a.segments:
        raise bad_value("segment", seg, a.segments, "segment")
    return seg


def lesion_mask(seg: str, lesion, sec: Section | None = None) -> np.ndarray | None:
    """The lesion's mask on one segment, or None when the segment lies outside the lesion's extent."""
    from .lesions import CUSTOM, draw_mask

    a = anatomy()
    s = a.index(_segment(seg))
    if lesion is None or not lesion.top_index <= s <= lesion.bottom_index:
        return None
    sec = sec or section(seg)
    if lesion.pattern == CUSTOM:
        m = np.asarray(lesion.mask, dtype=bool)
        m = m[s] if m.ndim == 3 else m
        if m.shape != sec.x.shape:
            raise CordmapError(f"mask: shape {m.shape} does not match the section grid {sec.x.shape}")
        return m
    return np.asarray(draw_mask(lesion.pattern, lesion.side, lesion.all_params(), sec), dtype=bool)


def lesion_title(lesion) -> str:
    """e.g. 'left hemisection T6' or 'central C4-C6 (size 0.4)'; the same words as Lesion.describe()."""
    return lesion.describe()


def _mask_path(x: np.ndarray, y: np.ndarray, mask: np.ndarray):
    """Smooth outline of a boolean mask as a matplotlib Path (filled region, holes kept)."""
    import contourpy
    from matplotlib.path import Path

    z = np.pad(mask.astype(float), 1)  # close regions that touch the raster edge
    xs = np.pad(x[0], 1, mode="linear_ramp", end_values=(2 * x[0, 0] - x[0, 1], 2 * x[0, -1] - x[0, -2]))
    ys = np.pad(y[:, 0], 1, mode="linear_ramp", end_values=(2 * y[0, 0] - y[1, 0], 2 * y[-1, 0] - y[-2, 0]))
    gen = contourpy.contour_generator(xs, ys, z, fill_type="OuterCode")
    points, codes = gen.filled(0.5, 2.0)
    if not points:
        return None
    return Path(np.concatenate(points), np.concatenate(codes))


# ---------------------------------------------------------------- figure plumbing

def _new_figure(size_px=(420, 420), dpi=100):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    w, h = size_px
    if w < 120 or h < 120:
        raise CordmapError(f"size: {size_px!r} is too small to read; give at least 120 x 120 pixels")
    fig = Figure(figsize=(w / dpi, h / dpi), dpi=dpi, facecolor="white")
    FigureCanvasAgg(fig)
    return fig


def _footer(fig) -> None:
    """The caution every picture carries (added once per figure)."""
    if getattr(fig, "_cordmap_caution", False):
        return
    fig.text(0.5, 0.008, DECISION_SUPPORT, ha="center", va="bottom", fontsize=5.6, color="#555555",
             family=FONT, style="italic", wrap=True)
    fig._cordmap_caution = True


def _png(fig, dpi) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi, facecolor="white", pil_kwargs={"compress_level": 1})
    return buf.getvalue()


def _scale(fig) -> float:
    """Font scale: 1 at 420 px square, a little larger on a bigger canvas."""
    w, h = fig.get_size_inches() * fig.dpi
    return float(np.clip(min(w, h) / 420, 0.8, 1.6))


# ---------------------------------------------------------------- cross-section

SECTION_BOX = (0.03, 0.25, 0.66, 0.62)  # main axes in figure fraction when cordmap lays out the figure
_HALF_W, _HALF_H = 1.13, 1.36  # normalised half-width / half-height shown (cord, roots, orientation marks)


def draw_section(seg: str, lesion=None, ax=None, lamination: bool = True, labels: bool = True):
    """The cross-section of one segment, in mm, with an optional lesion overlay. Returns the Figure.

    Patient's left is on the viewer's left and dorsal is up (marked on the picture). Laminated tracts are shaded
    by the body segment whose fibres run there: darker = more rostral, lighter = more caudal. With ``ax`` the
    drawing goes into that axes (labels and the lamination legend just right of and below it).
    """
    from matplotlib.patches import Ellipse, PathPatch

    seg = _segment(seg)
    sec = section(seg)
    tw, ap = _mm(seg)
    sx, sy = tw / 2, ap / 2
    if ax is None:
        fig = _new_figure()
        ax = fig.add_axes(SECTION_BOX)
    fig = ax.figure
    k = _scale(fig)
    ax.set_axis_off()
    # limits that fill the axes box at equal mm scale (set by hand: no aspect adjustment at draw time)
    box = ax.get_position()
    fw, fh = fig.get_size_inches()
    bw, bh = box.width * fw, box.height * fh
    s = min(bw / (2 * _HALF_W * sx), bh / (2 * _HALF_H * sy))
    ax.set_xlim(-bw / s / 2, bw / s / 2)
    ax.set_ylim(-bh / s / 2, bh / s / 2)
    ext = (-EXTENT * sx, EXTENT * sx, -EXTENT * sy, EXTENT * sy)
    ax.imshow(section_rgba(sec), extent=ext, origin="upper", interpolation="nearest", zorder=1, aspect="auto")
    ax.add_artist(Ellipse((0, 0), tw, ap, fill=False, lw=1.3 * k, ec=INK, zorder=3))

    mask = lesion_mask(seg, lesion, sec)
    if mask is not None and mask.any():
        path = _mask_path(sec.x * sx, sec.y * sy, mask)
        if path is not None:
            ax.add_artist(PathPatch(path, fc=(0.07, 0.07, 0.07, 0.28), ec=(0.07, 0.07, 0.07, 0.55), lw=0,
                                   hatch="///", zorder=4))
            ax.add_artist(PathPatch(path, fill=False, ec=LESION_COLOUR, lw=1.7 * k, zorder=5))

    # orientation
    txt = dict(family=FONT, color=INK, zorder=6)
    ax.text(0, 1.27 * sy, "dorsal", ha="center", va="bottom", fontsize=7 * k, **txt)
    ax.text(0, -1.09 * sy, "ventral", ha="center", va="top", fontsize=7 * k, **txt)
    halo = dict(boxstyle="round,pad=0.12", fc="white", ec="none")
    ax.text(-1.03 * sx, 0, "L", ha="right", va="center", fontsize=10 * k, weight="bold", bbox=halo, **txt)
    txt["zorder"] = 8
    ax.text(1.03 * sx, 0, "R", ha="left", va="center", fontsize=10 * k, weight="bold", bbox=halo, **txt)
    bar = 1.0 if tw < 9.5 else 2.0
    x0, y0 = -1.05 * sx, -1.22 * sy
    ax.plot([x0, x0 + bar], [y0, y0], color=INK, lw=2 * k, solid_capstyle="butt", zorder=6)
    ax.text(x0 + bar / 2, y0 + 0.03 * ap, f"{bar:g} mm", ha="center", va="bottom", fontsize=6 * k, **txt)

    if labels:
        _structure_labels(ax, sec, sx, sy, k)
    if lamination:
        _lamination_legend(fig, box, sec, k)

    title = f"{seg} cross-section" + (f" \u2014 {lesion_title(lesion)}" if lesion is not None else "")
    if lesion is None:
        sub = f"{tw:g} \u00d7 {ap:g} mm (transverse \u00d7 AP); no lesion drawn"
    elif mask is None:
        sub = f"{seg} lies outside the lesion's extent ({lesion.top}-{lesion.bottom}): no lesion at this level"
    else:
        sub = f"{tw:g} \u00d7 {ap:g} mm; hatched = lesion at this level"
    fit = min(1.0, 44 / max(len(title), 1))  # long lesion titles shrink rather than run off the picture
    fig.text(box.x0 + 0.01, min(box.y1 + 0.085, 0.985), title, ha="left", va="top", fontsize=8.6 * k * fit,
             weight="bold", family=FONT, color=INK)
    fig.text(box.x0 + 0.01, min(box.y1 + 0.04, 0.94), sub, ha="left", va="top", fontsize=6.6 * k,
             color="#444444", family=FONT)
    _footer(fig)
    return fig


def _structure_labels(ax, sec: Section, sx: float, sy: float, k: float) -> None:
    """Short labels on the patient's right half, with leader lines to a column right of the drawing."""
    spots = []
    right = sec.side == 1
    for name, label in SHORT_LABELS.items():
        sel = right & (sec.structure == S[name])
        if sel.sum() < 4:
            continue
        px, py = sec.x[sel], sec.y[sel]
        # the pixel of the structure nearest its centroid (a centroid can fall outside a curved tract)
        cx, cy = px.mean(), py.mean()
        i = int(np.argmin((px - cx) ** 2 + (py - cy) ** 2))
        spots.append((py[i] * sy, px[i] * sx, label))
    if not spots:
        return
    spots.sort(reverse=True)  # dorsal first
    n = len(spots)
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    ys = np.array([yy for yy, _, _ in spots])
    gap = min(0.1, 0.96 / max(n - 1, 1)) * (y1 - y0)
    for _ in range(60):  # spread labels apart while keeping each near its structure's height
        for j in range(1, n):
            if ys[j - 1] - ys[j] < gap:
                mid = (ys[j - 1] + ys[j]) / 2
                ys[j - 1], ys[j] = mid + gap / 2, mid - gap / 2
        ys = np.clip(ys, y0 + 0.02 * (y1 - y0), y1 - 0.02 * (y1 - y0))
    tx = x1 + 0.02 * (x1 - x0)
    lx, ly = [], []
    for (yy, xx, label), ty in zip(spots, ys):
        ax.text(tx, ty, label, ha="left", va="center", fontsize=6.6 * k, family=FONT, color=INK, clip_on=False)
        lx += [xx, tx - 0.008 * (x1 - x0), np.nan]
        ly += [yy, ty, np.nan]
    ax.plot(lx, ly, lw=0.55 * k, color="#333333", zorder=7, clip_on=False)
    ax.plot([xx for _, xx, _ in spots], [yy for yy, _, _ in spots], "o", ms=2.0 * k, color=INK, zorder=7,
            linestyle="none")


def _lamination_legend(fig, box, sec: Section, k: float) -> None:
    """Stacked bars below the drawing: which body segment's fibres each laminated tract carries at this level."""
    from matplotlib.collections import PatchCollection
    from matplotlib.patches import Rectangle

    a = anatomy()
    bodies = np.arange(1, 30)  # C2..S5
    s = sec.index
    rows = [
        ("dorsal col.", lambda j: "cuneatus" if j <= a.index("T6") else "gracilis", bodies >= s),
        ("CST", lambda j: "lateral_corticospinal", bodies >= s),
        ("STT", lambda j: "lateral_spinothalamic", bodies > s),
    ]
    white = _rgb(STRUCTURE_COLOURS["other_white"])
    left, top = box.x0 + 0.13, box.y0 - 0.035
    width, h = 0.5, 0.026
    cell = width / len(bodies)
    rects, colours = [], []
    for r, (name, tract, present) in enumerate(rows):
        y = top - (r + 1) * (h + 0.006)
        for c, (j, ok) in enumerate(zip(bodies, present)):
            rects.append(Rectangle((left + c * cell, y), cell, h))
            colours.append(_shade(_rgb(STRUCTURE_COLOURS[tract(j)]), _body_t(j)) if ok else white)
        fig.text(left - 0.01, y + h / 2, name, ha="right", va="center", fontsize=6 * k, family=FONT, color=INK)
    fig.add_artist(PatchCollection(rects, facecolors=colours, edgecolors="none", transform=fig.transFigure))
    y = top - 3 * (h + 0.006)
    fig.add_artist(Rectangle((left, y), width, top - y - 0.006, fill=False, lw=0.5, ec="#777777",
                             transform=fig.transFigure))
    for name in ("C2", "T1", "L1", "S1"):
        fig.text(left + (a.index(name) - 1) * cell, y - 0.004, name, ha="left", va="top", fontsize=5.4 * k,
                 family=FONT, color="#444444")
    fig.text(left + width + 0.015, top - 0.003, "fibres by body\nsegment: dark =\nrostral, light =\ncaudal, "
             "blank =\nnone here", ha="left", va="top", fontsize=5.4 * k, family=FONT, color="#444444",
             linespacing=1.1)


def section_png(seg: str, lesion=None, dpi: int = 100, size: tuple[int, int] = (420, 420)) -> bytes:
    """PNG bytes of `draw_section` at `size` pixels (width, height)."""
    fig = _new_figure(size, dpi)
    x0, y0, w, h = SECTION_BOX
    lift = 0.0 if size[0] >= 360 else 14 / size[1]  # the caution wraps to two lines on a narrow picture: room for it
    ax = fig.add_axes((x0, y0 + lift, w, h - lift))
    draw_section(seg, lesion, ax=ax)
    return _png(fig, dpi)


def __getattr__(name: str):
    """`draw_body_map` and `body_map_png` live in `body_map.py` (drawn with this module's palette and figure
    helpers) and are found here too."""
    if name in ("draw_body_map", "body_map_png"):
        from . import body_map

        return getattr(body_map, name)
    raise AttributeError(f"module 'cordmap.plotting' has no attribute {name!r}")
