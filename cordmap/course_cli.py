"""`cordmap course FILE [--json]`: the changes over a course of serial exams and the alarms (`cordmap.course`).

`cli.py` registers it with `add_command`; bad input raises `CordmapError`, which `cli.main` prints as one line
with exit status 2."""
from __future__ import annotations

import sys
from pathlib import Path

from .errors import CordmapError


def cmd_course(args) -> int:
    from .course import demo_path, read
    from .course_report import follow

    if args.demo == (args.file is not None):
        raise CordmapError("course: give a course file, or --demo for the invented demo course (not both)")
    course = read(demo_path() if args.demo else Path(args.file))  # a Path: a file, whatever its first character
    report = follow(course, rank="full" if args.full else "leader")
    if args.json:
        print(report.to_json())
    else:
        sys.stdout.write(report.text())
    return 0


def add_command(sub) -> None:
    """Add `course` to the `cordmap` command's subparsers."""
    s = sub.add_parser("course", help="follow serial exams: changes between exams and the alarms")
    s.add_argument("file", nargs="?", default=None, help="course file (format cordmap-course/1)")
    s.add_argument("--demo", action="store_true", help="the invented demo course shipped with cordmap")
    s.add_argument("--json", action="store_true", help="the report as JSON (it carries a 'caution' field)")
    s.add_argument("--full", action="store_true",
                   help="rank every exam in full (fit verdict with the two-lesion check; slower)")
    s.set_defaults(func=cmd_course)
