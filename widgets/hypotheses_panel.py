"""The column "Where the lesion may be": the fit verdict, the leader, the ranked list (a click shows one), and the
facts of the hypothesis on show (where to image, what it explains and what conflicts, the classification)."""
from __future__ import annotations

import functools

import ipywidgets as W

from cordmap import cautions
from cordmap.classify import classification_line

from .labels import esc

VERDICT = {"poor": "Poor fit", "normal": "Normal", "empty": "Nothing entered"}


class HypothesesPanel:
    """``head``: heading, verdict and leader; ``rows``: (row, button, text) per list place; ``facts``, ``specific``
    go under the pictures (the app places them)."""

    def __init__(self, state, rows: int = 5):
        self.state = state
        self.heading = W.HTML("Where the lesion may be")
        self.heading.add_class("cm-heading")
        self.lead = W.HTML("")
        self.lead.add_class("cm-lead")
        self.poor = W.HTML("", layout=W.Layout(display="none"))
        self.poor.add_class("cm-poor")
        self.specific = W.HTML("")
        self.specific.add_class("cm-specific")
        self.facts = W.HTML("")
        self.facts.add_class("cm-facts")
        self.rows = []
        for i in range(rows):
            b = W.Button(description=str(i + 1), tooltip="show this one")
            b.add_class(f"cm-pick-{i}")
            b.on_click(state.guard(functools.partial(self._on_pick, i)))
            text = W.HTML("", layout=W.Layout(flex="1 1 auto"))
            text.add_class("cm-hyptext")
            row = W.HBox([b, text], layout=W.Layout(width="100%"))
            row.add_class("cm-hyp")
            row.add_class(f"cm-hyp-{i}")
            self.rows.append((row, b, text))
        self.head = [self.heading, self.poor, self.lead]
        self.list = [r[0] for r in self.rows]

    def _on_pick(self, i, _button):
        self.state.select(i)

    def show_head(self) -> None:
        """The verdict and the leader: what the eye goes to first, sent first."""
        r = self.state.ranking
        verdict = VERDICT.get(r.fit)
        if verdict:
            self.poor.value = f"{verdict}: {esc(r.advice or 'no hypothesis explains these findings well')}"
            self.poor.layout.display = None
        else:
            self.poor.value = ""
            self.poor.layout.display = "none"
        if r.hypotheses:
            h0 = r.hypotheses[0]
            self.lead.value = (f"Leading: <b class='cm-lead-text'>{esc(h0.lesion.describe())}</b> "
                               f"({h0.probability:.0%})")
        else:
            self.lead.value = "Leading: <b class='cm-lead-text'>none</b>"
        self.specific.value = "<br>".join(f"• {esc(c)}" for c in cautions.specific(r.cautions))

    def show_list(self) -> None:
        """The ranked list and the facts of the hypothesis on show."""
        st = self.state
        hyps = st.ranking.hypotheses
        for i, (row, _b, text) in enumerate(self.rows):
            if i >= len(hyps):
                row.layout.display = "none"
                continue
            h = hyps[i]
            row.layout.display = None
            width = max(1, round(90 * h.probability))
            text.value = (f"<span class='cm-bartrack'><span class='cm-bar' style='width:{width}px'></span></span>"
                          f"<b>{esc(h.lesion.describe())}</b> {h.probability:.0%}<br>"
                          f"<span class='cm-why'>{esc(h.reason)}</span>")
            sel = "cm-selected" in row._dom_classes
            if (i == st.selected) != sel:
                (row.add_class if i == st.selected else row.remove_class)("cm-selected")
        self.facts.value = self._facts()

    def _facts(self) -> str:
        h = self.state.hypothesis
        if h is None:
            return "No hypothesis to show."
        les = h.lesion
        levels = ", ".join(h.vertebral_levels) or "—"
        lines = [f"<b>#{h.rank} {esc(les.describe())}</b>: image the spine at <b>{esc(levels)}</b>"]
        lines += [f"{'also, ' if w.advice else 'why: '}{esc(w.why)}" for w in getattr(h, "imaging", ())]
        if h.variants:
            lines.append(f"or (imaging tells which): {esc('; '.join(v.describe() for v in h.variants))}")
        if h.same_exam:
            lines.append(f"same predicted exam (imaging tells them apart): {esc(h.same_exam_text())}")
        if h.explains:
            lines.append(f"explains: {esc(', '.join(h.explains[:6]))}")
        if h.conflicts:
            more = f" (+{len(h.conflicts) - 6} more)" if len(h.conflicts) > 6 else ""
            lines.append(f"conflicts: {esc(', '.join(h.conflicts[:6]))}{more}")
        lines.append(self._classification())
        return "<br>".join(lines)

    def _classification(self) -> str:
        c = self.state.ranking.classification
        if c is None:
            return "classification of the entered exam: not available"
        return f"classification of the entered exam: {esc(classification_line(c))}"
