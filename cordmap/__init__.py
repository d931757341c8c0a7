"""cordmap: localize a spinal cord lesion from the bedside exam.

Decision support, not a diagnosis. Acute myelopathy is an emergency; local protocols and licensed clinicians decide.
"""
from .errors import CordmapError
from .findings import Findings
from .findings import parse as load_findings
from .lesions import PATTERNS, Lesion
from .model import section
from .simulate import simulate

__all__ = ["CordmapError", "Findings", "Lesion", "PATTERNS", "load_findings", "section", "simulate"]
__version__ = "0.1.0"
