"""cordmap: localize a spinal cord lesion from the bedside exam.

Decision support, not a diagnosis. Acute myelopathy is an emergency; local protocols and licensed clinicians decide.
"""
from .classify import Classification, classify
from .demo import case as demo_case
from .errors import CordmapError
from .findings import Findings
from .findings import parse as load_findings
from .lesions import PATTERNS, Lesion
from .many import rank_many
from .model import section
from .rank import Ranking, rank
from .simulate import simulate

__all__ = ["Classification", "CordmapError", "Findings", "Lesion", "PATTERNS", "Ranking", "classify",
           "demo_case", "load_findings", "rank", "rank_many", "section", "simulate"]
__version__ = "0.1.0"
