"""Classify one exam by the rules of the ISNCSCI 2019 revision (format ``cordmap-classification/1``).

Rules implemented (ISNCSCI 2019 revision, Rupp et al., Top Spinal Cord Inj Rehabil 2021;27(2):1-22, as summarized in
shared/reference/clinical-check-values.md section 1c; the finer points marked "from memory" below):

* Levels run C1, C2 .. S3, S4-5 (S4-5 is one level). C1 always counts as normal sensation.
* Sensory level per side: the most caudal dermatome with light touch and pinprick both normal (2), all above normal.
* Motor level per side: the most caudal level whose function is at least antigravity with every level above normal.
  A key muscle counts as antigravity at grade >= 3 and as normal at grade 5. Where there is no key muscle
  (C1-C4, T2-L1, S2-S5) the level's motor function is presumed normal exactly when the sensory level of that side
  reaches it, so in those regions the motor level follows the sensory level (e.g. sensation normal to C4 and C5
  graded 2 gives motor level C4; T1 graded 5 with sensory level T5 gives motor level T5).
* Neurological level of injury (NLI): the most rostral of the four levels.
* Complete: no light touch or pinprick at S4-5 on either side, no deep anal pressure (DAP) and no voluntary anal
  contraction (VAC).
* AIS: A complete. Motor incomplete: VAC present, or sensory incomplete with motor function (grade >= 1) more than
  three levels below the motor level of that side. B: incomplete but not motor incomplete. C or D: motor incomplete,
  D when at least half of the key muscles (both sides) below the single NLI are graded >= 3. E: everything normal
  (reported with a note: the standard grades E only in someone who had a deficit before).
* Non-key muscles: the findings format has no field for them. ``classify(findings, non_key={"left": "L3"})`` takes,
  per side, the most caudal segment with preserved non-key motor function. It is used only where the 2019 revision
  allows non-key muscles, namely for the "more than three levels below the motor level" test that tells B from C.
  It never changes motor levels, the C/D count or the zones of partial preservation.
* Zones of partial preservation (2019): motor ZPP on both sides whenever VAC is absent; sensory ZPP on a side when DAP
  is absent and that side has no light touch and no pinprick at S4-5; otherwise "NA". The zone's value is the most
  caudal segment with some function (key muscle grade >= 1; light touch or pinprick >= 1) below the motor or sensory
  level, or the level itself when there is none.
* Scores: upper and lower extremity motor scores (25 per limb), light touch and pinprick (56 per side, 112 in all).

A missing sensory or motor item was not examined and counts as NT; nothing here treats it as normal. Every value that
NT entries leave open is "ND", with the reason in ``Classification.reasons``. The computation keeps, for each quantity,
the set of values still possible under every way the NT entries could be filled in; a value is reported only when that
set has one member.

Where each rule lives: `classify_levels` (sensory, motor and neurological levels), `classify_grade` (completeness
and the AIS grade), `classify_zones` (zones of partial preservation), `classify_scores` (scores); `classify_exam`
reads the exam for them, `classify_result` holds the `Classification` and its document, `classify_text` puts it
in words. This module puts them together (`classify`) and is the one place the rest of cordmap imports them from.
"""
from __future__ import annotations

from collections.abc import Mapping

from .anatomy import SIDES
from .classify_exam import Exam, named, non_key_levels
from .classify_grade import completeness, impairment_grade, sacral_sparing
from .classify_levels import neurological_levels, side_levels
from .classify_result import AIS_GRADES, FORMAT, NA, ND, Classification, Score, Sided, levels
from .classify_scores import scores
from .classify_text import classification_line, main_text, rows
from .classify_zones import zones
from .findings import parse

# what the CLI, the report, the views, the course modules, the schemas, the widgets and the tests import from here
__all__ = ["AIS_GRADES", "FORMAT", "NA", "ND", "Classification", "Score", "Sided", "classification_line", "classify",
           "levels", "main_text", "rows"]


def classify(findings, non_key: Mapping[str, str | None] | None = None) -> Classification:
    """Classify one exam by the ISNCSCI 2019 rules (see the module doc).

    `findings` is a `Findings` or anything `cordmap.findings.parse` reads. `non_key` optionally gives, per side, the
    most caudal segment with preserved non-key muscle function; it only helps tell AIS B from C.
    """
    ex = Exam(parse(findings))
    nk = non_key_levels(non_key)
    reasons: list[tuple[str, str]] = []  # (field, why it is "ND"), in the order of the document's fields

    sides = {s: side_levels(ex, s) for s in SIDES}
    sensory = Sided(*(named(f"sensory_level.{s}", sides[s].sensory, sides[s].sensory_unknown, reasons)
                      for s in SIDES))
    motor = Sided(*(named(f"motor_level.{s}", sides[s].motor, sides[s].motor_unknown, reasons) for s in SIDES))
    nli_set = neurological_levels(sides["left"], sides["right"])
    nli = named("neurological_level", nli_set, [*sides["left"].sensory_unknown, *sides["left"].motor_unknown,
                                                 *sides["right"].sensory_unknown, *sides["right"].motor_unknown],
                reasons)
    sacral = sacral_sparing(ex)
    complete = completeness(sacral, reasons)
    ais, notes = impairment_grade(ex, sides, nli_set, sacral, nk, reasons)
    zpp_sensory, zpp_motor = zones(ex, sides, sacral, reasons)
    uems, lems, lt, pp = scores(ex, reasons)
    return Classification(sensory, motor, nli, complete, ais, zpp_sensory, zpp_motor, uems, lems, lt, pp,
                          tuple(reasons), tuple(notes))
