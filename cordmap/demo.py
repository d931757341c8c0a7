"""Built-in demo cases. Every case is invented for demonstration; none is a real patient."""
from __future__ import annotations

from functools import cache

from .findings import Findings, parse

_CASES = {
    "thoracic-hemicord": {
        "format": "cordmap-findings/1",
        "label": "invented demo: weak left leg, numb right leg after a fall",
        "phase": "chronic",
        "sensory": {
            "pinprick": {"left": {"C2-T5": "normal", "T6-T7": "absent", "T8-S4-5": "normal"},
                         "right": {"C2-T6": "normal", "T7": "impaired", "T8-S4-5": "absent"}},
            "vibration": {"left": {"C2-T5": "normal", "T6-S4-5": "absent"}, "right": {"C2-S4-5": "normal"}},
            "light_touch": {"left": {"C2-T5": "normal", "T6-S4-5": "impaired"}, "right": {"C2-S4-5": "normal"}},
        },
        "motor": {"left": {"C5": 5, "C6": 5, "C7": 5, "C8": 5, "T1": 5, "L2": 0, "L3": 0, "L4": 0, "L5": 0,
                           "S1": 0},
                  "right": {"C5": 5, "C6": 5, "C7": 5, "C8": 5, "T1": 5, "L2": 5, "L3": 5, "L4": 5, "L5": 5,
                            "S1": 5}},
        "reflexes": {"left": {"knee": "brisk", "ankle": "brisk", "plantar": "extensor"},
                     "right": {"knee": "normal", "ankle": "normal", "plantar": "flexor"}},
        "signs": {"voluntary_anal_contraction": True, "deep_anal_pressure": True},
    },
    "cervical-central": {
        "format": "cordmap-findings/1",
        "label": "invented demo: hands weaker than legs after a hyperextension injury",
        "phase": "chronic",
        "sensory": {"pinprick": {"left": {"C2-C4": "normal", "C5-C8": "absent", "T1-S4-5": "normal"},
                                 "right": {"C2-C4": "normal", "C5-C8": "absent", "T1-S4-5": "normal"}}},
        "motor": {"left": {"C5": 1, "C6": 0, "C7": 0, "C8": 1, "T1": 1, "L2": 5, "L3": 5, "L4": 5},
                  "right": {"C5": 1, "C6": 0, "C7": 0, "C8": 1, "T1": 1, "L2": 5, "L3": 5, "L4": 5}},
        "reflexes": {"left": {"biceps": "absent", "plantar": "flexor"}, "right": {"biceps": "absent",
                                                                                 "plantar": "flexor"}},
    },
    "sacral-saddle": {
        "format": "cordmap-findings/1",
        "label": "invented demo: saddle numbness and urinary retention",
        "sensory": {"pinprick": {"left": {"C2-S2": "normal", "S3-S4-5": "absent"},
                                 "right": {"C2-S2": "normal", "S3-S4-5": "absent"}}},
        "motor": {"left": {"L2": 5, "L3": 5, "L4": 5, "L5": 5}, "right": {"L2": 5, "L3": 5, "L4": 5, "L5": 5}},
        "reflexes": {"left": {"knee": "normal", "plantar": "flexor"}, "right": {"knee": "normal",
                                                                               "plantar": "flexor"}},
        "signs": {"bulbocavernosus": "absent", "bladder": "retention", "voluntary_anal_contraction": False},
    },
}

DEFAULT = "thoracic-hemicord"


def names() -> tuple[str, ...]:
    """The demo cases' names, the default first."""
    return tuple(_CASES)


def labels() -> dict[str, str]:
    """{name: one line saying what the invented case shows}."""
    return {n: d["label"] for n, d in _CASES.items()}


@cache
def case(name: str = DEFAULT) -> Findings:
    """The demo case `name` as `Findings` (invented; see `labels`)."""
    from .errors import bad_value

    if name not in _CASES:
        raise bad_value("demo case", name, _CASES, "demo case")
    return parse(_CASES[name])
