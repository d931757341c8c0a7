"""The findings of one exam: the public entry to the `Findings` value and its two written forms.

* `cordmap.findings_value`: the `Findings` value (item keys and canonical values, in its module doc) and the words
  and values items are spelled by (`PHASES`, `SENSORY_GRADES`, `SIGNS` ...).
* `cordmap.findings_document`: the document ``cordmap-findings/1`` (and ``/2``, through `cordmap.findings_v2`):
  `parse` (the form decides: a mapping is the document, a `pathlib.Path` a file, a `str`/`bytes` JSON text), `read`,
  `loads`, `to_document`; every bad value raises `CordmapError` naming its path.
* `cordmap.findings_tidy`: the tidy table (`Findings.tidy`, `from_rows`, `from_tidy`).

The rest of cordmap, the widgets and the tests import these names from here: every public name the module
had before it was split into these three.
"""
from __future__ import annotations

from .findings_document import DOCUMENT_KEYS, FORMAT, FORMATS, NINDS, load, loads, parse, read, to_document
from .findings_tidy import TIDY_COLUMNS, from_rows, from_tidy
from .findings_value import (
    PHASES,
    PLANTAR,
    PRESENCE,
    SENSORY_GRADES,
    SENSORY_NAMES,
    SIGNS,
    TENDON_GRADES,
    Findings,
    all_items,
    item_label,
    item_values,
    reflex_values,
)

__all__ = ["DOCUMENT_KEYS", "FORMAT", "FORMATS", "NINDS", "PHASES", "PLANTAR", "PRESENCE", "SENSORY_GRADES",
           "SENSORY_NAMES", "SIGNS", "TENDON_GRADES", "TIDY_COLUMNS", "Findings", "all_items", "from_rows", "from_tidy",
           "item_label", "item_values", "load", "loads", "parse", "read", "reflex_values", "to_document"]
