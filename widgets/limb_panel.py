"""Part of the tab "Muscles & reflexes" (findings format 2): the non-key muscles that tell a root from a peripheral
nerve, per side, and the localizing clues (vertebrae tender to percussion, dermatomes of band-like pain)."""
from __future__ import annotations

import ipywidgets as W

from cordmap.anatomy import SIDES, anatomy
from cordmap.findings_v2 import VERTEBRAE
from cordmap.nerves import limb_muscles

from .dropdowns import Dropdowns
from .labels import LIMB_WORD, esc


class LimbPanel:
    """``widget``: the block; ``entry``: item key -> its dropdown; ``tender`` and ``band`` (per side): tag inputs."""

    def __init__(self, state):
        self.state = state
        self.dd = Dropdowns(state)
        self.entry = self.dd.entry
        names = limb_muscles()
        head = [W.HTML("<b>other muscles</b>", layout=W.Layout(width="112px", min_width="112px"))]
        head += [W.HTML(f"<span title='{esc(m)}, {esc(nerve)}'>{esc(LIMB_WORD.get(n, n))}</span>",
                        layout=W.Layout(width="62px")) for n, (m, _, nerve) in names.items()]
        rows = [W.HBox(head)]
        rows[0].add_class("cm-limb-head")
        for s in SIDES:
            lab = W.HTML(f"{s}")
            lab.add_class("cm-striplabel")
            rows.append(W.HBox([lab, *[self.dd.make(("muscle", s, n)) for n in names]]))
        self.tender = W.TagsInput(value=[], allowed_tags=list(VERTEBRAE), allow_duplicates=False,
                                  layout=W.Layout(width="180px"))
        self.tender.add_class("cm-tender")
        self.band = {s: W.TagsInput(value=[], allowed_tags=list(anatomy().dermatomes), allow_duplicates=False,
                                    layout=W.Layout(width="140px")) for s in SIDES}
        self._syncing = False
        self.tender.observe(state.guard(self._on_tender), names="value")
        for s, w in self.band.items():
            w.add_class(f"cm-band-{s}")
            w.observe(state.guard(lambda c, s=s: self._on_band(s, c)), names="value")
        clue = W.HBox([W.HTML("<b>clues</b>", layout=W.Layout(width="112px", min_width="112px")),
                       W.HTML("tender vertebrae", layout=W.Layout(width="100px")), self.tender,
                       *[x for s in SIDES for x in (W.HTML(f"band pain, {s}", layout=W.Layout(width="90px")),
                                                    self.band[s])]])
        self.widget = W.VBox([*rows, clue])

    def _replace(self, kind: str, side: str, values, where) -> None:
        f = self.state.findings
        old = [k for k in f.items if k[0] == kind and (kind == "tenderness" or k[1] == side)]
        new = {((kind, v, "") if kind == "tenderness" else (kind, side, v)): True for v in values}
        self.state.commit(f.replace(new, remove=[k for k in old if k not in new]), reason=f"set {where}")

    def _on_tender(self, change):
        if not self._syncing:
            self._replace("tenderness", "", change["new"], "tender vertebrae")

    def _on_band(self, side, change):
        if not self._syncing:
            self._replace("band_pain", side, change["new"], f"band pain, {side}")

    def show(self) -> None:
        self.dd.show()
        f = self.state.findings
        self._syncing = True
        try:
            tender = [v for v in VERTEBRAE if ("tenderness", v, "") in f.items]
            if list(self.tender.value) != tender:
                self.tender.value = tender
            for s, w in self.band.items():
                band = [d for d in anatomy().dermatomes if ("band_pain", s, d) in f.items]
                if list(w.value) != band:
                    w.value = band
        finally:
            self._syncing = False
