"""The list "Worth examining next": the items that would best tell the leading hypotheses apart, each with what
each hypothesis expects; a click takes the user to the item's entry widget (the app rings it)."""
from __future__ import annotations

import functools

import ipywidgets as W

from cordmap.nexttests import beyond_the_bedside


class NextTestsPanel:
    """``widget``: the heading and one button per suggestion (its whole text wraps; nothing is cut)."""

    def __init__(self, state, n: int = 5):
        self.state = state
        head = self.head = W.HTML("Worth examining next")
        head.add_class("cm-heading")
        self.buttons = []
        for i in range(n):
            b = W.Button(description="", layout=W.Layout(width="100%", display="none"))
            b.add_class("cm-next")
            b.add_class(f"cm-next-{i}")
            b.on_click(state.guard(functools.partial(self._on_click, i)))
            self.buttons.append(b)
        self.widget = W.VBox([head, *self.buttons])
        self.widget.add_class("cm-nextbox")  # its text wraps to the column; it never widens it (style.py)

    def _on_click(self, i, _button):
        tests = self.state.ranking.next_tests if self.state.ranking else ()
        if i < len(tests):
            self.state.target = None  # a second click on the same suggestion rings its cell again
            self.state.target = tests[i].item

    def show(self) -> None:
        tests = self.state.ranking.next_tests
        for i, b in enumerate(self.buttons):
            if i < len(tests):
                t = tests[i]
                why = t.why[len(t.finding):].lstrip(" :—-") if t.why.startswith(t.finding) else t.why
                b.description = f"{t.finding}: {why}"
                b.tooltip = f"{t.finding}: {t.why} (expected gain {t.gain:.2f})"
                b.layout.display = None
            else:
                b.layout.display = "none"
        none = not tests and self.state.ranking.fit in ("good", "poor")
        self.head.value = ("Worth examining next: no bedside test left would change what is done; "
                           f"{beyond_the_bedside(self.state.ranking)}" if none else "Worth examining next")
