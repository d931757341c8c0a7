"""The top bar: the exam's label and phase, what the last action did, and the file actions: a demo case, open a
findings file, save the exam as a findings file, a one-page case sheet."""
from __future__ import annotations

import base64

import ipywidgets as W

from cordmap import demo

from .labels import esc
from .state import MAX_UPLOAD


class FilesPanel:
    """``widget``: the bar. ``download`` shows the link of the last file made."""

    def __init__(self, state, report_pdf):
        self.state = state
        self._report_pdf = report_pdf
        g = state.guard
        self._syncing = False
        title = W.HTML("cordmap")
        title.add_class("cm-title")
        self.case_label = W.HTML("", layout=W.Layout(flex="1 1 auto", min_width="120px", margin="0 8px"))
        self.case_label.add_class("cm-case")
        self.status = W.HTML("")
        self.status.add_class("cm-status")
        self.demo_pick = W.Dropdown(options=[("Demo case…", "")] + [(n, n) for n in demo.names()], value="",
                                    layout=W.Layout(width="170px"))
        self.demo_pick.add_class("cm-demo")
        self.demo_pick.observe(g(self._on_demo), names="value")
        # the page draws the upload button's words itself (style.py): the widget's own label adds a file count
        self.upload = W.FileUpload(accept=".json,application/json", multiple=False, description="Open",
                                   tooltip="open a findings file (.json)",
                                   layout=W.Layout(width="150px", min_width="150px"))
        self.upload.add_class("cm-upload")
        self.upload.observe(g(self._on_upload), names="value")
        self.save_btn = W.Button(description="Save findings", tooltip="save this exam as a findings file (.json)",
                                 layout=W.Layout(width="115px"))
        self.save_btn.add_class("cm-save")
        self.save_btn.on_click(g(lambda _b: self._offer_save()))
        self.report_btn = W.Button(description="Case sheet", tooltip="the case sheet as a PDF (text can be copied)",
                                   layout=W.Layout(width="95px"))
        self.report_btn.add_class("cm-report")
        self.report_btn.on_click(g(lambda _b: self._offer_report()))
        self.download = W.HTML("")
        self.download.add_class("cm-download")
        self.widget = W.HBox([title, self.case_label, self.status, self.demo_pick, self.upload, self.save_btn,
                              self.report_btn, self.download])
        self.widget.add_class("cm-topbar")
        state.observe(lambda ch: setattr(self.status, "value", esc(ch["new"])), names="status")

    def show(self) -> None:
        f = self.state.findings
        self.case_label.value = f"{esc(f.label or 'unlabelled exam')} · {esc(f.phase)}"
        if self.demo_pick.value != "":
            self._syncing = True
            try:
                self.demo_pick.value = ""
            finally:
                self._syncing = False

    def _on_demo(self, change):
        if not self._syncing and change["new"]:
            self.state.load_demo(change["new"])

    def _on_upload(self, change):
        files = change["new"]
        if self._syncing or not files:
            return
        try:
            f = files[0]
            name = str(f.get("name", "findings file"))
            size = int(f.get("size", 0) or 0)
            content = f.get("content", b"")
            if size > MAX_UPLOAD or len(content) > MAX_UPLOAD:
                self.state.show_error(f"{name}: {max(size, len(content)):,} bytes is over the 1 MB limit; "
                                      "nothing was loaded")
            else:
                self.state.load(content, name=name)
        finally:
            self._syncing = True
            try:
                self.upload.value = ()
            finally:
                self._syncing = False

    def _offer_save(self):
        data = base64.b64encode(self.state.save_document().encode("utf-8")).decode("ascii")
        self.download.value = (f"<a class='cm-link' download='findings.json' "
                               f"href='data:application/json;base64,{data}' style='color:#fff'>⤓ findings.json</a>")

    def _offer_report(self):
        data = base64.b64encode(self._report_pdf()).decode("ascii")
        self.download.value = (f"<a class='cm-link' download='cordmap-case.pdf' "
                               f"href='data:application/pdf;base64,{data}' style='color:#fff'>⤓ cordmap-case.pdf</a>")
