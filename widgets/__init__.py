"""The cordmap exam app (ipywidgets 8): enter an exam, watch lesion hypotheses re-rank.

Decision support, not a diagnosis. The widgets are thin: every computation is a call into `cordmap`. `app.py`
lists which file holds which part of the page.
"""
from __future__ import annotations

import importlib

# the panels load on first use, so the launcher (`widgets.serve`, run in the Voila server's own process) does not
# import ipywidgets and the whole app
_LAZY = {"ExamApp": "app", "dashboard": "app", "esc": "labels", "ExamState": "state", "MAX_UPLOAD": "state"}
__all__ = ["ExamApp", "ExamState", "MAX_UPLOAD", "dashboard", "esc"]


def __getattr__(name: str):
    if name in _LAZY:
        return getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
    raise AttributeError(f"module 'widgets' has no attribute {name!r}")
