"""Where to image a lesion, each window with its reason in one line.

The anatomy is data: `data/segments.csv` (the vertebral body behind each cord segment) and `data/foramina.csv`
(per intervertebral level: the root leaving by its foramen, the root a paracentral disc there compresses), both
with their sources, checked on load (`foramina`). The rules:

* a cord lesion: the vertebral bodies over its damaged segments and over the segments above where its rostral
  edge may lie (a sensory level lies at or a segment or two below its lesion), and one body more below (the
  segment-to-vertebra rule, "about one body above in the neck, two in the upper and three in the lower thoracic
  cord", is uncertain by a body either way: segments.csv's sources);
* an extrinsic compression lies at or above the sensory level it makes, sometimes several segments higher (the
  outer, sacral fibres of the spinothalamic tract are caught first): its window reaches further up, and it
  carries the advice to image the whole spine when metastatic compression is suspected (several levels are often
  involved; check values section 8: common clinical practice, no source);
* a root: the foramen it leaves by and the disc that can compress it there (cervical root n leaves above
  vertebra n, C8 between C7 and T1; a paracentral lumbar disc takes the traversing root of the level below, a
  far-lateral one the exiting root; check values section 8);
* the cauda equina: the lumbar sac from the conus (about L1) down to where its highest involved root leaves;
* the conus: the vertebrae behind the sacral cord, and L2 (the conus ends between T12 and L2 in most adults);
* a diffuse degeneration: the region of the cord where its signs begin and the region below (no one level).

`Window.advice` marks a window that applies only if a condition holds (whole-spine imaging for suspected
metastases); `vertebral_levels` merges the others into the levels a ranking lists.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cache

from .anatomy import CORD_REGIONS, _table, anatomy, cord_region
from .errors import CordmapError
from .lesions import NORMAL, PATTERNS, Lesion
from .nerves import nerve_ids, nerve_study

SPINE = tuple([f"C{i}" for i in range(1, 8)] + [f"T{i}" for i in range(1, 13)] + [f"L{i}" for i in range(1, 6)]
              + ["S1", "sacrum"])

# A cord lesion's window, in cord segments above its rostral segment: the rostral edge of an intrinsic lesion lies
# at its sensory level or a segment or two above (judgement from common clinical practice: image above the
# level); an extrinsic compression may lie several segments higher. Below, the window reaches at least
# BELOW_MIN segments under the rostral one (the lesion's own segments are uncertain too).
ABOVE, ABOVE_COMPRESSION, BELOW_MIN = 2, 3, 2
# The segment-to-vertebra rule is uncertain by about a body either way (segments.csv's sources): above, the window's
# segments above the rostral one cover it; below, one more body is added.
BODY_SPREAD = 1
COMPRESSIONS = ("lateral_compression", "anterior_compression", "posterior_compression")
NOTHING = ("polyneuropathy", *nerve_ids(), NORMAL)  # nothing in the spine to image (nerves: cordmap.nerves)


@dataclass(frozen=True)
class Window:
    """Vertebrae to image ('C5', 'C5-C6' for the disc and foramen between) and why, in one line."""
    levels: tuple[str, ...]
    why: str
    advice: bool = False  # applies only if its condition holds; not part of the levels a ranking lists

    def __repr__(self):
        return f"Window({' '.join(self.levels)}: {self.why[:40]})"

    def to_dict(self) -> dict:
        d = {"levels": list(self.levels), "why": self.why}
        if self.advice:
            d["only_if"] = True
        return d


@dataclass(frozen=True)
class Foramen:
    level: str  # 'C5-C6', or 'sacrum'
    exiting: tuple[str, ...]
    paracentral: str  # the root a paracentral disc at this level compresses ('' where there is no disc)


@cache
def foramina() -> tuple[Foramen, ...]:
    """`data/foramina.csv`, checked: every level a known pair of adjacent vertebrae (or 'sacrum'), every root a
    segment of the cord, each root C2..S4 leaving by exactly one level."""
    t = _table("foramina.csv", ("level", "exiting_root", "paracentral_disc_root"))
    segs = anatomy().segments
    out = []
    for r in t.itertuples():
        where = f"cordmap/data/foramina.csv level {r.level!r}"
        if r.level != "sacrum":
            parts = r.level.split("-")
            if len(parts) != 2 or any(p not in SPINE for p in parts) or SPINE.index(parts[1]) != SPINE.index(
                    parts[0]) + 1:
                raise CordmapError(f"{where}: expected two adjacent vertebrae such as 'C5-C6', or 'sacrum'")
        roots = tuple(x for x in r.exiting_root.split(";") if x)
        for x in (*roots, r.paracentral_disc_root):
            if x and x not in segs:
                raise CordmapError(f"{where}: unknown root {x!r}")
        out.append(Foramen(r.level, roots, r.paracentral_disc_root))
    exits = [x for f in out for x in f.exiting]
    want = [s for s in segs[segs.index("C2"):segs.index("S4") + 1]]
    if sorted(exits, key=segs.index) != want:
        raise CordmapError("cordmap/data/foramina.csv: each root C2..S4 must leave by exactly one level")
    return tuple(out)


def _levels_of(level: str) -> tuple[str, ...]:
    return (level,)


def root_windows(root: str) -> tuple[Window, ...]:
    """The foramen a root leaves by and the disc levels that can compress it, each with its reason."""
    exit_ = next((f for f in foramina() if root in f.exiting), None)
    out = []
    discs = [f for f in foramina() if f.paracentral == root]
    for f in discs:
        if exit_ is not None and f.level == exit_.level:
            continue
        out.append(Window(_levels_of(f.level), f"a paracentral {f.level} disc compresses the {root} root as it "
                                                  f"traverses that level toward its foramen"))
    if exit_ is not None:
        if exit_.level == "sacrum":
            out.append(Window(("sacrum",), f"the {root} root leaves by its sacral foramen"))
        elif root[0] == "C":
            out.append(Window(_levels_of(exit_.level), f"the {root} root leaves by the {exit_.level} foramen; a "
                                                           f"{exit_.level} disc or osteophyte compresses it there"))
        elif exit_.paracentral == root or root[0] == "T":
            out.append(Window(_levels_of(exit_.level), f"the {root} root leaves by the {exit_.level} foramen, "
                                                           f"where a lateral {exit_.level} disc compresses it"))
        else:
            out.append(Window(_levels_of(exit_.level), f"the {root} root leaves by the {exit_.level} foramen, "
                                                           f"where a foraminal or far-lateral {exit_.level} disc "
                                                           f"compresses it"))
    else:  # S5 and the coccygeal root leave by the sacral hiatus
        out.append(Window(("sacrum",), f"the {root} root leaves at the lower end of the sacrum"))
    return tuple(out)


def _vertebrae(first: int, last: int) -> list[str]:
    """The vertebral bodies behind cord segments first..last (indices), in order, without repeats."""
    a = anatomy()
    return list(dict.fromkeys(a.vertebra(a.segments[s]) for s in range(first, last + 1)))


def _spread(bodies: list[str], up: int, down: int) -> tuple[str, ...]:
    """`bodies` (vertebra names, head to tail) with `up` more bodies above and `down` below."""
    spine = SPINE[:-1]  # 'sacrum' is S1
    i, j = spine.index(bodies[0]), spine.index(bodies[-1])
    return tuple(spine[max(0, i - up): min(len(spine), j + down + 1)])


def _cord_window(lesion: Lesion) -> tuple[Window, ...]:
    a = anatomy()
    t, b = lesion.top_index, lesion.bottom_index
    compression = lesion.pattern in COMPRESSIONS
    above = ABOVE_COMPRESSION if compression else ABOVE
    first, last = max(0, t - above), min(max(b, t + BELOW_MIN), len(a.segments) - 1)
    bodies = _vertebrae(first, last)
    core = _vertebrae(t, b)
    segs = lesion.top if t == b else f"{lesion.top}-{lesion.bottom}"
    behind = core[0] if len(core) == 1 else f"{core[0]}-{core[-1]}"
    why = (f"the damaged segment{'s' * (t != b)} {segs} lie{'s' * (t == b)} behind {behind} (a body either way), "
           f"and the lesion may start up to {above} segments above ")
    why += ("the level it gives: an extrinsic compression lies at or above its sensory level" if compression
            else "the sensory level it gives")
    out = [Window(_spread(bodies, 0, BODY_SPREAD), why)]
    if compression:
        out.append(Window(("whole spine",), "if metastatic compression is suspected (a known cancer), image the "
                                            "whole spine: several levels are often involved", advice=True))
    return tuple(out)


def _conus_window(lesion: Lesion) -> tuple[Window, ...]:
    a = anatomy()
    bodies = _vertebrae(lesion.top_index, a.index("Co1"))
    levels = _spread(bodies + ["L2"] if "L2" not in bodies else bodies, BODY_SPREAD, 0)
    return (Window(levels, f"the conus (sacral cord, {lesion.top} down) lies behind {bodies[0]}-{bodies[-1]}; its "
                           f"tip reaches L2 in some adults"),)


def _cauda_window(lesion: Lesion) -> tuple[Window, ...]:
    """From the conus tip (L1) to where the highest involved root leaves the spine."""
    root = lesion.top
    exit_ = next((f for f in foramina() if root in f.exiting), None)
    last = "S1" if exit_ is None or exit_.level == "sacrum" else exit_.level.split("-")[1]
    levels = SPINE[SPINE.index("L1"): SPINE.index(last) + 1]
    where = "the sacrum" if last == "S1" else f"the {exit_.level} foramen where the {root} root leaves"
    return (Window(levels, f"the cauda equina's roots run in the lumbar sac below the conus (about L1); a lesion "
                           f"taking the {root} root and those below lies between L1 and {where}"),
            Window(("L4-L5", "L5-S1"), "a central disc at L4-L5 or L5-S1 is the common cause: include both",
                   advice=True))


# A diffuse degeneration has no one level to image: the MRI looks for what it shows (the dorsal columns' signal in
# combined degeneration, usually cervical and upper thoracic) and for the compression or inflammation that mimics
# it, over the region of the cord where the signs begin and the region below (cervical and thoracic spine for a
# cervical picture; thoracic spine and conus for a thoracic one). Common clinical practice, no source.
_REGIONS = (("C1", "T12"), ("T1", "Co1"), ("L1", "Co1"))


def _diffuse_window(lesion: Lesion) -> tuple[Window, ...]:
    a = anatomy()
    region = cord_region(lesion.top_index)
    first, last = (a.index(s) for s in _REGIONS[region])
    return (Window(tuple(_vertebrae(first, last)),
                   f"a diffuse degeneration has no one level: image the {CORD_REGIONS[region]} cord, where its signs "
                   f"begin, and below, for what it shows and for a compression that mimics it"),)


def windows(lesion: Lesion) -> tuple[Window, ...]:
    """Where to image `lesion`, each window with its reason (none for a normal cord or a polyneuropathy)."""
    p = lesion.pattern
    if p in nerve_ids():  # no spine window; the test that places it (cordmap.nerves)
        return (Window((), nerve_study(p, lesion.side), advice=True),)
    if p in NOTHING:
        return ()
    if p == "root":
        return root_windows(lesion.top)
    if p == "cauda_equina":
        return _cauda_window(lesion)
    if p == "conus":
        return _conus_window(lesion)
    if p in PATTERNS and PATTERNS[p].diffuse:
        return _diffuse_window(lesion)
    return _cord_window(lesion)


def vertebral_levels(lesion: Lesion) -> tuple[str, ...]:
    """The levels to image for a lesion (its windows that hold without a condition), head to tail."""
    return merge_levels([w.levels for w in windows(lesion) if not w.advice])


def _position(v: str) -> tuple[int, bool]:
    head = v.split("-")[0]
    return (SPINE.index(head) if head in SPINE else len(SPINE), "-" in v)


def merge_levels(lists) -> tuple[str, ...]:
    """The union of several level lists, head to tail (a disc level 'L4-L5' after 'L4')."""
    seen = list(dict.fromkeys(v for levels in lists for v in levels))
    return tuple(sorted(seen, key=_position))


def merge_windows(groups) -> tuple[Window, ...]:
    """Windows of several lesions (a hypothesis, its variants, the lesions with its exam), in order, without a
    window that adds no level to those before it (conditional ones without repeats)."""
    out, seen = [], set()
    for w in (w for ws in groups for w in ws):
        if w.advice:
            if w not in out:
                out.append(w)
        elif not set(w.levels) <= seen:
            out.append(w)
            seen |= set(w.levels)
    return tuple(out)


def span(levels) -> str:
    """'T1-T7' for a run of vertebral bodies, else the levels joined ('L4-L5, L5-S1')."""
    levels = tuple(levels)
    idx = [SPINE.index(v) for v in levels if v in SPINE]
    if len(levels) > 2 and len(idx) == len(levels) and idx == list(range(idx[0], idx[0] + len(idx))):
        return f"{levels[0]}-{levels[-1]}"
    return ", ".join(levels)
