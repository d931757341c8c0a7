"""Findings format version 2 (``cordmap-findings/2``): version 1 plus three optional keys.

* ``muscles``: per side, the non-key limb muscles that separate a root from a peripheral nerve (`nerves.muscle_names`),
  MRC 0-5 or "NT" -> items ``("muscle", side, name)``.
* ``tenderness``: a list of vertebrae tender to percussion (C1..C7, T1..T12, L1..L5, S1) -> ``("tenderness",
  vertebra, "")`` = True.
* ``band_pain``: per side, dermatomes (or ranges, as in ``sensory``) of band-like or radicular pain ->
  ``("band_pain", side, dermatome)`` = True.

Tenderness and band pain are recorded where found; a vertebra or dermatome not listed is not taken as examined and
normal. A version-1 document using one of these keys is refused with a line saying to set the format.
`cordmap.findings_document` (parse, write) and `cordmap.findings_tidy` (tidy rows) call the functions here; the
ranker reads muscles through the atlas and the two clues through `cordmap.clues`.
"""
from __future__ import annotations

from .anatomy import SIDES, anatomy
from .errors import CordmapError, bad_value, shown
from .items import read_mrc

FORMAT2 = "cordmap-findings/2"
KEYS = ("muscles", "tenderness", "band_pain")
KINDS = ("muscle", "tenderness", "band_pain")  # the item kinds these keys make (a tidy row's `exam`)
VERTEBRAE = tuple([f"C{i}" for i in range(1, 8)] + [f"T{i}" for i in range(1, 13)]
                  + [f"L{i}" for i in range(1, 6)] + ["S1"])
PRESENT = ("true", "yes", "present", "1")  # a tidy row's value for a tender vertebra or a painful dermatome


def muscle_names() -> tuple[str, ...]:
    from .nerves import muscle_names as names

    return names()


def item_values(key: tuple) -> tuple | None:
    """The allowed values of a version-2 item; None for any other item."""
    if key[0] == "muscle":
        return (0, 1, 2, 3, 4, 5)
    if key[0] in ("tenderness", "band_pain"):
        return (True,)
    return None


def items() -> tuple[tuple, ...]:
    """The non-key muscle items (the atlas predicts them; the clues are read by `cordmap.clues`)."""
    return tuple(("muscle", s, m) for s in SIDES for m in muscle_names())


def label(key: tuple) -> str | None:
    """Plain words for a version-2 item; None for any other."""
    if key[0] == "muscle":
        from .nerves import limb_muscles

        return f"{key[1]} {key[2].replace('_', ' ')} ({limb_muscles()[key[2]][0]})"
    if key[0] == "tenderness":
        return f"{key[1]} tender to percussion"
    if key[0] == "band_pain":
        return f"{key[1]} band-like pain {key[2]}"
    return None


def refuse_in_v1(doc, fmt) -> None:
    """A version-1 document using a version-2 key: one line naming the key."""
    for k in KEYS:
        if k in doc:
            raise CordmapError(f"{k}: a {FORMAT2} key in a {fmt} document; set \"format\": \"{FORMAT2}\" to use it")


def parse_into(doc, items: dict, mapping, known, expand_range) -> None:
    """Read the version-2 keys of `doc` into `items` (the helpers are findings_document.py's, passed in to
    avoid a cycle)."""
    names = muscle_names()
    muscles = mapping(doc.get("muscles", {}), "muscles")
    known(muscles, SIDES, "muscles", "side")
    for side, entries in muscles.items():
        entries = mapping(entries, f"muscles.{side}")
        known(entries, names, f"muscles.{side}", "muscle")
        for name, grade in entries.items():
            items[("muscle", side, name)] = read_mrc(grade, f"muscles.{side}[{name!r}]")
    tender = doc.get("tenderness", [])
    if not isinstance(tender, list):
        raise CordmapError(f"tenderness: expected a list of vertebrae such as [\"T6\"], got {shown(tender, 40)}")
    for i, v in enumerate(tender):
        if not isinstance(v, str) or v.strip() not in VERTEBRAE:
            raise bad_value(f"tenderness[{i}]", v, VERTEBRAE, "vertebra")
        items[("tenderness", v.strip(), "")] = True
    band = mapping(doc.get("band_pain", {}), "band_pain")
    known(band, SIDES, "band_pain", "side")
    for side, specs in band.items():
        if not isinstance(specs, list):
            raise CordmapError(f"band_pain.{side}: expected a list of dermatomes such as [\"T6\"], got "
                               f"{shown(specs, 40)}")
        for i, spec in enumerate(specs):
            where = f"band_pain.{side}[{i}]"
            if not isinstance(spec, str):
                raise bad_value(where, spec, ["C2..S4-5", "a range such as T5-T6"], "dermatome")
            for d in expand_range(spec, where):
                items[("band_pain", side, d)] = True


def uses_v2(items) -> bool:
    return any(k[0] in KINDS for k in items)


def write_into(f, doc: dict) -> None:
    """Add the version-2 keys of `f` to its document (and set the format) when it has any."""
    if not uses_v2(f.items):
        return
    a = anatomy()
    doc["format"] = FORMAT2
    names = muscle_names()
    mus = {s: {m: f.items[("muscle", s, m)] for m in names if ("muscle", s, m) in f.items} for s in SIDES}
    if any(mus.values()):
        doc["muscles"] = {s: v for s, v in mus.items() if v}
    tender = [v for v in VERTEBRAE if ("tenderness", v, "") in f.items]
    if tender:
        doc["tenderness"] = tender
    band = {}
    for s in SIDES:
        derms = [d for d in a.dermatomes if ("band_pain", s, d) in f.items]
        if derms:
            band[s] = _runs(derms)
    if band:
        doc["band_pain"] = band


def _runs(derms: list[str]) -> list[str]:
    a = anatomy().dermatomes
    idx = [a.index(d) for d in derms]
    out, start = [], idx[0]
    for p, q in zip(idx, idx[1:] + [None]):
        if q is None or q != p + 1:
            out.append(a[start] if start == p else f"{a[start]}-{a[p]}")
            start = q
    return out


def tidy_row(key: tuple, value) -> tuple | None:
    """The tidy row (exam, name, side, segment, value) of a version-2 item; None for any other."""
    if key[0] == "muscle":
        return ("muscle", key[2], key[1], "", str(value))
    if key[0] == "tenderness":
        return ("tenderness", "", "", key[1], "true")
    if key[0] == "band_pain":
        return ("band_pain", "", key[1], key[2], "true")
    return None


def tidy_item(exam, name, side, seg) -> tuple:
    if exam == "muscle":
        return (exam, side, name)
    return (exam, side, seg)


def from_row(doc: dict, exam: str, name: str, side: str, seg: str, value: str, where: str) -> None:
    """Put one version-2 tidy row into the document being built (and mark it version 2)."""
    doc["format"] = FORMAT2
    if exam == "muscle":
        doc.setdefault("muscles", {}).setdefault(side, {})[name] = value
        return
    if value.strip().lower() not in PRESENT:
        raise bad_value(f"{where}.value", value, PRESENT, f"{exam} value (rows list what was found)")
    if exam == "tenderness":
        doc.setdefault("tenderness", []).append(seg)
    else:
        doc.setdefault("band_pain", {}).setdefault(side, []).append(seg)
