"""The tab "Muscles & reflexes": the key muscles' MRC grades (0-5, NT) per side, the reflexes per side, and the
non-key muscles and localizing clues (`limb_panel.py`)."""
from __future__ import annotations

import ipywidgets as W

from cordmap.anatomy import REFLEXES, SIDES, anatomy

from .dropdowns import Dropdowns
from .labels import esc, reflex_word


class PowerPanel:
    """``widget``: the tab; ``entry``: item key -> its dropdown."""

    def __init__(self, state):
        self.dd = Dropdowns(state)
        self.entry = self.dd.entry
        myos = anatomy().key_myotomes
        muscles = anatomy().muscle_table.set_index("myotome")["muscle"]
        head = [W.HTML("<b>key muscles (MRC 0-5, NT)</b>", layout=W.Layout(width="112px", min_width="112px"))]
        head += [W.HTML(f"<span title='{esc(muscles.get(m, ''))}'>{esc(m)}</span>", layout=W.Layout(width="62px"))
                 for m in myos]
        rows = [W.HBox(head)]
        for s in SIDES:
            lab = W.HTML(f"{s}")
            lab.add_class("cm-striplabel")
            rows.append(W.HBox([lab, *[self.dd.make(("motor", s, m)) for m in myos]]))
        rhead = [W.HTML("<b>reflexes</b>", layout=W.Layout(width="150px"))]
        rhead += [W.HTML(s, layout=W.Layout(width="100px")) for s in SIDES]
        refl = [W.HBox(rhead)]
        for r in REFLEXES:
            lab = W.HTML(esc(reflex_word(r)), layout=W.Layout(width="150px"))
            refl.append(W.HBox([lab, *[self.dd.make(("reflex", s, r), "100px") for s in SIDES]]))
        half = (len(refl) + 1) // 2
        grid = W.HBox([W.VBox(refl[:half]), W.VBox([refl[0]] + refl[half:])])
        from .limb_panel import LimbPanel  # findings format 2: non-key muscles and the clues

        self.limb = LimbPanel(state)
        self.entry = {**self.dd.entry, **self.limb.entry}
        rule = [W.HTML("<hr style='border:0;border-top:1px solid #d5dbe3'>") for _ in range(2)]
        self.widget = W.VBox([*rows, rule[0], grid, rule[1], self.limb.widget])

    def show(self) -> None:
        self.dd.show()
        self.limb.show()
