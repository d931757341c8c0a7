"""Anatomy tables, loaded once from the CSV package data and checked on load.

Every table has a ``source`` column; see ``cordmap/data/README.md`` for what each one holds.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from importlib import resources

import pandas as pd

from .errors import CordmapError, bad_value

SIDES = ("left", "right")
MODALITIES = ("pinprick", "temperature", "light_touch", "vibration", "joint_position")


def _table(name: str, required: tuple[str, ...]) -> pd.DataFrame:
    with resources.files("cordmap.data").joinpath(name).open("r", encoding="utf-8") as fh:
        df = pd.read_csv(fh, dtype=str, keep_default_na=False)
    missing = [c for c in (*required, "source") if c not in df.columns]
    if missing:
        raise CordmapError(f"cordmap/data/{name}: missing columns {missing}")
    empty = df.index[df["source"].str.strip() == ""].tolist()
    if empty:
        raise CordmapError(f"cordmap/data/{name}: rows {empty} have no source")
    return df


@dataclass(frozen=True, eq=False)
class Anatomy:
    segments: tuple[str, ...]
    segment_table: pd.DataFrame
    dermatomes: tuple[str, ...]
    dermatome_table: pd.DataFrame
    dermatome_segments: dict[str, tuple[int, ...]]
    muscle_table: pd.DataFrame
    key_myotomes: tuple[str, ...]
    muscle_weights: dict[str, dict[int, float]]  # muscle myotome or name -> {segment index: weight}
    reflex_table: pd.DataFrame
    reflex_segments: dict[str, tuple[int, ...]]
    column_table: pd.DataFrame
    lamination_table: pd.DataFrame
    axon_cm: dict[str, tuple[float, ...]]  # 'sensory'/'motor'/'dorsal_column' -> per segment, axon length (cm)

    def index(self, seg: str, where: str = "segment") -> int:
        try:
            return self.segments.index(seg)
        except ValueError:
            raise bad_value(where, seg, self.segments, "segment") from None

    def column_range(self, name: str) -> range:
        first, last = _column_rows(self)[name]
        return range(self.index(first), self.index(last) + 1)

    def vertebra(self, seg: str) -> str:
        return _vertebrae(self)[seg]

    def muscle_name(self, myotome: str) -> str:
        return _muscle_names(self)[myotome]


def _weights(spec: str, segs: tuple[str, ...]) -> dict[int, float]:
    out = {}
    for part in spec.split(";"):
        name, w = part.split(":")
        out[segs.index(name)] = float(w)
    if abs(sum(out.values()) - 1) > 1e-6:
        raise CordmapError(f"cordmap/data/muscles.csv: weights {spec!r} do not sum to 1")
    return out


@cache
def anatomy() -> Anatomy:
    seg = _table("segments.csv", ("segment", "region", "index", "vertebra", "transverse_mm", "ap_mm"))
    segs = tuple(seg["segment"])
    if len(segs) != 31 or segs[0] != "C1" or segs[-1] != "Co1":
        raise CordmapError("cordmap/data/segments.csv: expected the 31 segments C1..Co1 in order")
    if list(seg["index"].astype(int)) != list(range(31)):
        raise CordmapError("cordmap/data/segments.csv: index column must run 0..30")
    for v in seg["vertebra"]:
        if v[0] not in "CTLS":
            raise CordmapError(f"cordmap/data/segments.csv: bad vertebra {v!r}")
    derm = _table("dermatomes.csv", ("dermatome", "segments", "key_point"))
    dseg = {r.dermatome: tuple(segs.index(s) for s in r.segments.split(";")) for r in derm.itertuples()}
    mus = _table("muscles.csv", ("muscle", "myotome", "key", "segments"))
    key = tuple(mus.loc[mus["key"] == "yes", "myotome"])
    weights = {r.myotome if r.key == "yes" else r.muscle: _weights(r.segments, segs) for r in mus.itertuples()}
    ref = _table("reflexes.csv", ("reflex", "kind", "segments", "accepted_range"))
    rseg = {r.reflex: tuple(segs.index(s) for s in r.segments.split(";")) for r in ref.itertuples()}
    col = _table("columns.csv", ("column", "first", "last"))
    for c in ("first", "last"):
        bad = set(col[c]) - set(segs)
        if bad:
            raise CordmapError(f"cordmap/data/columns.csv: unknown segments {sorted(bad)}")
    lam = _table("lamination.csv", ("tract", "axis", "outer_or_lateral", "inner_or_medial"))
    ax = _table("axons.csv", ("segment", "sensory_cm", "motor_cm", "dorsal_column_cm"))
    if tuple(ax["segment"]) != segs:
        raise CordmapError("cordmap/data/axons.csv: expected the 31 segments C1..Co1 in order")
    try:
        axons = {k: tuple(float(v) for v in ax[f"{k}_cm"]) for k in ("sensory", "motor", "dorsal_column")}
    except ValueError:
        raise CordmapError("cordmap/data/axons.csv: lengths must be numbers") from None
    if any(not 0 < v < 200 for vs in axons.values() for v in vs):
        raise CordmapError("cordmap/data/axons.csv: lengths must lie between 0 and 200 cm")
    return Anatomy(segs, seg, tuple(derm["dermatome"]), derm, dseg, mus, key, weights, ref, rseg, col, lam, axons)


CORD_REGIONS = ("cervical", "thoracic", "lumbosacral")


def cord_region(index: int) -> int:
    """The region of the cord of a segment index: 0 cervical, 1 thoracic, 2 lumbosacral (lumbar, sacral, Co1)."""
    r = anatomy().segment_table["region"].iloc[index]
    return {"cervical": 0, "thoracic": 1}.get(r, 2)


REFLEXES = ("biceps", "brachioradialis", "triceps", "finger_flexors", "hoffmann", "abdominal_upper",
            "abdominal_lower", "cremasteric", "knee", "ankle", "plantar")
TENDON_REFLEXES = ("biceps", "brachioradialis", "triceps", "finger_flexors", "knee", "ankle")


@cache
def _vertebrae(a: Anatomy) -> dict[str, str]:
    return dict(zip(a.segment_table["segment"], a.segment_table["vertebra"]))


@cache
def _column_rows(a: Anatomy) -> dict[str, tuple[str, str]]:
    """column -> (first, last) segment of the column table (read once: the sections ask for every column)."""
    t = a.column_table
    return {str(c): (f, la) for c, f, la in zip(t["column"], t["first"], t["last"])}


@cache
def _muscle_names(a: Anatomy) -> dict[str, str]:
    t = a.muscle_table
    return dict(zip(t["myotome"], t["muscle"]))


@dataclass(frozen=True)
class FamilyPrior:
    """A lesion family's prior weight; hypotheses whose rostral segment is in `common` weigh `factor` times more."""
    weight: float
    common: frozenset[str]
    factor: float


@cache
def family_priors() -> dict[str, FamilyPrior]:
    """The prior of each lesion family (`data/priors.csv`); every pattern must have a positive weight."""
    from .lesions import PATTERNS

    t = _table("priors.csv", ("family", "weight", "common_tops", "common_factor"))
    segs = anatomy().segments
    out = {}
    for r in t.itertuples():
        where = f"cordmap/data/priors.csv family {r.family!r}"
        if r.family not in PATTERNS:
            raise bad_value("cordmap/data/priors.csv family", r.family, [*PATTERNS], "pattern")
        try:
            w, k = float(r.weight), float(r.common_factor)
        except ValueError:
            raise CordmapError(f"{where}: weight and common_factor must be numbers") from None
        if not (w > 0 and k > 0):
            raise CordmapError(f"{where}: weight and common_factor must be > 0, got {r.weight!r}, {r.common_factor!r}")
        common = frozenset(x for x in r.common_tops.split(";") if x)
        for x in common:
            if x not in segs:
                raise bad_value(f"{where} common_tops", x, segs, "segment")
        out[r.family] = FamilyPrior(w, common, k)
    missing = [p for p in PATTERNS if p not in out]
    if missing:
        raise CordmapError(f"cordmap/data/priors.csv: no weight for {missing}")
    return out
