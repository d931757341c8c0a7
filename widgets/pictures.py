"""PNG pictures for the app, from `cordmap.plotting`, cached; a plain stand-in while plotting is unavailable."""
from __future__ import annotations

import io
from functools import lru_cache

SECTION_SIZE = (280, 240)
BODY_SIZE = (280, 240)


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


def body_map(entered, predicted, modality: str = "pinprick", size: tuple[int, int] = BODY_SIZE) -> bytes:
    """The body map, cached by what it shows: the entered items of `modality` and the muscles (a click on
    another modality's cell redraws nothing), the prediction and the size."""
    shown = frozenset((k, v) for k, v in entered.items.items()
                      if k[0] == "motor" or (k[0] == "sensory" and k[1] == modality))
    key = (shown, predicted, modality, size)
    png = _BODY_CACHE.get(key)
    if png is None:
        if len(_BODY_CACHE) >= _BODY_CACHE_MAX:
            _BODY_CACHE.pop(next(iter(_BODY_CACHE)))
        png = _BODY_CACHE[key] = _draw_body_map(entered, predicted, modality, size)
    return png


def _draw_body_map(entered, predicted, modality: str, size: tuple[int, int]) -> bytes:
    fn = _plotting("body_map_png")
    if fn is None:
        return _stand_in(f"body map ({modality})", size)
    try:
        return fn(entered, predicted, modality=modality, size=size)
    except TypeError:  # a plotting module without the size keyword
        return fn(entered, predicted, modality=modality)


@lru_cache(maxsize=64)
def disagreements(entered, predicted) -> tuple:
    fn = _plotting("disagreements")
    if fn is None:
        return tuple(k for k, v in entered.items.items() if v != "NT" and predicted.items.get(k, v) != v)
    return tuple(fn(entered, predicted))


@lru_cache(maxsize=128)
def predicted(hypothesis):
    """The simulated findings of a hypothesis (cached: the same lesion is shown again and again)."""
    return hypothesis.predicted()
