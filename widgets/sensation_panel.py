"""The tab "Sensation": per dermatome, one row of cells per sensation and side (C2 .. S4-5), a click cycles a cell's
grade; under it a level setter ("from T10 down") and a button that marks every cell not yet examined normal."""
from __future__ import annotations

import functools

import ipywidgets as W

from cordmap.anatomy import MODALITIES, SIDES

from .labels import GLYPH, GRADE_WORD, MOD_WORD, esc
from .style import ABSENT, IMPAIRED, NORMAL

GAPS = ("T1", "L1", "S1")  # a small gap before these columns: arm, trunk, leg, sacral dermatomes


class SensationPanel:
    """``widget``: the grid; ``entry``: item key -> its cell button."""

    def __init__(self, state):
        self.state = state
        g = state.guard
        self.entry: dict[tuple, W.Widget] = {}
        derms = state.derms
        # the dermatome header is one HTML widget (not 28): fewer models for the browser to build at start
        spans = "".join(f"<span class='cm-dh cm-dh-{esc(d)}{' cm-dh-gap' if d in GAPS else ''}'>{esc(d)}</span>"
                        for d in derms)
        head = W.HTML(f"<div class='cm-dermrow'><span class='cm-dh-lead'></span>{spans}</div>")
        head.add_class("cm-dermhead")
        rows = [head]
        # the 280 cells share one layout and one style model, the row labels one layout: fewer widget messages at
        # start and less memory
        cell_layout, cell_style = W.Layout(width="19px", height="20px"), W.ButtonStyle()
        label_layout = W.Layout()
        for m in MODALITIES:
            group = []
            for s in SIDES:
                lab = W.HTML(f"{esc(MOD_WORD[m])} <b>{s[0].upper()}</b>", tooltip=f"{MOD_WORD[m]}, {s} side",
                             layout=label_layout)
                lab.add_class("cm-striplabel")
                cells = []
                for d in derms:
                    b = W.Button(description=GLYPH[None], tooltip=f"{MOD_WORD[m]} {s} {d}: not examined",
                                 layout=cell_layout, style=cell_style)
                    b.add_class("cm-cell")
                    b.add_class(f"cm-cell-{m}-{s}-{d}")
                    if d in GAPS:
                        b.add_class("cm-gap")
                    b.on_click(g(functools.partial(self._on_cell, m, s, d)))
                    self.entry[("sensory", m, s, d)] = b
                    cells.append(b)
                strip = W.HBox([lab, *cells])
                strip.add_class("cm-strip")
                strip.add_class(f"cm-strip-{m}-{s}")
                group.append(strip)
            box = W.VBox(group)
            box.add_class("cm-stripgroup")
            rows.append(box)
        legend = W.HTML(
            "L left, R right · a click cycles: <span class='cm-key'></span>not examined <span class='cm-key' "
            f"style='background:{NORMAL}'>2</span>normal <span class='cm-key' style='background:{IMPAIRED}'>1"
            f"</span>impaired <span class='cm-key' style='background:{ABSENT};color:#fff'>0</span>absent")
        legend.add_class("cm-legend")
        quick, fill_btn = self._build_quick()
        rows += [W.HBox([legend, fill_btn], layout=W.Layout(justify_content="space-between",
                                                            align_items="center")), quick]
        self.widget = W.VBox(rows)

    def _build_quick(self) -> tuple[W.Widget, W.Widget]:
        """A sensory level in one step: grade, sensation, side, first dermatome; and the rest normal."""
        g = self.state.guard
        self.level_grade = W.Dropdown(options=[("absent", 0), ("impaired", 1)], value=0,
                                      layout=W.Layout(width="95px"))
        self.level_mod = W.Dropdown(options=[("every sensation", "all")] + [(MOD_WORD[m], m) for m in MODALITIES],
                                    value="pinprick", layout=W.Layout(width="140px"))
        self.level_side = W.Dropdown(options=[("both sides", "both"), ("left side", "left"), ("right side", "right")],
                                     value="both", layout=W.Layout(width="105px"))
        self.level_from = W.Dropdown(options=self.state.derms, value="T10", layout=W.Layout(width="72px"))
        self.level_from.add_class("cm-level-from")
        level_btn = W.Button(description="Grade from here down", layout=W.Layout(width="160px"),
                             tooltip="grade this dermatome and every one below it; the ones above stay as they are")
        level_btn.add_class("cm-level-apply")
        level_btn.on_click(g(lambda _b: self.state.set_level(self.level_from.value, self.level_grade.value,
                                                             self.level_mod.value, self.level_side.value)))
        fill_btn = W.Button(description="Set unexamined to normal", layout=W.Layout(width="auto"),
                            tooltip="every cell not yet examined (of the chosen sensation) becomes normal")
        fill_btn.add_class("cm-fill")
        fill_btn.on_click(g(lambda _b: self.state.fill_normal(self.level_mod.value)))
        quick = W.HBox([self.level_grade, self.level_mod, W.HTML("&nbsp;on&nbsp;"), self.level_side,
                        W.HTML("&nbsp;from&nbsp;"), self.level_from, level_btn],
                       layout=W.Layout(margin="4px 0 0 0"))
        quick.add_class("cm-row")
        quick.add_class("cm-quick")
        return quick, fill_btn

    def _on_cell(self, m, s, d, _button):
        self.state.click_cell(m, s, d)

    def show(self) -> None:
        """Each cell shows its grade: colour class, digit and tooltip in one message per changed cell."""
        f = self.state.findings
        for key, w in self.entry.items():
            v = f.items.get(key)
            cls = f"cm-s{v}" if v is not None else None
            want = tuple(c for c in w._dom_classes if c not in ("cm-s0", "cm-s1", "cm-s2"))
            want = want + ((cls,) if cls else ())
            if tuple(w._dom_classes) != want:
                with w.hold_sync():
                    w._dom_classes = want
                    w.description = GLYPH[v]
                    w.tooltip = f"{MOD_WORD[key[1]]} {key[2]} {key[3]}: {GRADE_WORD[v]}"
