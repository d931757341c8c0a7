"""The `Findings` value: one exam as item keys and canonical values, and the words and values items are spelled by.

A `Findings` value holds one exam as a flat mapping from an item key to a canonical value. Item keys are the
named tuples of `cordmap.items` (equal to plain tuples), the registry of every item's values and which is normal:

* ``("sensory", modality, side, dermatome)`` -> 0 absent, 1 impaired, 2 normal
* ``("motor", side, myotome)`` -> MRC grade 0..5, or ``"NT"``
* ``("reflex", side, reflex)`` -> "absent" | "reduced" | "normal" | "brisk" (tendon reflexes),
  "present" | "absent" (hoffmann, abdominal, cremasteric), "flexor" | "extensor" | "mute" (plantar)
* ``("sign", name, side)`` -> side is "left"/"right" for horner, "" otherwise; values as in the document
* version 2: ``("muscle", side, name)`` -> MRC grade or "NT"; ``("tenderness", vertebra, "")`` and
  ``("band_pain", side, dermatome)`` -> True (`cordmap.findings_v2`)

A key that is missing was not examined. Nothing here treats "not examined" as "normal".

The document is read and written by `cordmap.findings_document`, the tidy table by `cordmap.findings_tidy`.
"""
from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import pandas as pd

from . import items as registry
from .errors import bad_value

PHASES = ("chronic", "acute")
# the values of every item come from the registry (`cordmap.items`); these names are what the reader spells them by
SENSORY_GRADES = dict(zip(registry.SENSORY_SCALE.words, registry.SENSORY_SCALE.values))
SENSORY_NAMES = {v: k for k, v in SENSORY_GRADES.items()}
TENDON_GRADES = registry.TENDON_SCALE.values
PRESENCE = registry.PRESENT_NORMAL.values
PLANTAR = registry.PLANTAR_SCALE.values
SIGNS = {name: e.scale.values for name, e in registry.SIGNS.items()}
item_values = registry.item_values
all_items = registry.all_items
item_label = registry.item_label


def reflex_values(reflex: str) -> tuple[str, ...]:
    return registry.REFLEXES[reflex].scale.values


@dataclass(frozen=True)
class Findings:
    """One bedside exam. ``items`` maps item keys (see module doc) to canonical values."""

    items: Mapping[tuple, object] = field(default_factory=dict)
    label: str = ""
    phase: str = "chronic"

    def __post_init__(self):
        if self.phase not in PHASES:
            raise bad_value("phase", self.phase, PHASES, "phase")
        object.__setattr__(self, "items", MappingProxyType({registry.key(k): v for k, v in self.items.items()}))

    def __hash__(self):
        return hash((self.label, self.phase, tuple(sorted(self.items.items(), key=repr))))

    def __repr__(self) -> str:
        from .views import findings_repr

        return findings_repr(self)

    def _repr_html_(self) -> str:
        """A compact table for notebooks: what was entered, the abnormal findings, the caution."""
        from .views import findings_html

        return findings_html(self)

    def get(self, key: tuple, default=None):
        """The value recorded for one item key (see the module doc), or `default` when it was not examined."""
        return self.items.get(key, default)

    def replace(self, updates: Mapping[tuple, object] = (), remove=(), **kw) -> "Findings":
        """A new `Findings` with items updated or removed (and `label` / `phase` changed when given)."""
        items = dict(self.items)
        items.update(dict(updates))
        for k in remove:
            items.pop(k, None)
        return Findings(items, kw.get("label", self.label), kw.get("phase", self.phase))

    def to_dict(self) -> dict:
        """The findings document (format cordmap-findings/1, or /2 when it records a version-2 item) as a dict."""
        from .findings_document import to_document

        return to_document(self)

    def to_json(self, indent: int | None = 2) -> str:
        """The findings document as JSON text."""
        from .findings_document import to_document

        return json.dumps(to_document(self), indent=indent)

    def tidy(self) -> pd.DataFrame:
        """One row per entered item: columns exam, name, side, segment, value (what `from_tidy` reads)."""
        from .findings_tidy import tidy_table

        return tidy_table(self)
