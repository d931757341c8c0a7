"""Clinical cautions: the general lines every surface shows, and the ones a ranking's hypotheses call for.

`GENERAL` (and `BANNER`, the same in one paragraph) is shown wherever a result is shown (command line, widget,
report), whatever the exam. `applicable` picks the cautions that fit *this* exam, each a text of its own (so a
dashboard or report can show them apart from the general lines), weighted by the hypotheses that carry the
probability: the posterior mass of the candidates that explain the entered abnormal findings.

The rules, each with where it comes from (check values: /work/shared/reference/clinical-check-values.md):

* autonomic dysreflexia: cord lesions at or above T6 only [Consortium for Spinal Cord Medicine, autonomic
  dysreflexia guideline, 2nd ed., 2001; SCIRE project, autonomic dysreflexia]; never a root, a peripheral nerve,
  the cauda equina or the conus (below T6, outside the cord). Judgement: never a motor neuron or anterior horn
  lesion, nor the dorsal columns alone or a combined degeneration, since they spare the descending sympathetic
  pathways of the lateral funiculus; and only a lesion predicted to interrupt the pathways to the body below (an
  abnormal finding in the legs, sacrum or sphincters), so a compression that catches only a root does not count.
* breathing: cord lesions at C5 and above (the diaphragm is C3-C5), and any acute complete cervical lesion
  (C8 and above), or a weak diaphragm entered (check values section 8, breathing: common clinical practice, no
  source). A one-sided lesion (hemicord, side compression, one anterior horn) counts from C4 up (the phrenic nucleus'
  main segment) when it is predicted to weaken the diaphragm: one paralysed hemidiaphragm is usually tolerated at
  rest (from memory; judgement). Acute complete: the acute phase with a candidate predicting no sacral sparing,
  or the entered exam classified AIS A with its neurological level at C8 or above.
* cauda equina and conus syndromes: surgical emergencies needing urgent lumbosacral imaging (check values
  section 8: common clinical practice, no source). A syndrome: a cauda equina or conus lesion predicted to take
  the saddle or the sphincters (S3, S4-5 sensation, anal contraction or pressure, the bladder, the
  bulbocavernosus reflex); one that mimics a single S1 root does not raise it.
* acute myelopathy: extensor plantars, retention or a sensory level entered, the acute phase, or a leading cord
  compression; weakness counts when cord lesions other than a motor neuron or anterior horn disease carry most of
  the probability (common clinical practice, no source).
"""
from __future__ import annotations

from .nerves import nerve_ids

DECISION_SUPPORT = ("Decision support, not a diagnosis: local protocols and licensed clinicians decide.")
EMERGENCY = ("Acute myelopathy is an emergency: suspected acute compression needs urgent imaging and a "
             "surgical opinion.")
CAUDA_EQUINA = ("Cauda equina and conus syndromes are surgical emergencies: urgent imaging of the lumbosacral "
                "spine.")
BREATHING = "Lesions at or above C3-C5 threaten breathing: watch vital capacity and the airway."
DYSREFLEXIA = "Lesions at or above T6 carry a risk of autonomic dysreflexia."

GENERAL = (DECISION_SUPPORT, EMERGENCY, CAUDA_EQUINA, BREATHING, DYSREFLEXIA)
BANNER = ("Decision support, not a diagnosis. Acute myelopathy and cauda equina syndrome are emergencies; high "
          "cervical lesions threaten breathing; lesions at or above T6 risk autonomic dysreflexia. Local protocols "
          "and licensed clinicians decide.")

# The cautions that fit one exam (a ranking's `cautions`, besides DECISION_SUPPORT): their own texts.
THIS_MYELOPATHY = ("This exam may be an acute myelopathy, an emergency: suspected acute cord compression needs "
                   "urgent MRI and a surgical opinion.")
THIS_CAUDA_EQUINA = ("A cauda equina or conus syndrome is among the leading hypotheses: a surgical emergency. "
                     "Urgent MRI of the lumbosacral spine and a surgical opinion; check the bladder (retention) "
                     "and saddle sensation.")
THIS_BREATHING = ("Risk to breathing: a cord lesion at C5 or above, or an acute complete cervical lesion, "
                  "can weaken the diaphragm (C3-C5). Watch vital capacity and the airway.")
THIS_DYSREFLEXIA = ("Risk of autonomic dysreflexia: a cord lesion at or above T6 is among the leading "
                    "hypotheses. Watch for sudden hypertension with headache and act by the local protocol.")

# A candidate counts toward a caution only if it predicts nearly as large a share of the entered abnormal findings
# as the most probable candidate does (at least this fraction of that share): thousands of candidates that
# predict a near-normal exam (a thoracic anterior-horn lesion, say) must not raise a breathing caution for a
# lumbar radiculopathy. Judgement, checked in tests/test_cautions.py.
CAUTION_EXPLAINS = 0.9
CAUTION_MASS = 0.1  # share of the explaining posterior that raises a caution (one in ten; judgement: a radiculopathy
# whose exam leaves the legs unexamined keeps a tail of small cord compressions at its level, a few per cent in all,
# which must not call a root lesion a dysreflexia risk)

OUTSIDE = ("root", "cauda_equina", "polyneuropathy", *nerve_ids(), "normal")  # not the cord (nerves: cordmap.nerves)
CORD_COMPRESSION = ("lateral_compression", "anterior_compression", "posterior_compression")
SACRAL = ("cauda_equina", "conus")
# cord patterns that spare the descending autonomic (sympathetic) pathways: see the module doc
AUTONOMIC_SPARED = ("motor_neuron", "anterior_horn", "posterior", "posterolateral", "conus")
MOTOR_ONLY = ("motor_neuron", "anterior_horn")  # weakness from these is not taken for an acute myelopathy


def applicable(at, post, f, classification=None) -> tuple[str, ...]:
    """The cautions that fit the exam `f`, given the atlas `at` and the posterior `post` of its candidates (and
    the exam's ISNCSCI classification when the caller has it); always ending with DECISION_SUPPORT."""
    import numpy as np

    from .anatomy import anatomy
    from .hypotheses import count_abnormal
    from .items import abnormal, item_values

    a = anatomy()
    abn = [at.item_index[k] for k, v in f.items.items() if k in at.item_index and abnormal(k, v)]
    if abn:
        share = count_abnormal(at, abn) / len(abn)  # predicted abnormal, any grade
        reference = share[int(np.argmax(post))]  # what the most probable candidate explains
        w = np.where(share >= CAUTION_EXPLAINS * reference, post, 0.0)
        w = w / w.sum() if w.sum() > 0 else w
    else:
        w = np.zeros_like(post)
    def isin(names):
        return _pattern_in(at, names)

    cord = ~isin(OUTSIDE)
    below = _below_t6_abnormal(at)
    out = []
    weak = any(k[0] == "motor" and v in item_values(k) and v < 4 for k, v in f.items.items())  # "NT" is not weak
    in_cord = w[cord & ~isin(SACRAL + MOTOR_ONLY)].sum()
    sacral = w[isin(SACRAL)].sum()
    extensor = any(k[0] == "reflex" and k[2] == "plantar" and v == "extensor" for k, v in f.items.items())
    # retention and a sensory level are signs of the cauda equina too: they call it a myelopathy unless the sacral
    # hypotheses carry most of the probability
    if (w[isin(CORD_COMPRESSION)].sum() > 0.1 or f.phase == "acute" or extensor
            or (_myelopathy_signs(f) and sacral <= 0.5) or (weak and in_cord > 0.5)):
        out.append(THIS_MYELOPATHY)
    if w[isin(SACRAL) & _saddle(at)].sum() > CAUTION_MASS:
        out.append(THIS_CAUDA_EQUINA)
    k = at.item_index[("sign", "diaphragm", "")]
    weak_diaphragm = at.likely[k] == item_values(("sign", "diaphragm", "")).index("weak")
    bilateral = _bilateral(at)
    high = cord & (((at.top <= a.index("C5")) & bilateral & (below | weak_diaphragm))
                   | ((at.top <= a.index("C4")) & weak_diaphragm))
    acute_complete = cord & (at.top <= a.index("C8")) & (f.phase == "acute") & _no_sacral_sparing(at)
    if (w[high | acute_complete].sum() > CAUTION_MASS or f.items.get(("sign", "diaphragm", "")) == "weak"
            or _acute_complete_cervical(f, classification)):
        out.append(THIS_BREATHING)
    if w[cord & ~isin(AUTONOMIC_SPARED) & (at.top <= a.index("T6")) & below].sum() > CAUTION_MASS:
        out.append(THIS_DYSREFLEXIA)
    out.append(DECISION_SUPPORT)
    return tuple(out)


def specific(texts) -> tuple[str, ...]:
    """The cautions among `texts` (a ranking's) that fit this exam: those besides the general lines."""
    return tuple(x for x in texts if x not in GENERAL)


def combined(*groups) -> tuple[str, ...]:
    """The cautions of several exams (or alarms) as one list: DECISION_SUPPORT first, then every other text once,
    in the order first met."""
    out = [DECISION_SUPPORT]
    for group in groups:
        out += [x for x in group if x not in out]
    return tuple(out)


_BELOW: dict[int, tuple] = {}
_PATTERNS_IN: dict[tuple, tuple] = {}


def _pattern_in(at, names: tuple):
    """(n,) bool: the candidate's pattern is one of `names` (`np.isin` over the atlas' patterns, kept per atlas)."""
    import numpy as np

    hit = _PATTERNS_IN.get((id(at), names))
    if hit is None or hit[0] is not at:
        hit = _PATTERNS_IN[(id(at), names)] = (at, np.isin(at.pattern_of, names))
    return hit[1]


def _bilateral(at):
    """(n,) bool: a lesion of both sides (kept per atlas)."""
    import numpy as np

    hit = _PATTERNS_IN.get((id(at), "bilateral"))
    if hit is None or hit[0] is not at:
        hit = _PATTERNS_IN[(id(at), "bilateral")] = (at, np.array([v.side == "both" for v in at.variants])[at.variant])
    return hit[1]


def _below_t6_abnormal(at):
    """(n,) bool per candidate: it predicts an abnormal finding of the legs, the sacrum or the sphincters (items of
    segments L1 and below), so it interrupts the pathways to the body below T6. Built once per atlas."""
    import numpy as np

    hit = _BELOW.get(id(at))
    if hit is not None and hit[0] is at:
        return hit[1]
    low_derms = {"L1", "L2", "L3", "L4", "L5", "S1", "S2", "S3", "S4-5"}
    rows = [i for i, k in enumerate(at.items)
            if (k[0] == "sensory" and k[3] in low_derms) or (k[0] == "motor" and k[2][0] in "LS")
            or (k[0] == "reflex" and k[2] in ("knee", "ankle", "plantar", "cremasteric"))
            or (k[0] == "sign" and k[1] in ("voluntary_anal_contraction", "deep_anal_pressure", "bulbocavernosus",
                                            "bladder"))]
    out = (np.asarray(at.abnormal)[rows] > 0).any(axis=0)
    _BELOW[id(at)] = (at, out)
    return out


_SADDLE: dict[int, tuple] = {}


def _saddle(at):
    """(n,) bool: the candidate predicts an abnormal saddle or sphincter finding (S3 or S4-5 sensation, anal
    contraction or pressure, bladder, bulbocavernosus reflex). Built once per atlas."""
    import numpy as np

    hit = _SADDLE.get(id(at))
    if hit is not None and hit[0] is at:
        return hit[1]
    rows = [i for i, k in enumerate(at.items)
            if (k[0] == "sensory" and k[3] in ("S3", "S4-5"))
            or (k[0] == "sign" and k[1] in ("voluntary_anal_contraction", "deep_anal_pressure", "bulbocavernosus",
                                            "bladder"))]
    out = (np.asarray(at.abnormal)[rows] > 0).any(axis=0)
    _SADDLE[id(at)] = (at, out)
    return out


def _no_sacral_sparing(at):
    """(n,) bool: the candidate predicts no voluntary anal contraction and no deep anal pressure (a complete
    lesion in the ISNCSCI sense, as far as the sacral signs go)."""
    vac = at.likely[at.item_index[("sign", "voluntary_anal_contraction", "")]] == 1  # (True, False): 1 is absent
    dap = at.likely[at.item_index[("sign", "deep_anal_pressure", "")]] == 1
    return vac & dap


def _acute_complete_cervical(f, classification=None) -> bool:
    """The entered exam, acute, classified AIS A with its neurological level at C8 or above (ISNCSCI)."""
    if f.phase != "acute":
        return False
    if classification is None:
        try:
            from .classify import classify

            classification = classify(f)
        except ValueError:  # an exam too sparse to classify says nothing here
            return False
    d = classification.to_dict()
    nli = str(d.get("neurological_level") or "")
    return d.get("ais") == "A" and nli[:1] == "C" and nli[1:].isdigit()


def _myelopathy_signs(f) -> bool:
    """Entered signs of a cord lesion that may be acute compression: extensor plantar, retention, a sensory level
    (an abnormal run on one side reaching S4-5 from at least three dermatomes higher, normal above it)."""
    from .anatomy import MODALITIES, SIDES, anatomy

    items = f.items
    if any(k[0] == "reflex" and k[2] == "plantar" and v == "extensor" for k, v in items.items()):
        return True
    if items.get(("sign", "bladder", "")) == "retention":
        return True
    derms = anatomy().dermatomes
    for mod in MODALITIES:
        for side in SIDES:
            vals = [items.get(("sensory", mod, side, d)) for d in derms]
            run = 0
            for v in reversed(vals):
                if v is None or v == 2:
                    break
                run += 1
            if run >= 3 and any(v == 2 for v in vals[: len(vals) - run]):
                return True
    return False
