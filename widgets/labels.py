"""Every word the app shows for an exam item or a grade, and the dropdowns' option texts: one place to change them.

Terms of the trade are kept where the standard uses them (dermatome, key muscle, S4-5, voluntary anal contraction,
deep anal pressure); everything else is said as a clinician would say it at the bedside.
"""
from __future__ import annotations

import html

from cordmap.errors import CordmapError
from cordmap.findings import item_label, item_values

CYCLE = {None: 2, 2: 1, 1: 0, 0: None}  # a click: not examined -> normal -> impaired -> absent -> not examined
# not examined is a no-break space, not "": the browser's button view keeps its old text for an empty description
GLYPH = {None: "\u00a0", 2: "2", 1: "1", 0: "0"}
GRADE_WORD = {None: "not examined", 2: "normal", 1: "impaired", 0: "absent"}
MOD_WORD = {"pinprick": "pinprick", "temperature": "temperature", "light_touch": "light touch",
            "vibration": "vibration", "joint_position": "joint position"}
SIGN_WORD = {"voluntary_anal_contraction": "voluntary anal contraction", "deep_anal_pressure": "deep anal pressure",
             "bulbocavernosus": "bulbocavernosus reflex", "bladder": "bladder", "diaphragm": "diaphragm"}
REFLEX_WORD = {"finger_flexors": "finger flexors", "abdominal_upper": "abdominal, upper",
               "abdominal_lower": "abdominal, lower", "hoffmann": "Hoffmann sign"}
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
    return REFLEX_WORD.get(name, name.replace("_", " "))


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
    for v in (*item_values(key), "NT"):
        if to_option(v) == text:
            return v
    raise CordmapError(f"{item_label(key)}: unknown value {text!r}")


def options(key: tuple) -> list[tuple[str, str]]:
    values = list(item_values(key)) + (["NT"] if key[0] in ("motor", "muscle") else [])
    return [("–", "")] + [(to_option(v), to_option(v)) for v in values]


def allowed(key: tuple) -> tuple:
    """The values an item may take in the app (a key muscle may also be 'NT', not testable)."""
    return (*item_values(key), *(["NT"] if key[0] in ("motor", "muscle") else []))
