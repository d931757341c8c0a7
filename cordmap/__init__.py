"""cordmap: localize a spinal cord lesion from the bedside exam.

Decision support, not a diagnosis. Acute myelopathy is an emergency; local protocols and licensed clinicians decide.
"""
from .errors import CordmapError
from .findings import Findings
from .findings import parse as load_findings

__all__ = ["CordmapError", "Findings", "load_findings"]
__version__ = "0.1.0"
