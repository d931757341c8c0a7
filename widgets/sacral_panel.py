"""The tab "Sacral & autonomic": anal contraction and pressure, bulbocavernosus reflex, bladder, diaphragm, Horner
sign per side, and the phase (acute or chronic) the whole exam is read in."""
from __future__ import annotations

import ipywidgets as W

from cordmap.anatomy import SIDES
from cordmap.findings import PHASES, SIGNS

from .dropdowns import Dropdowns
from .labels import SIGN_WORD, esc


class SacralPanel:
    """``widget``: the tab; ``entry``: item key -> its dropdown; ``phase``: the phase buttons."""

    def __init__(self, state):
        self.state = state
        self.dd = Dropdowns(state)
        self.entry = self.dd.entry
        rows = []
        for name in SIGNS:
            lab = W.HTML(esc(SIGN_WORD.get(name, name)), layout=W.Layout(width="180px"))
            rows.append(W.HBox([lab, self.dd.make(("sign", name, ""), "110px")]))
        for s in SIDES:
            lab = W.HTML(f"Horner sign, {s}", layout=W.Layout(width="180px"))
            rows.append(W.HBox([lab, self.dd.make(("sign", "horner", s), "110px")]))
        self.phase = W.ToggleButtons(options=[(p, p) for p in PHASES], value="chronic",
                                     tooltips=["weeks or more since onset", "hours to days since onset"])
        self.phase.add_class("cm-phase")
        self.phase.observe(state.guard(self._on_phase), names="value")
        rows.append(W.HBox([W.HTML("<b>phase</b>", layout=W.Layout(width="180px")), self.phase]))
        self.widget = W.VBox(rows)

    def _on_phase(self, change):
        if not self.dd._syncing:
            self.state.set_phase(change["new"])

    def show(self) -> None:
        self.dd.show()
        self.dd._syncing = True
        try:
            if self.phase.value != self.state.findings.phase:
                self.phase.value = self.state.findings.phase
        finally:
            self.dd._syncing = False
