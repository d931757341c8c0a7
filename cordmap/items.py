"""Exam items: the one registry of what can be recorded, which value is normal, and how each is said.

Every consumer asks here: the findings reader (`findings.py`), the atlas (`atlas.abnormality`), the ranker (what a
hypothesis explains, the fit verdict, the cautions' weights), the next tests (where each item is tested at the
bedside), the report, the notebook views and the widgets. `tests/test_items.py` walks every item kind and value
through all of them and checks they give one verdict of normal or abnormal.

An item key is a named tuple of its kind, equal to (and hashing like) the plain tuple, so ``("motor", "left",
"C5")`` finds the same entry as ``MotorKey("motor", "left", "C5")``:

* `SensoryKey` ``("sensory", modality, side, dermatome)``: 0 absent, 1 impaired, 2 normal
* `MotorKey` ``("motor", side, myotome)``: MRC grade 0..5, or ``"NT"`` (not testable: neither normal nor abnormal)
* `ReflexKey` ``("reflex", side, reflex)``: its `Scale` by reflex (tendon, plantar, Hoffmann, superficial)
* `SignKey` ``("sign", name, side)``: side "left"/"right" for the Horner sign, "" otherwise
* findings format 2 (`findings_v2`): `MuscleKey` ``("muscle", side, name)``, a non-key limb muscle, MRC grade or
  "NT"; `TendernessKey` ``("tenderness", vertebra, "")`` and `BandPainKey` ``("band_pain", side, dermatome)``,
  clues recorded only where found (True, abnormal), read by `clues` and never atlas rows

The values of an item are a `Scale`: its canonical values in the atlas' order, how far each is from normal (0 is
normal), its words, and the values that record "not tested". A new item kind is one `Kind` in `KINDS` (its key
type, how its items are enumerated, its scale, its words and bedside site); a new reflex or sign is one row of
`REFLEXES` or `SIGNS`.
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from functools import cache
from typing import NamedTuple

from .anatomy import MODALITIES, SIDES, TENDON_REFLEXES, _table, anatomy
from .anatomy import REFLEXES as REFLEX_NAMES
from .errors import CordmapError, bad_value


@dataclass(frozen=True)
class Scale:
    """The values of one item: `values` in the atlas' order, `distance` from normal per value (0 is normal),
    `words` per value, and `untested` values that record "not tested" (never normal, never abnormal, unknown to
    the model)."""

    values: tuple
    distance: tuple[int, ...]
    words: tuple[str, ...]
    untested: tuple = ()

    def __repr__(self) -> str:
        marked = ", ".join(repr(v) + ("*" if d else "") for v, d in zip(self.values, self.distance))
        return f"Scale({marked})"  # abnormal values starred

    @property
    def normal(self) -> tuple:
        return tuple(v for v, d in zip(self.values, self.distance) if d == 0)

    @property
    def abnormal_values(self) -> tuple:
        return tuple(v for v, d in zip(self.values, self.distance) if d > 0)

    @property
    def allowed(self) -> tuple:
        """Every value an exam may record: the model's values and the "not tested" ones."""
        return (*self.values, *self.untested)

    def verdict(self, value) -> bool | None:
        """True abnormal, False normal, None for a "not tested" or unknown value."""
        for v, d in zip(self.values, self.distance):
            if _same_value(v, value):
                return d > 0
        return None

    def word(self, value) -> str:
        for v, w in zip(self.values, self.words):
            if _same_value(v, value):
                return w
        return "not testable" if value in self.untested else str(value)


def _same_value(a, b) -> bool:
    """Equal, and a truth value only matches a truth value (True is not grade 1 here)."""
    return isinstance(a, bool) == isinstance(b, bool) and a == b


def _same(values) -> tuple[str, ...]:
    return tuple(str(v) for v in values)


SENSORY_SCALE = Scale((0, 1, 2), (2, 1, 0), ("absent", "impaired", "normal"))
MRC_SCALE = Scale((0, 1, 2, 3, 4, 5), (5, 4, 3, 2, 1, 0), tuple(f"grade {g}" for g in range(6)), untested=("NT",))
TENDON_SCALE = Scale(("absent", "reduced", "normal", "brisk"), (1, 1, 0, 1),
                     _same(("absent", "reduced", "normal", "brisk")))
PLANTAR_SCALE = Scale(("flexor", "extensor", "mute"), (0, 1, 1), ("flexor", "extensor", "mute"))
PRESENT_NORMAL = Scale(("present", "absent"), (0, 1), ("present", "absent"))  # superficial reflexes, bulbocavernosus
PRESENT_ABNORMAL = Scale(("present", "absent"), (1, 0), ("present", "absent"))  # Hoffmann sign
TRUE_NORMAL = Scale((True, False), (0, 1), ("present", "absent"))  # anal contraction, anal pressure
TRUE_ABNORMAL = Scale((True, False), (1, 0), ("present", "absent"))  # Horner sign
BLADDER_SCALE = Scale(("normal", "retention", "urgency"), (0, 1, 1), ("normal", "retention", "urgency"))
DIAPHRAGM_SCALE = Scale(("normal", "weak"), (0, 1), ("normal", "weak"))
CLUE_SCALE = Scale((True,), (1,), ("present",))  # tenderness, band pain: recorded where found


class Entry(NamedTuple):
    """One reflex or sign: its scale, its short name (table headings) and what to do at the bedside."""
    scale: Scale
    words: str
    bedside: str


REFLEXES: dict[str, Entry] = {
    "biceps": Entry(TENDON_SCALE, "biceps", "biceps jerk"),
    "brachioradialis": Entry(TENDON_SCALE, "brachioradialis", "brachioradialis (supinator) jerk"),
    "triceps": Entry(TENDON_SCALE, "triceps", "triceps jerk"),
    "finger_flexors": Entry(TENDON_SCALE, "finger flexors", "finger flexor jerk"),
    "hoffmann": Entry(PRESENT_ABNORMAL, "Hoffmann sign", "Hoffmann sign"),
    "abdominal_upper": Entry(PRESENT_NORMAL, "abdominal, upper", "upper abdominal reflex"),
    "abdominal_lower": Entry(PRESENT_NORMAL, "abdominal, lower", "lower abdominal reflex"),
    "cremasteric": Entry(PRESENT_NORMAL, "cremasteric", "cremasteric reflex"),
    "knee": Entry(TENDON_SCALE, "knee", "knee jerk"),
    "ankle": Entry(TENDON_SCALE, "ankle", "ankle jerk"),
    "plantar": Entry(PLANTAR_SCALE, "plantar", "plantar response"),
}
SIGNS: dict[str, Entry] = {  # the order of the findings document and of the sacral tab
    "voluntary_anal_contraction": Entry(TRUE_NORMAL, "voluntary anal contraction",
                                        "voluntary anal contraction (rectal exam)"),
    "deep_anal_pressure": Entry(TRUE_NORMAL, "deep anal pressure", "deep anal pressure (rectal exam)"),
    "bulbocavernosus": Entry(PRESENT_NORMAL, "bulbocavernosus reflex", "bulbocavernosus reflex"),
    "bladder": Entry(BLADDER_SCALE, "bladder", "the bladder (retention: a post-void scan)"),
    "diaphragm": Entry(DIAPHRAGM_SCALE, "diaphragm", "the diaphragm (sniff test, vital capacity)"),
}
HORNER = Entry(TRUE_ABNORMAL, "Horner sign", "Horner sign")
MODALITY_WORDS = {"pinprick": "pinprick", "temperature": "temperature", "light_touch": "light touch",
                  "vibration": "vibration", "joint_position": "joint position"}
if set(REFLEXES) != set(REFLEX_NAMES) or set(TENDON_REFLEXES) != {r for r, e in REFLEXES.items()
                                                                   if e.scale is TENDON_SCALE}:
    raise CordmapError("cordmap/items.py: REFLEXES must list anatomy.REFLEXES, with the tendon reflexes' scale")


# ---------------------------------------------------------------- the key types

def _key_type(name: str, fields: str) -> type:
    """A named key type: a NamedTuple whose first field is the kind, shown as the plain tuple it equals."""
    cls = NamedTuple(name, [(f, str) for f in ("kind", *fields.split())])
    cls.__repr__ = lambda self: repr(tuple(self))
    return cls


SensoryKey = _key_type("SensoryKey", "modality side dermatome")
MotorKey = _key_type("MotorKey", "side myotome")
ReflexKey = _key_type("ReflexKey", "side reflex")
SignKey = _key_type("SignKey", "name side")
MuscleKey = _key_type("MuscleKey", "side name")
TendernessKey = _key_type("TendernessKey", "vertebra blank")
BandPainKey = _key_type("BandPainKey", "side dermatome")


# ---------------------------------------------------------------- the kinds

# the functions of a kind read its key by position: a plain tuple works as well as the named key

def _sensory_site(k: tuple) -> str:
    _, mod, side, derm = k
    place = sites().get((mod if mod in ("vibration", "joint_position") else "skin", derm), derm)
    return f"{MODALITY_WORDS[mod]} on the {side} at {place} ({derm})"


def _sensory_feasible(k: tuple) -> bool:
    return k[1] in ("pinprick", "light_touch", "temperature") or (k[1], k[3]) in sites()


def _reflex_label(k: tuple) -> str:
    if k[2] in ("plantar", "hoffmann"):
        return f"{k[1]} {k[2]} response"
    return f"{k[1]} {k[2].replace('_', ' ')} reflex"


def _limb_muscle(k: tuple) -> str:
    from .nerves import limb_muscles

    return f"{k[1]} {k[2].replace('_', ' ')} ({limb_muscles()[k[2]][0]})"


def _limb_muscle_keys() -> list:
    from .nerves import muscle_names

    return [MuscleKey("muscle", s, m) for s in SIDES for m in muscle_names()]


def _sign_entry(k: tuple) -> Entry:
    return HORNER if k[1] == "horner" else SIGNS[k[1]]


@dataclass(frozen=True)
class Kind:
    """One kind of item: its key type, every item of it in a fixed order, its scale, its label ('pinprick left
    T10'), where and what to test at the bedside, and whether a bedside examiner can test it."""
    name: str
    key: type
    keys: Callable[[], list]
    scale: Callable[[tuple], Scale]
    label: Callable[[tuple], str]
    bedside: Callable[[tuple], str]
    feasible: Callable[[tuple], bool] = lambda k: True

    def __repr__(self) -> str:
        return f"Kind({self.name})"


KINDS: dict[str, Kind] = {k.name: k for k in (
    Kind("sensory", SensoryKey,
         lambda: [SensoryKey("sensory", m, s, d) for m in MODALITIES for s in SIDES for d in anatomy().dermatomes],
         lambda k: SENSORY_SCALE,
         lambda k: f"{k[1].replace('_', ' ')} {k[2]} {k[3]}",
         _sensory_site, _sensory_feasible),
    Kind("motor", MotorKey,
         lambda: [MotorKey("motor", s, m) for s in SIDES for m in anatomy().key_myotomes],
         lambda k: MRC_SCALE,
         lambda k: f"{k[1]} {k[2]} {anatomy().muscle_name(k[2])}",
         lambda k: f"{k[1]} {anatomy().muscle_name(k[2])} strength ({k[2]})"),
    Kind("reflex", ReflexKey,
         lambda: [ReflexKey("reflex", s, r) for s in SIDES for r in REFLEXES],
         lambda k: REFLEXES[k[2]].scale,
         _reflex_label,
         lambda k: f"{k[1]} {REFLEXES[k[2]].bedside}"),
    Kind("sign", SignKey,
         lambda: [SignKey("sign", "horner", s) for s in SIDES] + [SignKey("sign", n, "") for n in SIGNS],
         lambda k: _sign_entry(k).scale,
         lambda k: f"Horner sign {k[2]}" if k[1] == "horner" else k[1].replace("_", " "),
         lambda k: f"Horner sign on the {k[2]} (ptosis, small pupil)" if k[1] == "horner" else SIGNS[k[1]].bedside),
    Kind("muscle", MuscleKey, _limb_muscle_keys, lambda k: MRC_SCALE, _limb_muscle,
         lambda k: f"{_limb_muscle(k)} strength"),
    # clues, not deficits: no atlas rows (the model predicts no tenderness), read by `clues`
    Kind("tenderness", TendernessKey, list, lambda k: CLUE_SCALE, lambda k: f"{k[1]} tender to percussion",
         lambda k: f"percussion over the {k[1]} spinous process", lambda k: False),
    Kind("band_pain", BandPainKey, list, lambda k: CLUE_SCALE, lambda k: f"{k[1]} band-like pain {k[2]}",
         lambda k: f"ask about band-like pain on the {k[1]} at {k[2]}", lambda k: False),
)}


# ---------------------------------------------------------------- the registry's questions

@cache
def all_items() -> tuple[tuple, ...]:
    """Every item an exam can record, in a fixed order (the atlas' rows)."""
    return tuple(k for kind in KINDS.values() for k in kind.keys())


@cache
def _typed() -> dict[tuple, tuple]:
    return {tuple(k): k for k in all_items()}


def key(k: tuple) -> tuple:
    """The named key of an item (`SensoryKey` ...); a tuple the registry does not know comes back as it is."""
    return _typed().get(k, k)


def kind(k: tuple) -> Kind:
    """The kind of an item key (a one-line CordmapError for an unknown one)."""
    try:
        return KINDS[k[0]]
    except (KeyError, IndexError, TypeError):
        raise CordmapError(f"unknown exam item {k!r}; allowed kinds {', '.join(KINDS)}") from None


def scale(k: tuple) -> Scale:
    """The `Scale` of one item."""
    return kind(k).scale(k)


def item_values(k: tuple) -> tuple:
    """The canonical values of one item the model knows, in the atlas' order ("NT" is not among them)."""
    return scale(k).values


def allowed(k: tuple) -> tuple:
    """Every value an exam may record for this item (a key muscle may also be "NT")."""
    return scale(k).allowed


def verdict(k: tuple, value) -> bool | None:
    """True abnormal, False normal, None for "NT" (not tested) or a value the item has not."""
    return scale(k).verdict(value)


def abnormal(k: tuple, value) -> bool:
    """Whether a recorded value is abnormal: False for a normal value, and for "NT" or a value the item has not."""
    return scale(k).verdict(value) is True


def normal(k: tuple, value) -> bool:
    """Whether a recorded value is normal (False for "NT": not tested is not normal)."""
    return scale(k).verdict(value) is False


def read_mrc(grade, where: str):
    """An MRC grade as a findings document gives it (an int 0..5, its digit as text, or 'NT') in canonical form;
    anything else is a one-line error naming `where` (a key muscle and a non-key muscle are read alike)."""
    if isinstance(grade, str) and grade.strip().upper() == "NT":
        return "NT"
    if isinstance(grade, int) and not isinstance(grade, bool) and 0 <= grade <= 5:
        return grade
    if isinstance(grade, str) and grade.strip() in list("012345"):
        return int(grade)
    raise bad_value(where, grade, ["0", "1", "2", "3", "4", "5", "NT"], "MRC grade")


def distance(k: tuple) -> tuple[int, ...]:
    """For each value of `item_values(k)`, how far from normal it is (0 = normal)."""
    return scale(k).distance


def value_words(k: tuple, value) -> str:
    """A recorded value in words: 'absent', 'grade 3', 'present', 'brisk', 'not testable'."""
    return scale(k).word(value)


def item_label(k: tuple) -> str:
    """Plain words for one item, e.g. 'pinprick left T10', 'left knee reflex'."""
    return kind(k).label(k)


def bedside(k: tuple) -> str:
    """Where and what to test, e.g. 'pinprick on the left at the nipple line (T4)'."""
    return kind(k).bedside(k)


def feasible(k: tuple) -> bool:
    """Whether a bedside examiner can test this item: pinprick, light touch and temperature on any dermatome,
    vibration and joint position only where `data/bedside.csv` names a site; key muscles, reflexes and signs
    always."""
    return kind(k).feasible(k)


@cache
def sites() -> dict[tuple[str, str], str]:
    """`data/bedside.csv`: {(modality or 'skin', dermatome): the site in words}, checked on load."""
    t = _table("bedside.csv", ("modality", "dermatome", "site"))
    derms = anatomy().dermatomes
    out = {}
    for r in t.itertuples():
        if r.modality not in ("skin", "vibration", "joint_position"):
            raise CordmapError(f"cordmap/data/bedside.csv: unknown modality {r.modality!r}; allowed skin, "
                               f"vibration, joint_position")
        if r.dermatome not in derms:
            raise CordmapError(f"cordmap/data/bedside.csv: unknown dermatome {r.dermatome!r}")
        if (r.modality, r.dermatome) in out:
            raise CordmapError(f"cordmap/data/bedside.csv: {r.modality} {r.dermatome} given twice")
        out[(r.modality, r.dermatome)] = r.site
    if any(("skin", d) not in out for d in derms):
        raise CordmapError("cordmap/data/bedside.csv: every dermatome needs its skin site")
    return out
