"""The cordmap exam app (ipywidgets 8): enter an exam, watch lesion hypotheses re-rank.

Decision support, not a diagnosis. The widgets are thin: every computation is a call into `cordmap`. `app.py`
lists which file holds which part of the page.
"""
from .app import ExamApp, dashboard
from .labels import esc
from .state import MAX_UPLOAD, ExamState

__all__ = ["ExamApp", "ExamState", "MAX_UPLOAD", "dashboard", "esc"]
