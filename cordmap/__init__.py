"""cordmap: localize a spinal cord lesion from the bedside exam.

Decision support, not a diagnosis. Acute myelopathy is an emergency; local protocols and licensed clinicians decide.
"""
import os as _os
import sys as _sys

# cordmap's matrix products are small (a few hundred items by tens of thousands of candidates, or smaller): a
# multithreaded BLAS gains nothing on them and, on a shared machine, its spinning threads made rank() 1.5-3x slower
# (benchmarks/bench_rank.py, one thread against the default, 2-core machine with other work running). One thread
# unless the user chose otherwise; it only takes effect when numpy has not been imported yet.
if "numpy" not in _sys.modules:
    for _name in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        _os.environ.setdefault(_name, "1")

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
