"""The `cordmap` command line. Bad input prints one line and exits with status 2."""
from __future__ import annotations

import argparse
import csv
import io
import json
import sys
import time
from pathlib import Path

from . import cautions as C
from . import nexttests
from .errors import CordmapError, shown
from .lesions import PATTERNS, Lesion


def _params(pairs: list[str]) -> dict[str, float]:
    out = {}
    for pair in pairs or []:
        name, sep, value = pair.partition("=")
        if not sep:
            raise CordmapError(f"--param {pair!r}: expected NAME=VALUE, e.g. --param depth=0.3")
        try:
            out[name.strip()] = float(value)
        except ValueError:
            raise CordmapError(f"--param {name}: {value!r} is not a number") from None
    return out


def _deprecated(old: str, new: str) -> None:
    print(f"cordmap: note: {old} is now spelled {new}; the old spelling will go", file=sys.stderr)


def _lesion(args, pattern: str) -> Lesion:
    top, bottom = args.rostral, args.caudal
    if args.old_top is not None:
        _deprecated("--top", "--rostral")
        top = top if top is not None else args.old_top
    if args.old_bottom is not None:
        _deprecated("--bottom", "--caudal")
        bottom = bottom if bottom is not None else args.old_bottom
    pat = PATTERNS.get(pattern)
    if top is None and pat is not None and pat.tops[0] == pat.tops[1]:  # a placeholder (nerve, polyneuropathy)
        top = pat.tops[0]
    return Lesion(pattern, args.side, top or "T6", bottom, _params(args.param), args.phase)


def _shown(args) -> int:
    """How many hypotheses to list: --show, or the old --top with a note."""
    if args.old_top is not None:
        _deprecated("--top", "--show")
        return args.show if args.show is not None else args.old_top
    return args.show if args.show is not None else args.default_show


def _add_lesion_args(p, positional: bool = True):
    if positional:
        p.add_argument("pattern", help="pattern id (see `cordmap patterns`)")
    p.add_argument("--side", default="both", help="left, right or both (the damaged side)")
    p.add_argument("--rostral", default=None, metavar="SEGMENT",
                   help="the lesion's most rostral (upper) cord segment, e.g. T6 (default T6)")
    p.add_argument("--caudal", default=None, metavar="SEGMENT",
                   help="the lesion's most caudal (lower) cord segment (default: the rostral one)")
    p.add_argument("--top", dest="old_top", default=None, metavar="SEGMENT",
                   help="old spelling of --rostral (deprecated: it also meant a count elsewhere)")
    p.add_argument("--bottom", dest="old_bottom", default=None, metavar="SEGMENT",
                   help="old spelling of --caudal (deprecated)")
    p.add_argument("--param", action="append", metavar="NAME=VALUE", help="pattern parameter, repeatable")
    p.add_argument("--phase", default="chronic", help="chronic or acute (spinal shock)")


def _print_ranking(r, out=None):
    from .classify import classification_line
    from .imaging import span

    w = (out or sys.stdout).write  # looked up at call time, so redirected output is honoured
    w(f"cordmap ranking - {r.examined} findings examined\n\n")
    verdict = {"poor": "!! POOR FIT", "normal": "NORMAL", "empty": "NOTHING ENTERED"}.get(r.fit)
    if verdict:
        w(f"{verdict}: {r.advice}\n\n")
    for h in r.hypotheses:
        bar = "#" * max(1, round(h.probability * 30)) if h.probability >= 0.005 else "."
        w(f"{h.rank:>2}. {h.description:<48} {h.probability:6.1%} {bar}\n")
        w(f"    {h.reason}\n")
        if h.variants:
            w(f"    or: {'; '.join(v.describe() for v in h.variants)} (imaging tells which)\n")
        if h.same_exam:
            w(f"    same predicted exam: {h.same_exam_text()} (no bedside test separates them; imaging does)\n")
        w(f"    image vertebrae: {', '.join(h.vertebral_levels) or 'none (nothing in the spine to image)'}\n")
        if h.rank <= 3:
            for win in h.imaging:
                head = "also" if win.advice else "why"
                w(f"      {head} {span(win.levels)}: {win.why}\n")
        if h.rank <= 3:
            for e in h.explains[:6]:
                w(f"    + {e}\n")
            for c in h.conflicts[:6]:
                w(f"    - {c}\n")
    if r.next_tests:
        w("\nNext tests whose answer would most change what is done:\n")
        for t in r.next_tests:
            w(f"  * {t.why}\n")
    elif r.fit in ("good", "poor"):
        w(f"\nNo bedside test left would change what is done: {nexttests.beyond_the_bedside(r)}.\n")
    if r.classification is not None:
        w(f"\nISNCSCI classification: {classification_line(r.classification)}\n")
    w("\nCautions:\n")
    for c in r.cautions:
        w(f"  ! {c}\n")
    w(f"\n{C.BANNER}\n")


_SIDE_WORDS = {("both",): "both sides", ("left", "right"): "one side (left or right)",
               ("left", "right", "both"): "one side or both"}


def _pattern_group(pid: str) -> str:
    from .nerves import nerve_ids

    if pid == "normal":
        return "No lesion"
    if pid in nerve_ids():
        return "One peripheral nerve of a limb (outside the cord and roots)"
    if pid in ("conus", "cauda_equina", "root", "polyneuropathy"):
        return "The conus, the cauda equina, one root, or the peripheral nerves as a whole"
    return "Inside the cord"


def _pattern_place(p) -> str:
    """Sides and levels of a pattern in words."""
    from .nerves import nerve_ids

    sides = _SIDE_WORDS.get(tuple(p.sides), ", ".join(p.sides))
    if p.id == "normal":
        return sides
    if p.id in nerve_ids():
        return f"{sides}; no cord level (its exam resembles the {p.tops[0]} root's)"
    if p.id == "polyneuropathy":
        return f"{sides}; no cord level (length-dependent: the longest nerves first)"
    extent = ("one segment" if p.single else f"down to {p.bottom_fixed}" if p.bottom_fixed
              else f"up to {p.max_extent} segments")
    return f"{sides}; rostral segment {p.tops[0]}-{p.tops[1]}, {extent}"


def cmd_patterns(args):
    """Every lesion pattern, grouped by where it lies, with its sides, levels and parameters in words."""
    import textwrap

    groups: dict[str, list] = {}
    for p in PATTERNS.values():
        groups.setdefault(_pattern_group(p.id), []).append(p)
    pad = " " * 25
    for title, pats in groups.items():
        print(title)
        for p in pats:
            print(textwrap.fill(p.summary, 118, initial_indent=f"  {p.id:<22} ", subsequent_indent=pad))
            print(textwrap.fill(_pattern_place(p), 118, initial_indent=pad, subsequent_indent=pad))
            for q in p.params:
                tried = ", ".join(f"{v:g}" for v in q.grid)
                print(textwrap.fill(f"- {q.name}: {q.doc} (default {q.default:g}; ranked at {tried})", 118,
                                    initial_indent=pad, subsequent_indent=pad + "  "))
        print()


def cmd_simulate(args):
    """The predicted findings as a findings document (JSON alone on stdout) carrying the caution: the reader
    accepts the `caution` field and ignores it, so the output can be ranked as it is."""
    from .simulate import simulate

    doc = simulate(_lesion(args, args.pattern)).to_dict()
    doc["caution"] = C.BANNER
    print(json.dumps(doc, indent=2))


def cmd_section(args):
    from .anatomy import anatomy
    from .files import check_output, write_atomic
    from .plotting import section_png

    anatomy().index(args.segment, "segment")
    lesion = _lesion(args, args.lesion) if args.lesion else None
    out = check_output(args.output, force=args.force)
    write_atomic(out, section_png(args.segment, lesion), force=args.force)
    print(f"wrote {out}")


def cmd_rank(args):
    from .rank import rank

    r = rank(Path(args.file), top=_shown(args))  # a Path: the argument is a file name, whatever its first character
    if args.json:
        print(r.to_json())
    else:
        _print_ranking(r)


def cmd_demo(args):
    from . import demo
    from .rank import rank

    f = demo.case(args.case)
    # with --json stdout holds the JSON alone (it must parse); the case line goes to stderr then
    print(f"Demo case (invented): {f.label}\n", file=sys.stderr if args.json else sys.stdout)
    r = rank(f, top=_shown(args))
    print(r.to_json()) if args.json else _print_ranking(r)


def cmd_classify(args):
    from .classify import classify, main_text
    from .findings import parse

    c = classify(parse(Path(args.file)))
    print(c.to_json() if args.json else main_text(c))


def _progress(phase: str, done: int, total: int) -> None:
    """One progress line on stderr, redrawn in place (only called when stderr is a terminal)."""
    bar = "#" * int(30 * done / total)
    print(f"\r{phase:>7} [{bar:<30}] {done}/{total}", end="\n" if done == total else "", file=sys.stderr,
          flush=True)


def _stderr_is_terminal() -> bool:
    try:
        return sys.stderr.isatty()
    except (AttributeError, ValueError):  # replaced or closed stream
        return False


def cmd_batch(args):
    """Every case of the input gets a row in the output, `ok` or its error; exit 2 when any case failed.

    The output is checked before any work (its folder exists; it is not the input, not a folder, and does not
    exist unless --force) and written through a temporary file renamed into place."""
    from .cohort import read_cases
    from .files import check_output, write_atomic
    from .many import BATCH_FIELDS, rank_cases

    out = check_output(args.output, force=args.force, inputs=[args.file])
    cases = list(read_cases(args.file))
    for c in cases:
        if not c.ok and not args.quiet:
            print(f"case {c.case_id}: error: {c.error}", file=sys.stderr)
    t0 = time.perf_counter()
    by_case = rank_cases(cases, None if args.quiet or not _stderr_is_terminal() else _progress)
    buf = io.StringIO(newline="")
    wr = csv.DictWriter(buf, fieldnames=BATCH_FIELDS, lineterminator="\n")
    wr.writeheader()
    wr.writerows(by_case)
    write_atomic(out, buf.getvalue().encode("utf-8"), force=args.force)
    dt = time.perf_counter() - t0
    failed = sum(not c.ok for c in cases)
    good = len(cases) - failed
    if not args.quiet:
        print(f"{len(cases)} cases: {good} ranked, {failed} failed, in {dt:.2f} s -> {out}", file=sys.stderr)
        print(C.BANNER, file=sys.stderr)
    return 2 if failed else 0


def cmd_report(args):
    """The case sheet of one findings file; the output's suffix picks the format (.pdf, .png, .txt)."""
    from .files import check_output, write_atomic
    from .report import report_bytes, report_format

    fmt = report_format(args.output)
    out = check_output(args.output, force=args.force, inputs=[args.file])
    write_atomic(out, report_bytes(Path(args.file), fmt, top=_shown(args)), force=args.force)
    print(f"wrote {out}")


def cmd_serve(args):
    try:  # the front end's launcher, imported only when this command runs (the core never imports it)
        from widgets.serve import serve
    except ImportError as e:
        print(f"cordmap serve: the dashboard is not installed ({e}); pip install 'cordmap[app]'", file=sys.stderr)
        return 2

    return serve(port=args.port, findings=args.findings, token=not args.no_token, idle_timeout=args.idle_timeout,
                 max_sessions=args.max_sessions)


MAX_TOP = 100


def _count(text: str) -> int:
    """argparse type of --top: a whole number 1..MAX_TOP (argparse turns the ValueError into a usage error)."""
    if not text.strip().isascii() or not text.strip().isdigit() or not 1 <= int(text) <= MAX_TOP:
        raise argparse.ArgumentTypeError(f"{shown(text, 20)} is not a whole number in 1..{MAX_TOP}")
    return int(text)


def _add_show_args(s, default: int) -> None:
    s.add_argument("--show", type=_count, default=None, metavar="N",
                   help=f"how many hypotheses to list, 1..{MAX_TOP} (default {default})")
    s.add_argument("--top", dest="old_top", type=_count, default=None, metavar="N",
                   help="old spelling of --show (deprecated: it also meant a segment elsewhere)")
    s.set_defaults(default_show=default)


def _demo_epilog() -> str:
    from . import demo

    return "demo cases (all invented):\n" + "\n".join(f"  {n:<20} {lab}" for n, lab in demo.labels().items())


def build_parser() -> argparse.ArgumentParser:
    from . import __version__, demo

    p = argparse.ArgumentParser(prog="cordmap", description="Localize a spinal cord lesion from the bedside exam. "
                                + C.BANNER)
    p.add_argument("--version", action="version", version=f"cordmap {__version__}",
                   help="print the version and exit")
    sub = p.add_subparsers(dest="command", required=True)
    s = sub.add_parser("patterns", help="list the lesion patterns")
    s.set_defaults(func=cmd_patterns)
    s = sub.add_parser("simulate", help="print the findings a lesion predicts (findings document, JSON)")
    _add_lesion_args(s)
    s.add_argument("--json", action="store_true",
                   help="the findings document as JSON, with its caution (also the default: the output is a file "
                   "`cordmap rank` reads)")
    s.set_defaults(func=cmd_simulate)
    s = sub.add_parser("section", help="draw a segment's cross-section to a PNG")
    s.add_argument("segment", help="cord segment to draw, e.g. C5")
    s.add_argument("--lesion", metavar="PATTERN", help="overlay a lesion of this pattern")
    _add_lesion_args(s, positional=False)
    s.add_argument("-o", "--output", default="section.png", help="PNG file to write (default section.png)")
    s.add_argument("--force", action="store_true", help="replace the output file if it exists")
    s.set_defaults(func=cmd_section)
    s = sub.add_parser("rank", help="rank lesion hypotheses for a findings file")
    s.add_argument("file", help="findings file (format cordmap-findings/1)")
    _add_show_args(s, 10)
    s.add_argument("--json", action="store_true", help="print the ranking as JSON alone (cordmap-ranking/1)")
    s.set_defaults(func=cmd_rank)
    s = sub.add_parser("batch", help="rank a cohort (CSV with case_id, or JSONL) into a CSV")
    s.add_argument("file", help="cohort: a tidy CSV (case_id, exam, name, side, segment, value) or a .jsonl file "
                   "(one findings document with a case_id a line)")
    s.add_argument("-o", "--output", required=True, help="results CSV; never the input, an existing file only "
                   "with --force")
    s.add_argument("--force", action="store_true", help="replace the output file if it exists")
    s.add_argument("-q", "--quiet", action="store_true",
                   help="no progress line (it is shown only when stderr is a terminal) and no summary")
    s.set_defaults(func=cmd_batch)
    s = sub.add_parser("demo", help="rank a built-in invented demo case", epilog=_demo_epilog(),
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    s.add_argument("--case", default=demo.DEFAULT, metavar="NAME",
                   help=f"demo case: {', '.join(demo.names())} (default {demo.DEFAULT})")
    _add_show_args(s, 5)
    s.add_argument("--json", action="store_true", help="print the ranking as JSON alone (cordmap-ranking/1)")
    s.set_defaults(func=cmd_demo)
    s = sub.add_parser("classify", help="ISNCSCI levels, completeness and impairment grade")
    s.add_argument("file", help="findings file (format cordmap-findings/1)")
    s.add_argument("--json", action="store_true",
                   help="print the classification as JSON alone (cordmap-classification/1, with its caution)")
    s.set_defaults(func=cmd_classify)
    from .course_cli import add_command as add_course

    add_course(sub)
    s = sub.add_parser("report", help="write the case sheet of a findings file: PDF, PNG or plain text")
    s.add_argument("file", help="findings file (format cordmap-findings/1)")
    s.add_argument("-o", "--output", required=True,
                   help="file to write; its suffix picks the format: .pdf (selectable text), .png or .txt")
    s.add_argument("--force", action="store_true", help="replace the output file if it exists")
    _add_show_args(s, 5)
    s.set_defaults(func=cmd_report)
    s = sub.add_parser("serve", help="start the dashboard on 127.0.0.1 and print its address")
    s.add_argument("--port", type=int, default=None, help="port on 127.0.0.1 (default: a free one)")
    s.add_argument("--findings", default=None, help="findings file to open the dashboard on (default: a demo case)")
    s.add_argument("--no-token", action="store_true",
                   help="serve without a token (only on a single-user machine: any local user could open it)")
    s.add_argument("--max-sessions", type=int, default=8, help="dashboard sessions (kernels) at once (default 8)")
    s.add_argument("--idle-timeout", type=int, default=600,
                   help="seconds a session with no open tab is kept before it is shut down (default 600)")
    s.set_defaults(func=cmd_serve)
    return p


def main(argv=None) -> int:
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as e:
        return int(e.code or 0)
    try:
        return int(args.func(args) or 0)
    except CordmapError as e:
        print(f"cordmap: error: {e}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:  # output piped into head and the like
        sys.stderr.close()
        return 0


if __name__ == "__main__":
    sys.exit(main())
