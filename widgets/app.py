"""`ExamApp`: enter a bedside exam, watch the lesion hypotheses re-rank.

The state is one `cordmap.Findings` value (``app.findings``), rebuilt with `Findings.replace` on every change;
every computation is a call into the core. Any error inside a callback is shown in the app (the error line) and
kept in ``app.errors``; the state is changed only when the new exam ranks without error.
"""
from __future__ import annotations

import base64
import functools
import html
import sys
import threading
import traceback
from pathlib import Path

import ipywidgets as W

from cordmap import cautions, demo
from cordmap.anatomy import MODALITIES, REFLEXES, SIDES, anatomy
from cordmap.errors import CordmapError
from cordmap.findings import PHASES, SIGNS, Findings, item_label, item_values, parse

from . import pictures
from .style import CSS

MAX_UPLOAD = 1_000_000  # bytes
N_ROWS = 5  # hypotheses shown
N_NEXT = 5  # next tests shown
CYCLE = {None: 2, 2: 1, 1: 0, 0: None}  # a click: not examined -> normal -> impaired -> absent -> not examined
# not examined is a no-break space, not "": the browser's button view keeps its old text for an empty description
GLYPH = {None: "\u00a0", 2: "2", 1: "1", 0: "0"}
GRADE_WORD = {None: "not examined", 2: "normal", 1: "impaired", 0: "absent"}
MOD_WORD = {"pinprick": "pinprick", "temperature": "temperature", "light_touch": "light touch",
            "vibration": "vibration", "joint_position": "joint position"}
SIGN_WORD = {"voluntary_anal_contraction": "voluntary anal squeeze", "deep_anal_pressure": "deep anal pressure",
             "bulbocavernosus": "bulbocavernosus reflex", "bladder": "bladder", "diaphragm": "diaphragm"}
TAB_SENSATION, TAB_POWER, TAB_SACRAL = 0, 1, 2
MAP_MODALITIES = ("pinprick", "light_touch", "vibration", "temperature", "joint_position")


def esc(text) -> str:
    """Escape any text before it goes into an HTML widget."""
    return html.escape(str(text), quote=True)


def _to_option(value) -> str:
    if value is None:
        return ""
    if value is True:
        return "yes"
    if value is False:
        return "no"
    return str(value)


def _from_option(key: tuple, text: str):
    if text == "":
        return None
    for v in (*item_values(key), "NT"):
        if _to_option(v) == text:
            return v
    raise CordmapError(f"{item_label(key)}: unknown value {text!r}")


def _options(key: tuple) -> list[tuple[str, str]]:
    values = list(item_values(key)) + (["NT"] if key[0] == "motor" else [])
    return [("–", "")] + [(_to_option(v), _to_option(v)) for v in values]


def _reason(h) -> str:
    """The hypothesis' one-line reason without its own name in front."""
    name = h.lesion.describe()
    s = h.summary
    return s[len(name):].lstrip(" :—-") if s.startswith(name) else s


def _default_ranker():
    from cordmap.rank import rank

    return rank


class ExamApp:
    """The whole app. ``app.widget`` is the box to display; ``app.findings`` and ``app.ranking`` the state."""

    def __init__(self, findings: Findings | None = None, ranker=None, top: int = N_ROWS,
                 defer_pictures: bool = False):
        """``defer_pictures``: open without the two pictures; `draw_pictures` (or the first change) draws them.
        The dashboard uses it to draw them in a thread while the page is still being served."""
        self._ranker = ranker
        self._defer = defer_pictures
        self._lock = threading.RLock()  # one redraw at a time (the first pictures may come from a thread)
        self.top = top
        self.errors: list[str] = []
        self.selected = 0
        self._pinned = None  # a hypothesis the user picked: kept selected while it stays in the list
        self._syncing = False
        self._target = None
        self.findings = Findings()
        self.ranking = None
        self.derms = anatomy().dermatomes
        self._build()
        self._commit(findings if findings is not None else demo.case(),
                     reason="opened " + ("the exam" if findings is not None else f"demo case {demo.DEFAULT}"))

    # ------------------------------------------------------------ plumbing

    @property
    def ranker(self):
        if self._ranker is None:
            self._ranker = _default_ranker()
        return self._ranker

    def _guard(self, fn):
        """Wrap a callback: any exception is shown on the error line, never swallowed."""

        @functools.wraps(fn)
        def run(*args, **kw):
            try:
                return fn(*args, **kw)
            except Exception as e:  # noqa: BLE001 - shown to the user, kept in self.errors
                self.show_error(e)
        return run

    def show_error(self, e: BaseException | str) -> None:
        """One line on the page. A fault of the app itself (not a `CordmapError`) is named by its type only; its
        traceback goes to the server's log (the kernel's stderr), never to the page."""
        if isinstance(e, (str, CordmapError)):
            msg = str(CordmapError(e))  # one line, bounded
        else:
            msg = (f"something went wrong inside cordmap ({type(e).__name__}); nothing was changed. The details "
                   "are in the server's log.")
            print("".join(traceback.format_exception(e)), file=sys.__stderr__, flush=True)
        self.errors.append(msg)
        self.error.value = f"⚠ {esc(msg)}"
        self.error.layout.display = None

    def clear_error(self) -> None:
        self.error.value = ""
        self.error.layout.display = "none"

    def _commit(self, new: Findings, reason: str = "") -> bool:
        """Rank `new`; only when that works it becomes the state. Widgets are then brought in line.

        The app carries the class ``cm-busy`` until everything is redrawn (a progress cursor; tests wait on it)."""
        with self._lock:
            self.widget.add_class("cm-busy")
            try:
                return self._commit_now(new, reason)
            finally:
                self.widget.remove_class("cm-busy")

    def draw_pictures(self) -> None:
        """Draw the cross-section and the body map of the current state (they were deferred at opening)."""
        with self._lock:
            if not self._defer:
                return
            self._defer = False
            try:
                if self.ranking is not None and self.ranking.hypotheses:
                    les = self._sel_lesion
                    self.section_img.value = pictures.section(les.top, les)
                    self._render_selected()
            except Exception as e:  # noqa: BLE001 - shown to the user
                self.show_error(e)

    def _commit_now(self, new: Findings, reason: str) -> bool:
        try:
            ranking = self.ranker(new, top=self.top)
        except Exception as e:  # noqa: BLE001
            self.show_error(e)
            self._sync_entry()  # put the widget the user touched back to the state
            return False
        old_lead = self._lead_lesion()
        self.findings, self.ranking = new, ranking
        keep = [i for i, h in enumerate(ranking.hypotheses) if self._pinned is not None and h.lesion == self._pinned]
        self.selected = keep[0] if keep else 0
        if not keep:
            self._pinned = None  # follow the leader
        self.clear_error()
        # what the eye goes to first is sent first: the leader and its cross-section, then the clicked cells,
        # then the list, the next tests and the body map
        self._render_head()
        self._sync_entry()
        self._render_rest()
        if reason:
            self.status.value = esc(reason)
        self.lead_changed = old_lead != self._lead_lesion()
        return True

    def _lead_lesion(self):
        if self.ranking is None or not self.ranking.hypotheses:
            return None
        return self.ranking.hypotheses[0].lesion

    @property
    def _sel_lesion(self):
        if self.ranking is None or not self.ranking.hypotheses:
            return None
        return self.ranking.hypotheses[min(self.selected, len(self.ranking.hypotheses) - 1)].lesion

    # ------------------------------------------------------------ public actions (used by handlers and tests)

    def set_item(self, key: tuple, value) -> bool:
        if value is None:
            return self._commit(self.findings.replace(remove=[key]))
        if value not in (*item_values(key), *(["NT"] if key[0] == "motor" else [])):
            raise CordmapError(f"{item_label(key)}: {value!r} is not an allowed value")
        return self._commit(self.findings.replace({key: value}))

    def click_cell(self, modality: str, side: str, dermatome: str) -> bool:
        key = ("sensory", modality, side, dermatome)
        return self.set_item(key, CYCLE[self.findings.get(key)])

    def set_level(self, dermatome: str, grade: int = 0, modality: str = "all", side: str = "both") -> bool:
        """Grade `dermatome` and every dermatome below it; the ones above it are left as they are."""
        i = self.derms.index(dermatome)
        mods = MODALITIES if modality == "all" else (modality,)
        sides = SIDES if side == "both" else (side,)
        upd = {("sensory", m, s, d): grade for m in mods for s in sides for d in self.derms[i:]}
        return self._commit(self.findings.replace(upd), reason=f"{GRADE_WORD[grade]} from {dermatome} down")

    def fill_normal(self, modality: str = "all") -> bool:
        """Every sensory cell not yet examined becomes normal (of one modality, or of all)."""
        mods = MODALITIES if modality == "all" else (modality,)
        upd = {("sensory", m, s, d): 2 for m in mods for s in SIDES for d in self.derms
               if ("sensory", m, s, d) not in self.findings.items}
        return self._commit(self.findings.replace(upd), reason=f"{len(upd)} cells marked normal")

    def set_phase(self, phase: str) -> bool:
        return self._commit(self.findings.replace(phase=phase))

    def select(self, i: int) -> None:
        if self.ranking is None or not 0 <= i < len(self.ranking.hypotheses):
            raise CordmapError(f"hypothesis {i + 1} is not in the list")
        self.selected = i
        self._pinned = self.ranking.hypotheses[i].lesion if i else None
        self._render()

    def load(self, source, name: str = "findings file") -> bool:
        """Load a findings document (dict, JSON text or bytes); on any problem the state is unchanged."""
        try:
            if isinstance(source, (bytes, bytearray, memoryview)):
                if len(source) > MAX_UPLOAD:
                    raise CordmapError(f"{name}: {len(source):,} bytes is over the 1 MB limit; nothing was loaded")
                try:
                    source = bytes(source).decode("utf-8")
                except UnicodeDecodeError:
                    raise CordmapError(f"{name}: not UTF-8 text; nothing was loaded") from None
                if not source.lstrip().startswith("{"):
                    raise CordmapError(f"{name}: not a findings document (JSON object expected); nothing was loaded")
            f = parse(source)
        except CordmapError as e:
            self.show_error(f"{name}: {e}" if not str(e).startswith(name) else e)
            return False
        return self._commit(f, reason=f"loaded {name}")

    def load_demo(self, name: str) -> bool:
        return self._commit(demo.case(name), reason=f"demo case {name}")

    def goto(self, item: tuple) -> None:
        """Take the user to the entry widget of `item` and ring it."""
        w = self.entry.get(tuple(item))
        if w is None:
            raise CordmapError(f"no entry cell for {item!r}")
        if self._target is not None:
            self._target.remove_class("cm-target")
        w.add_class("cm-target")
        self._target = w
        self.tabs.selected_index = {"sensory": TAB_SENSATION, "motor": TAB_POWER, "reflex": TAB_POWER}.get(
            item[0], TAB_SACRAL)
        self.status.value = f"next: {esc(item_label(item))} (ringed)"

    def save_document(self) -> str:
        return self.findings.to_json()

    def report_png(self) -> bytes:
        from .report import report_png

        return report_png(self.findings, self.ranking, self.selected)

    def report_pdf(self) -> bytes:
        from .report import report_pdf

        return report_pdf(self.findings, self.ranking, self.selected)

    # ------------------------------------------------------------ building

    def _build(self) -> None:
        g = self._guard
        self.log = W.Output(layout=W.Layout(max_height="80px", overflow="auto"))
        self.log.add_class("cm-log")
        self.error = W.HTML("", layout=W.Layout(display="none"))
        self.error.add_class("cm-error")
        self.status = W.HTML("")
        self.status.add_class("cm-status")

        # top bar: title, case label, demo picker, files
        title = W.HTML("cordmap")
        title.add_class("cm-title")
        self.case_label = W.HTML("", layout=W.Layout(flex="1 1 auto", min_width="120px", margin="0 8px"))
        self.case_label.add_class("cm-case")
        self.demo_pick = W.Dropdown(options=[("demo case…", "")] + [(n, n) for n in demo.names()], value="",
                                    layout=W.Layout(width="170px"))
        self.demo_pick.add_class("cm-demo")
        self.demo_pick.observe(g(self._on_demo), "value")
        self.upload = W.FileUpload(accept=".json,application/json", multiple=False, description="Open file",
                                   layout=W.Layout(width="128px", min_width="128px"))
        self.upload.add_class("cm-upload")
        self.upload.observe(g(self._on_upload), "value")
        self.save_btn = W.Button(description="Save file", layout=W.Layout(width="90px"))
        self.save_btn.add_class("cm-save")
        self.save_btn.on_click(g(lambda _b: self._offer_save()))
        self.report_btn = W.Button(description="Case sheet", tooltip="the case sheet as a PDF (text can be copied)",
                                   layout=W.Layout(width="95px"))
        self.report_btn.add_class("cm-report")
        self.report_btn.on_click(g(lambda _b: self._offer_report()))
        self.download = W.HTML("")
        self.download.add_class("cm-download")
        top = W.HBox([title, self.case_label, self.status, self.demo_pick, self.upload, self.save_btn,
                      self.report_btn, self.download])
        top.add_class("cm-topbar")
        self.caution_box = W.HTML(" ".join(f"<b>•</b> {esc(c)}" for c in cautions.GENERAL))
        self.caution_box.add_class("cm-cautions")

        self.tabs = W.Tab(children=[self._build_sensation(), self._build_power(), self._build_sacral()],
                          titles=("Sensation ribbons", "Power & reflexes", "Sacral & autonomic"))
        self.tabs.add_class("cm-tabs")
        nt_head = self.nt_head = W.HTML("Worth examining next")
        nt_head.add_class("cm-heading")
        self.next_buttons = []
        for i in range(N_NEXT):
            b = W.Button(description="", layout=W.Layout(width="100%", display="none"))
            b.add_class("cm-next")
            b.add_class(f"cm-next-{i}")
            b.on_click(g(functools.partial(self._on_next, i)))
            self.next_buttons.append(b)
        left = W.VBox([self.tabs, nt_head, *self.next_buttons],
                      layout=W.Layout(width="730px", min_width="730px"))
        left.add_class("cm-col")
        left.add_class("cm-exam")

        right = self._build_hypotheses()
        body = W.HBox([left, right], layout=W.Layout(align_items="flex-start", justify_content="space-between",
                                                     width="1330px"))
        style = W.HTML(CSS, layout=W.Layout(display="none"))
        from .course_panel import CoursePanel  # serial exams of the open patient

        self.course_panel = CoursePanel(lambda: self.findings)
        self.widget = W.VBox([style, top, self.caution_box, self.error, body, self.course_panel.widget, self.log])
        self.widget.add_class("cm-app")

    def _build_sensation(self) -> W.Widget:
        g = self._guard
        self.entry: dict[tuple, W.Widget] = {}
        gaps = {"T1", "L1", "S1"}
        # the dermatome header is one HTML widget (not 28): fewer models for the browser to build at start
        spans = "".join(f"<span class='cm-dh{' cm-dh-gap' if d in gaps else ''}'>{esc(d.replace('S4-5', 'S45'))}"
                        "</span>" for d in self.derms)
        head = W.HTML(f"<div class='cm-dermrow'><span class='cm-dh-lead'></span>{spans}</div>")
        head.add_class("cm-dermhead")
        rows = [head]
        # the 280 cells share one layout and one style model, the strip labels one layout: fewer widget messages
        # at start and less memory
        cell_layout, cell_style = W.Layout(width="19px", height="20px"), W.ButtonStyle()
        label_layout = W.Layout()
        for m in MODALITIES:
            group = []
            for s in SIDES:
                lab = W.HTML(f"{esc(MOD_WORD[m])} <b>{s[0].upper()}</b>", tooltip=f"{MOD_WORD[m]}, {s} side",
                             layout=label_layout)
                lab.add_class("cm-striplabel")
                cells = []
                for d in self.derms:
                    b = W.Button(description=GLYPH[None], tooltip=f"{MOD_WORD[m]} {s} {d}: not examined",
                                 layout=cell_layout, style=cell_style)
                    b.add_class("cm-cell")
                    b.add_class(f"cm-cell-{m}-{s}-{d}")
                    if d in gaps:
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
            "style='background:#dcecf7'>2</span>normal <span class='cm-key' style='background:#f0b34a'>1</span>"
            "impaired <span class='cm-key' style='background:#4b2a7b;color:#fff'>0</span>absent")
        legend.add_class("cm-legend")
        # quick level setter and fill
        self.level_from = W.Dropdown(options=self.derms, value="T10", layout=W.Layout(width="80px"))
        self.level_from.add_class("cm-level-from")
        self.level_grade = W.Dropdown(options=[("absent", 0), ("impaired", 1)], value=0,
                                      layout=W.Layout(width="95px"))
        self.level_mod = W.Dropdown(options=[("every modality", "all")] + [(MOD_WORD[m], m) for m in MODALITIES],
                                    value="pinprick", layout=W.Layout(width="130px"))
        self.level_side = W.Dropdown(options=[("both sides", "both"), ("left", "left"), ("right", "right")],
                                     value="both", layout=W.Layout(width="100px"))
        level_btn = W.Button(description="set, and all below", layout=W.Layout(width="130px"))
        level_btn.add_class("cm-level-apply")
        level_btn.on_click(g(lambda _b: self.set_level(self.level_from.value, self.level_grade.value,
                                                       self.level_mod.value, self.level_side.value)))
        fill_btn = W.Button(description="rest normal", layout=W.Layout(width="95px"),
                            tooltip="every sensory cell not yet examined (of the chosen modality) becomes normal")
        fill_btn.add_class("cm-fill")
        fill_btn.on_click(g(lambda _b: self.fill_normal(self.level_mod.value)))
        quick = W.HBox([self.level_grade, self.level_mod, self.level_side, W.HTML("&nbsp;from&nbsp;"),
                        self.level_from, level_btn, fill_btn], layout=W.Layout(margin="4px 0 0 0"))
        quick.add_class("cm-row")
        quick.add_class("cm-quick")
        return W.VBox([*rows, legend, quick])

    def _dropdown(self, key: tuple, width: str = "62px") -> W.Dropdown:
        shared = self.__dict__.setdefault("_dd_shared", {})  # one layout model per width, one style for all
        if width not in shared:
            shared[width] = W.Layout(width=width)
        extra = {"style": shared["style"]} if "style" in shared else {}
        dd = W.Dropdown(options=_options(key), value="", layout=shared[width], description_allow_html=False,
                        **extra)
        shared.setdefault("style", dd.style)
        dd.add_class("cm-dd")
        dd.add_class("cm-" + "-".join(str(k) for k in key if k != ""))
        dd.observe(self._guard(functools.partial(self._on_dropdown, key)), "value")
        self.entry[key] = dd
        return dd

    def _build_power(self) -> W.Widget:
        myos = anatomy().key_myotomes
        muscles = anatomy().muscle_table.set_index("myotome")["muscle"]
        head = [W.HTML("<b>key muscles (MRC 0-5, NT)</b>", layout=W.Layout(width="112px", min_width="112px"))]
        head += [W.HTML(f"<span title='{esc(muscles.get(m, ''))}'>{esc(m)}</span>", layout=W.Layout(width="62px"))
                 for m in myos]
        rows = [W.HBox(head)]
        for s in SIDES:
            lab = W.HTML(f"{s}")
            lab.add_class("cm-striplabel")
            rows.append(W.HBox([lab, *[self._dropdown(("motor", s, m)) for m in myos]]))
        rhead = [W.HTML("<b>reflexes</b>", layout=W.Layout(width="150px"))]
        rhead += [W.HTML(s, layout=W.Layout(width="100px")) for s in SIDES]
        refl = [W.HBox(rhead)]
        for r in REFLEXES:
            lab = W.HTML(esc(r.replace("_", " ")), layout=W.Layout(width="150px"))
            refl.append(W.HBox([lab, *[self._dropdown(("reflex", s, r), "100px") for s in SIDES]]))
        half = (len(refl) + 1) // 2
        grid = W.HBox([W.VBox(refl[:half]), W.VBox([refl[0]] + refl[half:])])
        return W.VBox([*rows, W.HTML("<hr style='border:0;border-top:1px solid #d5dbe3'>"), grid])

    def _build_sacral(self) -> W.Widget:
        rows = []
        for name in SIGNS:
            lab = W.HTML(esc(SIGN_WORD.get(name, name)), layout=W.Layout(width="180px"))
            rows.append(W.HBox([lab, self._dropdown(("sign", name, ""), "110px")]))
        for s in SIDES:
            lab = W.HTML(f"Horner sign, {s}", layout=W.Layout(width="180px"))
            rows.append(W.HBox([lab, self._dropdown(("sign", "horner", s), "110px")]))
        self.phase = W.ToggleButtons(options=[(p, p) for p in PHASES], value="chronic",
                                     tooltips=["weeks or more since onset", "hours to days since onset"])
        self.phase.add_class("cm-phase")
        self.phase.observe(self._guard(self._on_phase), "value")
        rows.append(W.HBox([W.HTML("<b>phase</b>", layout=W.Layout(width="180px")), self.phase]))
        return W.VBox(rows)

    def _build_hypotheses(self) -> W.Widget:
        head = W.HTML("Where the lesion may be")
        head.add_class("cm-heading")
        self.lead = W.HTML("")
        self.lead.add_class("cm-lead")
        self.poor = W.HTML("", layout=W.Layout(display="none"))
        self.poor.add_class("cm-poor")
        self.specific = W.HTML("")
        self.specific.add_class("cm-specific")
        self.rows = []
        for i in range(N_ROWS):
            b = W.Button(description=str(i + 1), tooltip="show this one")
            b.add_class(f"cm-pick-{i}")
            b.on_click(self._guard(functools.partial(self._on_pick, i)))
            text = W.HTML("", layout=W.Layout(flex="1 1 auto"))
            text.add_class("cm-hyptext")
            row = W.HBox([b, text], layout=W.Layout(width="100%"))
            row.add_class("cm-hyp")
            row.add_class(f"cm-hyp-{i}")
            self.rows.append((row, b, text))
        self.section_img = W.Image(format="png", layout=W.Layout(width=f"{pictures.SECTION_SIZE[0]}px",
                                                                 height=f"{pictures.SECTION_SIZE[1]}px"))
        self.section_img.add_class("cm-section")
        self.section_img.add_class("cm-pic")
        self.body_img = W.Image(format="png", layout=W.Layout(width=f"{pictures.BODY_SIZE[0]}px",
                                                              height=f"{pictures.BODY_SIZE[1]}px"))
        self.body_img.add_class("cm-body")
        self.body_img.add_class("cm-pic")
        self.map_mod = W.Dropdown(options=[(MOD_WORD[m], m) for m in MAP_MODALITIES], value="pinprick",
                                  description="map", layout=W.Layout(width="170px", min_width="170px"))
        self.map_mod.add_class("cm-map-mod")
        self.map_mod.observe(self._guard(lambda _c: self._render()), "value")
        self.pic_caption = W.HTML("")
        self.pic_caption.add_class("cm-legend")
        self.facts = W.HTML("")
        self.facts.add_class("cm-facts")
        pics = W.HBox([self.section_img, self.body_img], layout=W.Layout(justify_content="space-between"))
        under = W.HBox([self.map_mod, self.pic_caption], layout=W.Layout(align_items="center"))
        col = W.VBox([head, self.poor, self.lead, *[r[0] for r in self.rows], pics, under, self.facts,
                      self.specific],
                     layout=W.Layout(width="580px", min_width="560px"))
        col.add_class("cm-col")
        col.add_class("cm-hyps")
        return col

    # ------------------------------------------------------------ handlers

    def _on_cell(self, m, s, d, _button):
        self.click_cell(m, s, d)

    def _on_dropdown(self, key, change):
        if self._syncing:
            return
        self.set_item(key, _from_option(key, change["new"]))

    def _on_phase(self, change):
        if not self._syncing:
            self.set_phase(change["new"])

    def _on_pick(self, i, _button):
        self.select(i)

    def _on_next(self, i, _button):
        tests = self.ranking.next_tests if self.ranking else ()
        if i < len(tests):
            self.goto(tests[i].item)

    def _on_demo(self, change):
        if self._syncing or not change["new"]:
            return
        self.load_demo(change["new"])

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
                self.show_error(f"{name}: {max(size, len(content)):,} bytes is over the 1 MB limit; "
                                "nothing was loaded")
            else:
                self.load(content, name=name)
        finally:
            self._syncing = True
            try:
                self.upload.value = ()
            finally:
                self._syncing = False

    def _offer_save(self):
        data = base64.b64encode(self.save_document().encode("utf-8")).decode("ascii")
        self.download.value = (f"<a class='cm-link' download='findings.json' "
                               f"href='data:application/json;base64,{data}' style='color:#fff'>⤓ findings.json</a>")

    def _offer_report(self):
        data = base64.b64encode(self.report_pdf()).decode("ascii")
        self.download.value = (f"<a class='cm-link' download='cordmap-case.pdf' "
                               f"href='data:application/pdf;base64,{data}' style='color:#fff'>⤓ cordmap-case.pdf</a>")

    # ------------------------------------------------------------ bringing widgets in line with the state

    def _sync_entry(self) -> None:
        f = self.findings
        self._syncing = True
        try:
            for key, w in self.entry.items():
                v = f.items.get(key)
                if key[0] == "sensory":
                    cls = f"cm-s{v}" if v is not None else None
                    want = tuple(c for c in w._dom_classes if c not in ("cm-s0", "cm-s1", "cm-s2"))
                    want = want + ((cls,) if cls else ())
                    if tuple(w._dom_classes) != want:
                        with w.hold_sync():  # one message per cell: colour, digit and tooltip arrive together
                            w._dom_classes = want
                            w.description = GLYPH[v]
                            w.tooltip = f"{MOD_WORD[key[1]]} {key[2]} {key[3]}: {GRADE_WORD[v]}"
                else:
                    opt = _to_option(v)
                    if w.value != opt:
                        w.value = opt
            if self.phase.value != f.phase:
                self.phase.value = f.phase
            if self.demo_pick.value != "":
                self.demo_pick.value = ""
        finally:
            self._syncing = False
        label = f.label or "unlabelled exam"
        self.case_label.value = f"{esc(label)} · {esc(f.phase)}"

    def _render(self) -> None:
        self._render_head()
        self._render_rest()

    def _render_head(self) -> None:
        """The poor-fit verdict, the leader and the selected hypothesis' cross-section."""
        r = self.ranking
        hyps = r.hypotheses
        verdict = {"poor": "Poor fit", "normal": "Normal", "empty": "Nothing entered"}.get(r.fit)
        if verdict:
            self.poor.value = f"{verdict}: {esc(r.advice or 'no hypothesis explains these findings well')}"
            self.poor.layout.display = None
        else:
            self.poor.value = ""
            self.poor.layout.display = "none"
        if hyps:
            h0 = hyps[0]
            self.lead.value = (f"Leading: <b class='cm-lead-text'>{esc(h0.lesion.describe())}</b> "
                               f"({h0.probability:.0%})")
        else:
            self.lead.value = "Leading: <b class='cm-lead-text'>none</b>"
        self.specific.value = "<br>".join(f"• {esc(c)}" for c in r.cautions if c not in cautions.GENERAL)
        if hyps and not self._defer:
            les = hyps[min(self.selected, len(hyps) - 1)].lesion
            self.section_img.value = pictures.section(les.top, les)

    def _render_rest(self) -> None:
        """The ranked list, the next tests, the body map and the facts of the selected hypothesis."""
        r = self.ranking
        hyps = r.hypotheses
        for i, (row, _b, text) in enumerate(self.rows):
            if i >= len(hyps):
                row.layout.display = "none"
                continue
            h = hyps[i]
            row.layout.display = None
            width = max(1, round(90 * h.probability))
            text.value = (f"<span class='cm-bartrack'><span class='cm-bar' style='width:{width}px'></span></span>"
                          f"<b>{esc(h.lesion.describe())}</b> {h.probability:.0%}<br>"
                          f"<span class='cm-why'>{esc(_reason(h))}</span>")
            sel = "cm-selected" in row._dom_classes
            if (i == self.selected) != sel:
                (row.add_class if i == self.selected else row.remove_class)("cm-selected")
        tests = r.next_tests
        for i, b in enumerate(self.next_buttons):
            if i < len(tests):
                t = tests[i]
                why = t.why[len(t.finding):].lstrip(" :—-") if t.why.startswith(t.finding) else t.why
                b.description = f"{t.finding}: {why}"
                b.tooltip = f"{t.finding}: {t.why} (expected gain {t.gain:.2f})"
                b.layout.display = None
            else:
                b.layout.display = "none"
        none = not tests and r.fit in ("good", "poor")
        self.nt_head.value = ("Worth examining next: no bedside test left would change what is done; imaging tells "
                              "the remaining hypotheses apart" if none else "Worth examining next")
        self._render_selected()

    def _render_selected(self) -> None:
        r = self.ranking
        if not r.hypotheses:
            self.facts.value = "No hypothesis to show."
            return
        h = r.hypotheses[min(self.selected, len(r.hypotheses) - 1)]
        les = h.lesion
        if self._defer:  # the pictures (and the prediction they need) come with draw_pictures
            self.pic_caption.value = "drawing the cross-section and the body map…"
        else:
            pred = pictures.predicted(h)
            self.body_img.value = pictures.body_map(self.findings, pred, self.map_mod.value)
            n_dis = len(pictures.disagreements(self.findings, pred))
            self.pic_caption.value = (f"left: cross-section at {esc(les.top)} with the lesion · right: "
                                      f"{esc(MOD_WORD[self.map_mod.value])}, entered against predicted; "
                                      f"{n_dis} disagreement{'s' if n_dis != 1 else ''} marked")
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
        lines.append(self._classification_line())
        self.facts.value = "<br>".join(lines)

    def _classification_line(self) -> str:
        c = self.ranking.classification
        if c is None:
            return "classification of the entered exam: not available"
        d = c.to_dict() if hasattr(c, "to_dict") else dict(c)
        try:
            return (f"classification of the entered exam: AIS <b>{esc(d['ais'])}</b>, neurological level "
                    f"<b>{esc(d['neurological_level'])}</b>, sensory {esc(d['sensory_level']['left'])}/"
                    f"{esc(d['sensory_level']['right'])}, motor {esc(d['motor_level']['left'])}/"
                    f"{esc(d['motor_level']['right'])} (left/right)")
        except (KeyError, TypeError):
            return f"classification: {esc(d)}"


def dashboard(findings=None, ranker=None, pictures_in_background: bool = True) -> ExamApp:
    """Build the app for the dashboard: findings from the argument, else from $CORDMAP_FINDINGS, else a demo.

    The two pictures are drawn in a background thread (``pictures_in_background``), so the page is served while
    matplotlib loads and draws: the ranking shows about a second sooner on a cold start."""
    import os

    app = ExamApp(demo.case(), ranker=ranker, defer_pictures=True)
    path = findings or os.environ.get("CORDMAP_FINDINGS")
    if path:
        try:
            app._commit(parse(Path(path)), reason=f"loaded {os.path.basename(str(path))}")
        except CordmapError as e:
            app.show_error(e)
    if pictures_in_background:
        threading.Thread(target=app.draw_pictures, name="cordmap-pictures", daemon=True).start()
    else:
        app.draw_pictures()
    return app
