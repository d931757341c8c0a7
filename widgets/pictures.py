"""PNG pictures for the app, from `cordmap.plotting`, cached; a plain stand-in while plotting is unavailable."""
from __future__ import annotations

import html
import io
from functools import lru_cache

SECTION_SIZE = (250, 230)
BODY_SIZE = (490, 230)


def _plotting(name: str):
    try:
        from cordmap import plotting
    except ImportError:
        return None
    return getattr(plotting, name, None)


@lru_cache(maxsize=4)
def _stand_in(text: str, size: tuple[int, int]) -> bytes:
    from matplotlib.figure import Figure

    fig = Figure(figsize=(size[0] / 100, size[1] / 100), dpi=100)
    fig.text(0.5, 0.5, text, ha="center", va="center", fontsize=9, wrap=True)
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    return buf.getvalue()


@lru_cache(maxsize=256)
def section(seg: str, lesion, size: tuple[int, int] = SECTION_SIZE) -> bytes:
    fn = _plotting("section_png")
    if fn is None:
        return _stand_in(f"cross-section {seg}\n{lesion.describe() if lesion else ''}", size)
    return fn(seg, lesion=lesion, size=size)


_BODY_CACHE: dict = {}
_BODY_CACHE_MAX = 64


def body_map(entered, predicted, modality: str = "pinprick", conflicts: tuple = (),
             size: tuple[int, int] = BODY_SIZE) -> bytes:
    """The body picture, cached by what it shows: the entered items of `modality` and the muscles (a click on
    another sensation's cell redraws nothing), the prediction, the conflicts it marks and the size. `conflicts`:
    (item, entered, predicted) triples, the ranking's (`Hypothesis.conflict_items`)."""
    def shown_here(k):
        return k[0] == "motor" or (k[0] == "sensory" and k[1] == modality)

    shown = frozenset((k, v) for k, v in entered.items.items() if shown_here(k))
    marks = tuple(sorted({c[0] for c in conflicts if shown_here(c[0])}))
    key = (shown, predicted, modality, marks, size)
    png = _BODY_CACHE.get(key)
    if png is None:
        if len(_BODY_CACHE) >= _BODY_CACHE_MAX:
            _BODY_CACHE.pop(next(iter(_BODY_CACHE)))
        fn = _plotting("body_map_png")
        png = _BODY_CACHE[key] = (_stand_in(f"body picture ({modality})", size) if fn is None else
                                  fn(entered, predicted, modality=modality, size=size, conflicts=marks))
    return png


@lru_cache(maxsize=128)
def predicted(hypothesis):
    """The predicted findings of a hypothesis (cached: the same lesion is shown again and again): read from the
    atlas when its lesion is a candidate (`cordmap.atlas.predicted_exam`, the same exam without simulating it),
    else simulated."""
    from cordmap.atlas import predicted_exam

    exam = predicted_exam(hypothesis.lesion)
    return exam if exam is not None else hypothesis.predicted()


@lru_cache(maxsize=8)
def placeholder(what: str, size: tuple[int, int]) -> bytes:
    """An SVG that stands where a picture will be: a pale box saying it is being drawn (no plotting library)."""
    w, h = size
    return (f"<svg xmlns='http://www.w3.org/2000/svg' width='{w}' height='{h}' viewBox='0 0 {w} {h}'>"
            f"<rect x='0.5' y='0.5' width='{w - 1}' height='{h - 1}' fill='#f4f6f9' stroke='#d5dbe3' "
            f"stroke-dasharray='4 3'/><text x='{w / 2}' y='{h / 2}' font-family='sans-serif' font-size='13' "
            f"fill='#5f6b78' text-anchor='middle'>drawing the {html.escape(what)}…</text></svg>").encode("utf-8")
