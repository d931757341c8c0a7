"""`ExamState`: the open exam, its ranking and the hypothesis on show; the one place that re-ranks.

The state is one `cordmap.Findings` value (``state.findings``), rebuilt with `Findings.replace` on every change, and
the `Ranking` of it. `commit` ranks a new exam and only when that works makes it the state; then ``revision`` goes
up by one, and every panel, observing ``revision``, shows the new state. Panels never rank and never compute: they
call the actions here and show what the core returned. Any error inside a callback (`guard`) is shown on the error
line (the trait ``error``) and kept in ``errors``; a fault of the app itself is named by its type only, its
traceback goes to the server's log.
"""
from __future__ import annotations

import functools
import sys
import traceback

import traitlets as T

from cordmap import demo
from cordmap.anatomy import MODALITIES, SIDES, anatomy
from cordmap.errors import CordmapError
from cordmap.findings import Findings, item_label, parse

from .labels import CYCLE, GRADE_WORD, allowed

MAX_UPLOAD = 1_000_000  # bytes


def _default_ranker():
    from cordmap.rank import rank

    return rank


class ExamState(T.HasTraits):
    revision = T.Int(0)  # +1 after every commit or selection: panels observe it and show the state
    busy = T.Bool(False)  # True from the start of a change until every panel has shown it
    error = T.Unicode("")  # the error line ('' hides it)
    status = T.Unicode("")  # what the last action did, in a few words
    target = T.Any(None)  # an exam item a next test points at: the app rings its entry widget

    def __init__(self, ranker=None, top: int = 5):
        super().__init__()
        self.ranker_fn = ranker
        self.top = top
        self.errors: list[str] = []
        self.findings = Findings()
        self.ranking = None
        self.selected = 0
        self.pinned = None  # a hypothesis the user picked: kept selected while it stays in the list
        self.lead_changed = False
        self.derms = anatomy().dermatomes

    @property
    def ranker(self):
        if self.ranker_fn is None:
            self.ranker_fn = _default_ranker()
        return self.ranker_fn

    # ------------------------------------------------------------ errors

    def guard(self, fn):
        """Wrap a callback: any exception is shown on the error line, never swallowed."""

        @functools.wraps(fn)
        def run(*args, **kw):
            try:
                return fn(*args, **kw)
            except Exception as e:  # noqa: BLE001 - shown to the user, kept in self.errors
                self.show_error(e)
        return run

    def show_error(self, e: BaseException | str) -> None:
        if isinstance(e, (str, CordmapError)):
            msg = str(CordmapError(e))  # one line, bounded
        else:
            msg = (f"something went wrong inside cordmap ({type(e).__name__}); nothing was changed. The details "
                   "are in the server's log.")
            print("".join(traceback.format_exception(e)), file=sys.__stderr__, flush=True)
        self.errors.append(msg)
        self.error = msg

    # ------------------------------------------------------------ the one place that re-ranks

    def commit(self, new: Findings, reason: str = "") -> bool:
        """Rank `new`; only when that works it becomes the state. The panels are then brought in line (a failed
        ranking brings them back to the old state: the widget the user touched is put back)."""
        self.busy = True
        try:
            try:
                ranking = self.ranker(new, top=self.top)
            except Exception as e:  # noqa: BLE001 - shown to the user
                self.show_error(e)
                self.revision += 1
                return False
            old_lead = self.lead_lesion
            self.findings, self.ranking = new, ranking
            keep = [i for i, h in enumerate(ranking.hypotheses) if self.pinned is not None and h.lesion == self.pinned]
            self.selected = keep[0] if keep else 0
            if not keep:
                self.pinned = None  # follow the leader
            self.error = ""
            self.lead_changed = old_lead != self.lead_lesion
            self.revision += 1
            if reason:  # after the panels: a page that sees the status sees the new exam
                self.status = reason
            return True
        finally:
            self.busy = False

    def select(self, i: int) -> None:
        if self.ranking is None or not 0 <= i < len(self.ranking.hypotheses):
            raise CordmapError(f"hypothesis {i + 1} is not in the list")
        self.selected = i
        self.pinned = self.ranking.hypotheses[i].lesion if i else None
        self.busy = True
        try:
            self.revision += 1
        finally:
            self.busy = False

    @property
    def lead_lesion(self):
        if self.ranking is None or not self.ranking.hypotheses:
            return None
        return self.ranking.hypotheses[0].lesion

    @property
    def hypothesis(self):
        """The hypothesis on show (None when there is none)."""
        if self.ranking is None or not self.ranking.hypotheses:
            return None
        return self.ranking.hypotheses[min(self.selected, len(self.ranking.hypotheses) - 1)]

    # ------------------------------------------------------------ actions (used by the panels and tests)

    def set_item(self, key: tuple, value) -> bool:
        if value is None:
            return self.commit(self.findings.replace(remove=[key]))
        if value not in allowed(key):
            raise CordmapError(f"{item_label(key)}: {value!r} is not an allowed value")
        return self.commit(self.findings.replace({key: value}))

    def click_cell(self, modality: str, side: str, dermatome: str) -> bool:
        key = ("sensory", modality, side, dermatome)
        return self.set_item(key, CYCLE[self.findings.get(key)])

    def set_level(self, dermatome: str, grade: int = 0, modality: str = "all", side: str = "both") -> bool:
        """Grade `dermatome` and every dermatome below it; the ones above it are left as they are."""
        i = self.derms.index(dermatome)
        mods = MODALITIES if modality == "all" else (modality,)
        sides = SIDES if side == "both" else (side,)
        upd = {("sensory", m, s, d): grade for m in mods for s in sides for d in self.derms[i:]}
        return self.commit(self.findings.replace(upd), reason=f"{GRADE_WORD[grade]} from {dermatome} down")

    def fill_normal(self, modality: str = "all") -> bool:
        """Every sensory cell not yet examined becomes normal (of one modality, or of all)."""
        mods = MODALITIES if modality == "all" else (modality,)
        upd = {("sensory", m, s, d): 2 for m in mods for s in SIDES for d in self.derms
               if ("sensory", m, s, d) not in self.findings.items}
        return self.commit(self.findings.replace(upd), reason=f"{len(upd)} cells marked normal")

    def set_phase(self, phase: str) -> bool:
        return self.commit(self.findings.replace(phase=phase))

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
        return self.commit(f, reason=f"loaded {name}")

    def load_demo(self, name: str) -> bool:
        return self.commit(demo.case(name), reason=f"demo case {name}")

    def save_document(self) -> str:
        return self.findings.to_json()
