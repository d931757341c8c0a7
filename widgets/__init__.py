"""The cordmap exam app (ipywidgets 8): enter an exam, watch lesion hypotheses re-rank.

Decision support, not a diagnosis. The widgets are thin: every computation is a call into `cordmap`.
"""
from .app import MAX_UPLOAD, ExamApp, dashboard, esc

__all__ = ["ExamApp", "MAX_UPLOAD", "dashboard", "esc"]
