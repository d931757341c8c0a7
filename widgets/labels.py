"""Every word the app shows for an exam item or a grade, and the dropdowns' option texts: one place to change them.

Terms of the trade are kept where the standard uses them (dermatome, key muscle, S4-5, voluntary anal contraction,
deep anal pressure); everything else is said as a clinician would say it at the bedside.
"""
from __future__ import annotations

import html

from cordmap import items
from cordmap.errors import CordmapError
from cordmap.findings import item_label

CYCLE = {None: 2, 2: 1, 1: 0, 0: None}  # a click: not examined -> normal -> impaired -> absent -> not examined
# not examined is a no-break space, not "": the browser's button view keeps its old text for an empty description
GLYPH = {None: "\u00a0", 2: "2", 1: "1", 0: "0"}
# the words of items and values are the registry's (`cordmap.items`)
GRADE_WORD = {None: "not examined", **dict(zip(items.SENSORY_SCALE.values, items.SENSORY_SCALE.words))}
MOD_WORD = items.MODALITY_WORDS
SIGN_WORD = {name: e.words for name, e in items.SIGNS.items()}
# the non-key muscles of findings format 2, in a column header's few words
LIMB_WORD = {"shoulder_abduction": "shoulder abd.", "forearm_pronation": "forearm pron.",
             "finger_extension": "finger ext.", "thumb_abduction": "thumb abd.", "index_finger_abduction": "index abd.",
             "hip_adduction": "hip add.", "hip_abduction": "hip abd.", "knee_flexion": "knee flex.",
             "ankle_inversion": "ankle inv.", "ankle_eversion": "ankle ev."}
# the sensations the body picture can show, in the order a clinician usually tests them
PICTURE_MODALITIES = ("pinprick", "light_touch", "vibration", "temperature", "joint_position")

TAB_SENSATION = "Sensation"
TAB_POWER = "Muscles & reflexes"
TAB_SACRAL = "Sacral & autonomic"


def esc(text) -> str:
    """Escape any text before it goes into an HTML widget."""
    return html.escape(str(text), quote=True)


def reflex_word(name: str) -> str:
    return items.REFLEXES[name].words


def to_option(value) -> str:
    if value is None:
        return ""
    if value is True:
        return "yes"
    if value is False:
        return "no"
    return str(value)


def from_option(key: tuple, text: str):
    if text == "":
        return None
    for v in items.allowed(key):
        if to_option(v) == text:
            return v
    raise CordmapError(f"{item_label(key)}: unknown value {text!r}")


def options(key: tuple) -> list[tuple[str, str]]:
    return [("–", "")] + [(to_option(v), to_option(v)) for v in items.allowed(key)]


def allowed(key: tuple) -> tuple:
    """The values an item may take in the app (a key muscle may also be 'NT', not testable)."""
    return items.allowed(key)
