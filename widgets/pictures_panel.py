"""The two pictures of the hypothesis on show: its cross-section with the lesion, and the body picture (the entered
exam against the predicted one, the ranking's conflicts marked); a choice of which sensation the body picture
shows. Until a picture is drawn its place holds a plain placeholder that says so (never an empty image)."""
from __future__ import annotations

import ipywidgets as W

from . import pictures
from .labels import MOD_WORD, PICTURE_MODALITIES, esc


class PicturesPanel:
    """``widget``: both pictures and their caption. ``deferred``: drawn only by `draw` (the dashboard opens without
    them and draws them when the page has its widgets: the hidden button ``ready`` the page's script clicks)."""

    def __init__(self, state, deferred: bool = False):
        self.state = state
        self.deferred = deferred
        w, h = pictures.SECTION_SIZE
        self.section_img = W.Image(value=pictures.placeholder("cross-section", pictures.SECTION_SIZE),
                                   format="svg+xml", layout=W.Layout(width=f"{w}px", height=f"{h}px"))
        self.section_img.add_class("cm-section")
        self.section_img.add_class("cm-pic")
        w, h = pictures.BODY_SIZE
        self.body_img = W.Image(value=pictures.placeholder("body picture", pictures.BODY_SIZE), format="svg+xml",
                                layout=W.Layout(width=f"{w}px", height=f"{h}px"))
        self.body_img.add_class("cm-body")
        self.body_img.add_class("cm-pic")
        self.map_mod = W.Dropdown(options=[(MOD_WORD[m], m) for m in PICTURE_MODALITIES], value="pinprick",
                                  description="Body picture:", style={"description_width": "initial"},
                                  layout=W.Layout(width="220px", min_width="220px"))
        self.map_mod.add_class("cm-map-mod")
        self.map_mod.observe(state.guard(lambda _c: self.show_body()), names="value")
        self.caption = W.HTML("")
        self.caption.add_class("cm-legend")
        self.caption.add_class("cm-pic-caption")
        self.ready = W.Button(description="draw", layout=W.Layout(display="none"))
        self.ready.add_class("cm-ready")
        self.ready.on_click(state.guard(lambda _b: self.draw()))
        side = W.VBox([self.map_mod, self.caption, self.ready], layout=W.Layout(flex="1 1 auto", min_width="0",
                                                                                 margin="0 0 0 6px"))
        self.widget = W.VBox([W.HBox([self.section_img, side]), self.body_img])

    def prepare(self) -> None:
        """Draw the current state's pictures into the caches without touching a widget (safe in a thread while the
        page is being served: `draw` then only sends them)."""
        st = self.state
        h = st.hypothesis
        if h is not None:
            pictures.section(h.lesion.top, h.lesion)
            pictures.body_map(st.findings, pictures.predicted(h), self.map_mod.value, h.conflict_items)

    def draw(self) -> None:
        """Draw both pictures of the current state (a deferred panel draws from now on)."""
        if not self.deferred:
            return
        self.deferred = False
        self.show_section()
        self.show_body()

    def _set(self, img: W.Image, png: bytes) -> None:
        if img.format != "png":
            with img.hold_sync():  # the picture and its format in one message: never a PNG read as SVG
                img.format = "png"
                img.value = png
        else:
            img.value = png

    def show_section(self) -> None:
        h = self.state.hypothesis
        if h is None or self.deferred:
            return
        self._set(self.section_img, pictures.section(h.lesion.top, h.lesion))

    def show_body(self) -> None:
        st = self.state
        h = st.hypothesis
        mod = self.map_mod.value
        if h is None:
            self.caption.value = ""
            return
        if self.deferred:
            self.caption.value = "drawing the cross-section and the body picture…"
            return
        self._set(self.body_img, pictures.body_map(st.findings, pictures.predicted(h), mod, h.conflict_items))
        shown = sum(1 for key, _e, _p in h.conflict_items
                    if key[0] == "motor" or (key[0] == "sensory" and key[1] == mod))
        n = len(h.conflict_items)
        conflicts = (f"{n} conflict{'s' if n != 1 else ''} with the exam, {shown} of them in this picture (ringed)"
                     if n else "no conflict with the exam")
        self.caption.value = (f"Beside: the cord at {esc(h.lesion.top)}, the lesion outlined. Below: "
                              f"{esc(MOD_WORD[mod])} and key muscles, entered against predicted; {conflicts}.")
