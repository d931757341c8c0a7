"""Dropdown entry widgets for the exam items that are not dermatome cells (muscles, reflexes, signs): built with
shared layout and style models (fewer widget models for the browser), each tied to its item in the state."""
from __future__ import annotations

import functools

import ipywidgets as W

from .labels import from_option, options, to_option


class Dropdowns:
    """Makes the dropdowns of one panel; ``entry``: item key -> dropdown; `show` sets each to the state."""

    def __init__(self, state):
        self.state = state
        self.entry: dict[tuple, W.Dropdown] = {}
        self._layouts: dict[str, W.Layout] = {}
        self._style = None
        self._syncing = False

    def make(self, key: tuple, width: str = "62px") -> W.Dropdown:
        if width not in self._layouts:
            self._layouts[width] = W.Layout(width=width)
        extra = {"style": self._style} if self._style is not None else {}
        dd = W.Dropdown(options=options(key), value="", layout=self._layouts[width], description_allow_html=False,
                        **extra)
        self._style = self._style or dd.style
        dd.add_class("cm-dd")
        dd.add_class("cm-" + "-".join(str(k) for k in key if k != ""))
        dd.observe(self.state.guard(functools.partial(self._on_change, key)), names="value")
        self.entry[key] = dd
        return dd

    def _on_change(self, key, change):
        if not self._syncing:
            self.state.set_item(key, from_option(key, change["new"]))

    def show(self) -> None:
        f = self.state.findings
        self._syncing = True
        try:
            for key, w in self.entry.items():
                opt = to_option(f.items.get(key))
                if w.value != opt:
                    w.value = opt
        finally:
            self._syncing = False
