"""Tests of cordmap.plotting: PNG output, lesion overlay, body-map disagreements, lazy matplotlib import."""
from __future__ import annotations

import io
import itertools
import subprocess
import sys

import numpy as np
import pytest

from cordmap import plotting as P
from cordmap.cautions import DECISION_SUPPORT
from cordmap.errors import CordmapError
from cordmap.findings import Findings
from cordmap.lesions import Lesion, lesion_masks
from cordmap.model import sections
from cordmap.simulate import simulate

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def _decode(png: bytes) -> np.ndarray:
    from matplotlib.image import imread

    return imread(io.BytesIO(png), format="png")


def _box_pixels(img: np.ndarray) -> tuple[slice, slice]:
    """Rows and columns of the drawing box (SECTION_BOX) in a decoded image (row 0 at the top)."""
    h, w = img.shape[:2]
    x0, y0, bw, bh = P.SECTION_BOX
    return slice(int(h * (1 - y0 - bh)) + 1, int(h * (1 - y0)) - 1), slice(int(w * x0) + 1, int(w * (x0 + bw)) - 1)


@pytest.mark.parametrize("size", [(420, 420), (300, 360)])
def test_section_png_is_png_of_the_asked_size(size):
    png = P.section_png("C5", size=size)
    assert png[:8] == PNG_SIGNATURE
    img = _decode(png)
    assert img.shape[:2] == (size[1], size[0])
    assert img[..., :3].std() > 0.05  # something is drawn


def test_body_map_png_is_png_of_the_asked_size():
    png = P.body_map_png(simulate(Lesion("hemisection", "left", "T6")), None, size=(420, 500))
    assert png[:8] == PNG_SIGNATURE
    assert _decode(png).shape[:2] == (500, 420)


def test_lesion_changes_pixels_on_the_damaged_side():
    plain = _decode(P.section_png("C5"))
    hemi = _decode(P.section_png("C5", Lesion("hemisection", "left", "C5")))
    rows, cols = _box_pixels(plain)
    diff = np.abs(plain[rows, cols, :3] - hemi[rows, cols, :3]).sum(axis=2)
    assert diff.sum() > 100
    # patient's left is drawn on the viewer's left: a left hemisection darkens the left half of the drawing
    mid = diff.shape[1] // 2
    assert diff[:, :mid].sum() > 5 * diff[:, mid:].sum()


def test_segment_outside_the_extent_draws_no_overlay():
    lesion = Lesion("hemisection", "left", "T8")
    assert P.lesion_mask("T6", lesion) is None
    plain = _decode(P.section_png("T6"))
    outside = _decode(P.section_png("T6", lesion))
    rows, cols = _box_pixels(plain)
    assert np.array_equal(plain[rows, cols], outside[rows, cols])
    fig = P.draw_section("T6", lesion)
    assert any("outside the lesion's extent" in t.get_text() for t in fig.texts)
    # the subtitle differs, so the whole images do differ
    assert not np.array_equal(plain, outside)


def test_lesion_mask_is_the_lesion_module_mask():
    lesion = Lesion("central", "both", "T7", "T9", params={"size": 0.4})
    masks = lesion_masks(lesion, sections())
    for seg, idx in (("T7", 13), ("T8", 14), ("T9", 15)):
        assert np.array_equal(P.lesion_mask(seg, lesion), masks[idx])
    assert P.lesion_mask("T10", lesion) is None


def test_titles_and_caution_footer():
    fig = P.draw_section("T6", Lesion("hemisection", "left", "T6"))
    texts = [t.get_text() for t in fig.texts]
    assert "T6 cross-section \u2014 left half of the cord (Brown-Séquard) at T6" in texts
    assert DECISION_SUPPORT in texts
    body = P.draw_body_map(None, None)
    assert DECISION_SUPPORT in [t.get_text() for t in body.texts]


def test_draw_section_into_a_callers_axes():
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(5, 5))
    FigureCanvasAgg(fig)
    ax = fig.add_axes(P.SECTION_BOX)
    assert P.draw_section("L3", ax=ax, lamination=False, labels=False) is fig
    assert DECISION_SUPPORT in [t.get_text() for t in fig.texts]


def _predicted():
    return simulate(Lesion("hemisection", "left", "T6"))


def test_body_picture_rings_exactly_the_conflicts_it_is_given():
    """What counts as a conflict is the ranking's decision (`hypotheses.agreement`); the picture rings those items
    of the sensation it shows and of the key muscles, given as keys or as (key, entered, predicted) triples."""
    pred = _predicted()
    entered = pred.replace({("sensory", "pinprick", "left", "C4"): 0, ("motor", "right", "C7"): 1})
    conflicts = ((("sensory", "pinprick", "left", "C4"), 0, 2), (("motor", "right", "C7"), 1, 5),
                 (("sensory", "vibration", "left", "C4"), 0, 2))  # another sensation: not in this picture
    for given, expected in ((conflicts, 2), ([c[0] for c in conflicts], 2), ((), 0)):
        fig = P.draw_body_map(entered, pred, conflicts=given)
        marks = [c for ax in fig.axes for c in ax.collections if c.get_gid() == "conflicts"]
        assert len(marks) == 1 and len(marks[0].get_paths()) == expected
    # and the rings show: the picture with them differs from the one without
    assert not np.array_equal(_decode(P.body_map_png(entered, pred, conflicts=conflicts)),
                              _decode(P.body_map_png(entered, pred)))


def test_body_picture_legend_is_clear_of_the_caution():
    """Every text of the body picture lies above the caution line at the foot (none drawn over it)."""
    fig = P.draw_body_map(_predicted(), _predicted())
    fig.canvas.draw()
    r = fig.canvas.get_renderer()
    caution = next(t for t in fig.texts if t.get_text() == DECISION_SUPPORT).get_window_extent(r)
    others = [t for ax in fig.axes for t in ax.texts] + [t for t in fig.texts if t.get_text() != DECISION_SUPPORT]
    for t in others:
        assert t.get_window_extent(r).y0 > caution.y1, t.get_text()


def test_bad_arguments_are_named():
    with pytest.raises(CordmapError, match="modality"):
        P.draw_body_map(Findings(), Findings(), modality="smell")
    with pytest.raises(CordmapError, match="segment"):
        P.section_png("T13")


def _linear(c):
    c = np.asarray(c, dtype=float)
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def _lab(rgb_linear):
    m = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722], [0.0193, 0.1192, 0.9505]])
    xyz = m @ np.clip(rgb_linear, 0, 1) / np.array([0.95047, 1.0, 1.08883])
    f = np.where(xyz > 0.008856, np.cbrt(xyz), 7.787 * xyz + 16 / 116)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


def test_palette_stays_distinct_under_simulated_deuteranopia():
    # Deuteranopia simulation matrix for severity 1.0 from Machado, Oliveira & Fernandes, IEEE TVCG 2009
    # (applied to linear RGB); matrix values from memory. sRGB/CIELAB (D65) formulas: standard, from memory.
    deut = np.array([[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413],
                     [-0.011820, 0.042940, 0.968881]])
    labs = {name: _lab(deut @ _linear(P._rgb(c))) for name, c in P.TRACT_COLOURS.items()}
    worst = min(np.linalg.norm(labs[a] - labs[b]) for a, b in itertools.combinations(labs, 2))
    assert worst >= 15


def test_exam_grades_are_ordered_by_lightness():
    def luminance(c):
        return float(_linear(P._rgb(c)) @ [0.2126, 0.7152, 0.0722])

    assert luminance(P.GRADE_COLOURS[2]) > luminance(P.GRADE_COLOURS[1]) > luminance(P.GRADE_COLOURS[0])
    motor = [luminance(P.MOTOR_COLOURS[g]) for g in range(6)]
    assert motor == sorted(motor)


def test_lamination_shading_lightens_caudally():
    base = P._rgb(P.TRACT_COLOURS["lateral_corticospinal"])
    shades = [P._shade(base, t).sum() for t in np.linspace(0, 1, 8)]
    assert shades == sorted(shades) and shades[-1] > shades[0] + 0.5


def test_import_cordmap_does_not_load_matplotlib():
    code = ("import sys, cordmap, cordmap.plotting; "
            "print(any(m == 'matplotlib' or m.startswith('matplotlib.') for m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_rendering_never_uses_pyplot():
    code = ("import sys; from cordmap.plotting import section_png, body_map_png; section_png('C5'); "
            "body_map_png(None, None); print('matplotlib.pyplot' in sys.modules, 'matplotlib' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False True"
