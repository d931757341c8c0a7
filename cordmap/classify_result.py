"""The classification's values: the level names, "ND" and "NA", the AIS grades and the `Classification` itself
(format ``cordmap-classification/1``), with its document. `cordmap.classify` computes it."""
from __future__ import annotations

import json
from dataclasses import dataclass
from functools import cache

from . import cautions
from .anatomy import anatomy

FORMAT = "cordmap-classification/1"
ND = "ND"
NA = "NA"
AIS_GRADES = ("A", "B", "C", "D", "E")


@cache
def levels() -> tuple[str, ...]:
    """The levels the classification speaks of, rostral to caudal: C1, then the 28 dermatomes C2 .. S4-5."""
    return ("C1", *anatomy().dermatomes)


@dataclass(frozen=True)
class Sided:
    """One value per side: a level name, "ND" or "NA"."""

    left: str
    right: str

    def to_dict(self) -> dict:
        return {"left": self.left, "right": self.right}


@dataclass(frozen=True)
class Score:
    """A score per side and in total; "ND" where an NT entry leaves it open."""

    left: int | str
    right: int | str
    total: int | str
    maximum_per_side: int

    def to_dict(self) -> dict:
        return {"left": self.left, "right": self.right, "total": self.total}


@dataclass(frozen=True)
class Classification:
    """The ISNCSCI classification of one exam (2019 rules): levels per side, neurological level, completeness,
    impairment grade (AIS), zones of partial preservation and scores; "ND" where the exam leaves a value open
    (`reasons` says why) and "NA" where a zone does not apply. Evaluate it in a notebook for a table."""

    sensory_level: Sided
    motor_level: Sided
    neurological_level: str
    complete: bool | str
    ais: str
    zpp_sensory: Sided
    zpp_motor: Sided
    uems: Score
    lems: Score
    light_touch: Score
    pinprick: Score
    reasons: tuple[tuple[str, str], ...] = ()  # (field, why it is "ND")
    notes: tuple[str, ...] = ()

    def __repr__(self) -> str:
        from .views import classification_repr

        return classification_repr(self)

    def _repr_html_(self) -> str:
        """A compact table for notebooks, in words, with the caution."""
        from .views import classification_html

        return classification_html(self)

    def to_dict(self) -> dict:
        """The classification document (format cordmap-classification/1) as a dict, with its caution."""
        return {
            "format": FORMAT,
            "sensory_level": self.sensory_level.to_dict(),
            "motor_level": self.motor_level.to_dict(),
            "neurological_level": self.neurological_level,
            "complete": self.complete,
            "ais": self.ais,
            "zpp": {"sensory": self.zpp_sensory.to_dict(), "motor": self.zpp_motor.to_dict()},
            "scores": {"uems": self.uems.to_dict(), "lems": self.lems.to_dict(),
                       "light_touch": self.light_touch.to_dict(), "pinprick": self.pinprick.to_dict()},
            "not_determinable": dict(self.reasons),
            "notes": list(self.notes),
            "caution": cautions.BANNER,
        }

    def to_json(self, indent: int | None = 2) -> str:
        """The classification document as JSON text."""
        return json.dumps(self.to_dict(), indent=indent)
