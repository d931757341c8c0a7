"""cordmap: localize a spinal cord lesion from the bedside exam.

Decision support, not a diagnosis. Acute myelopathy is an emergency; local protocols and licensed clinicians decide.
"""
from .classify import Classification, classify
from .course import Course
from .course import parse_course as load_course
from .course_cohort import course_cohort
from .demo import case as demo_case
from .errors import CordmapError
from .findings import Findings
from .findings import parse as load_findings
from .lesions import PATTERNS, Lesion
from .many import rank_many
from .model import section
from .rank import Ranking, rank
from .simulate import simulate

__all__ = ["Classification", "CordmapError", "Course", "Findings", "Lesion", "PATTERNS", "Ranking", "classify",
           "course_cohort", "demo_case", "load_course", "load_findings", "rank", "rank_many", "section", "simulate"]
__version__ = "0.1.0"
