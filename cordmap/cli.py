"""The `cordmap` command line. Bad input prints one line and exits with status 2."""
from __future__ import annotations

import argparse
import csv
import json
import sys
import time
from pathlib import Path

from . import cautions as C
from .errors import CordmapError
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


def _lesion(args, pattern: str) -> Lesion:
    return Lesion(pattern, args.side, args.top, args.bottom, _params(args.param), args.phase)


def _add_lesion_args(p, positional: bool = True):
    if positional:
        p.add_argument("pattern", help="pattern id (see `cordmap patterns`)")
    p.add_argument("--side", default="both", help="left, right or both (the damaged side)")
    p.add_argument("--top", default="T6", help="most rostral cord segment, e.g. T6")
    p.add_argument("--bottom", default=None, help="most caudal cord segment (default: the top)")
    p.add_argument("--param", action="append", metavar="NAME=VALUE", help="pattern parameter, repeatable")
    p.add_argument("--phase", default="chronic", help="chronic or acute (spinal shock)")


def _print_ranking(r, out=sys.stdout):
    w = out.write
    w(f"cordmap ranking - {r.examined} findings examined\n\n")
    verdict = {"poor": "!! POOR FIT", "normal": "NORMAL", "empty": "NOTHING ENTERED"}.get(r.fit)
    if verdict:
        w(f"{verdict}: {r.advice}\n\n")
    for h in r.hypotheses:
        bar = "#" * max(1, round(h.probability * 30)) if h.probability >= 0.005 else "."
        w(f"{h.rank:>2}. {h.lesion.describe():<48} {h.probability:6.1%} {bar}\n")
        if h.variants:
            w(f"    or: {'; '.join(v.describe() for v in h.variants)} (imaging tells which)\n")
        if h.same_exam:
            w(f"    same predicted exam: {h.same_exam_text()} (no bedside test separates them; imaging does)\n")
        w(f"    image vertebrae: {', '.join(h.vertebral_levels)}\n")
        if h.rank <= 3:
            for e in h.explains[:6]:
                w(f"    + {e}\n")
            for c in h.conflicts[:6]:
                w(f"    - {c}\n")
    if r.next_tests:
        w("\nNext tests that would best separate the leading hypotheses:\n")
        for t in r.next_tests:
            w(f"  * {t.why}\n")
    if r.classification is not None:
        w(f"\nISNCSCI classification: {classification_line(r.classification.to_dict())}\n")
    w("\nCautions:\n")
    for c in r.cautions:
        w(f"  ! {c}\n")
    w(f"\n{C.BANNER}\n")


def classification_line(d: dict) -> str:
    """One line of the ISNCSCI classification, e.g. 'NLI T5, AIS D (incomplete); sensory L T5 / R T6; ...'."""
    complete = {True: "complete", False: "incomplete"}.get(d["complete"], "completeness ND")
    sl, ml = d["sensory_level"], d["motor_level"]
    return (f"NLI {d['neurological_level']}, AIS {d['ais']} ({complete}); sensory level L {sl['left']} / "
            f"R {sl['right']}; motor level L {ml['left']} / R {ml['right']}; UEMS {d['scores']['uems']['total']}, "
            f"LEMS {d['scores']['lems']['total']}")


def cmd_patterns(args):
    for p in PATTERNS.values():
        params = ", ".join(f"{q.name}={q.default:g}" for q in p.params)
        sides = "/".join(p.sides)
        print(f"{p.id:<22} {p.summary} [side {sides}{'; ' + params if params else ''}]")


def cmd_simulate(args):
    from .simulate import simulate

    f = simulate(_lesion(args, args.pattern))
    print(f.to_json())
    print(C.BANNER, file=sys.stderr)


def cmd_section(args):
    from .anatomy import anatomy
    from .plotting import section_png

    anatomy().index(args.segment, "segment")
    lesion = _lesion(args, args.lesion) if args.lesion else None
    Path(args.output).write_bytes(section_png(args.segment, lesion))
    print(f"wrote {args.output}")


def cmd_rank(args):
    from .rank import rank

    r = rank(args.file, top=args.top)
    if args.json:
        print(r.to_json())
    else:
        _print_ranking(r)


def cmd_demo(args):
    from . import demo
    from .rank import rank

    f = demo.case(args.case)
    print(f"Demo case (invented): {f.label}\n")
    r = rank(f, top=args.top)
    print(r.to_json()) if args.json else _print_ranking(r)


def cmd_classify(args):
    from .classify import classify, main_text
    from .findings import parse

    c = classify(parse(args.file))
    print(c.to_json() if args.json else main_text(c))


def _read_cases(path: Path):
    """Yield (case_id, document-or-error) from a JSONL file or a tidy CSV with a case_id column."""
    from .findings import FORMAT

    if path.suffix.lower() == ".jsonl":
        for n, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
            if not line.strip():
                continue
            try:
                doc = json.loads(line)
                cid = str(doc.pop("case_id", n)) if isinstance(doc, dict) else str(n)
                yield cid, doc
            except json.JSONDecodeError as e:
                yield str(n), CordmapError(f"line {n}: not valid JSON ({e.msg})")
        return
    with path.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    if rows and "case_id" not in rows[0]:
        raise CordmapError(f"{path}: a cohort table needs a case_id column (and exam, name, side, segment, value)")
    cases: dict[str, list[dict]] = {}
    for row in rows:
        cases.setdefault(row["case_id"], []).append(row)
    import pandas as pd

    from .findings import from_tidy

    for cid, rws in cases.items():
        phase = next((r["value"] for r in rws if r.get("exam") == "phase"), "chronic")
        try:
            yield cid, from_tidy(pd.DataFrame([r for r in rws if r.get("exam") != "phase"]), phase=phase)
        except CordmapError as e:
            yield cid, e
    del FORMAT


def cmd_batch(args):
    from . import atlas as atlas_mod
    from .findings import parse
    from .lesions import NORMAL
    from .rank import batch_leaders, batch_scores

    path = Path(args.file)
    if not path.exists():
        raise CordmapError(f"{path}: no such file")
    good, bad, ids = [], [], []
    for cid, doc in _read_cases(path):
        try:
            if isinstance(doc, Exception):
                raise doc
            good.append(parse(doc))
            ids.append(cid)
        except CordmapError as e:
            bad.append((cid, str(e)))
            print(f"case {cid}: skipped: {e}", file=sys.stderr)
    # fit: "empty" (nothing entered), "normal" (no lesion explains the findings better than a normal cord) or
    # "lesion"; the two-lesion check ("poor") is made by `cordmap rank` only (it costs a pair search per case).
    fields = ["case_id", "status", "fit", "pattern", "side", "top", "bottom", "params", "probability",
              "vertebral_levels", "same_exam", "second", "second_probability", "error"]
    t0 = time.perf_counter()
    rows = []
    for phase in ("chronic", "acute"):
        sel = [i for i, f in enumerate(good) if f.phase == phase]
        if not sel:
            continue
        at = atlas_mod.get(phase)
        for start in range(0, len(sel), 256):
            chunk = sel[start:start + 256]
            scores = batch_scores([good[i] for i in chunk], at)
            for row, i in zip(scores, chunk):
                (les, p1, levels, same), (les2, p2, _, _) = batch_leaders(at, row, 2)  # as rank() lists them
                fit = "empty" if not good[i].items else "normal" if les.pattern == NORMAL else "lesion"
                rows.append({"case_id": ids[i], "status": "ok", "fit": fit, "pattern": les.pattern, "side": les.side,
                             "top": les.top, "bottom": les.bottom, "params": json.dumps(les.all_params()),
                             "probability": round(p1, 4), "vertebral_levels": " ".join(levels),
                             "same_exam": "; ".join(o.describe() for o in same), "second": les2.describe(),
                             "second_probability": round(p2, 4), "error": ""})
            done = min(start + 256, len(sel))
            bar = "#" * int(30 * done / len(sel))
            print(f"\r{phase:>7} [{bar:<30}] {done}/{len(sel)}", end="", file=sys.stderr)
        print(file=sys.stderr)
    rows += [{"case_id": cid, "status": "error", "error": msg} for cid, msg in bad]
    with open(args.output, "w", newline="", encoding="utf-8") as fh:
        wr = csv.DictWriter(fh, fieldnames=fields)
        wr.writeheader()
        wr.writerows(rows)
    dt = time.perf_counter() - t0
    print(f"ranked {len(good)} cases ({len(bad)} skipped) in {dt:.2f} s -> {args.output}", file=sys.stderr)
    print(C.BANNER, file=sys.stderr)
    return 0


def cmd_serve(args):
    from .serve import serve

    return serve(port=args.port, findings=args.findings)


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="cordmap", description="Localize a spinal cord lesion from the bedside exam. "
                                + C.BANNER)
    sub = p.add_subparsers(dest="command", required=True)
    s = sub.add_parser("patterns", help="list the lesion patterns")
    s.set_defaults(func=cmd_patterns)
    s = sub.add_parser("simulate", help="print the findings a lesion predicts (findings format v1)")
    _add_lesion_args(s)
    s.set_defaults(func=cmd_simulate)
    s = sub.add_parser("section", help="draw a segment's cross-section to a PNG")
    s.add_argument("segment")
    s.add_argument("--lesion", metavar="PATTERN", help="overlay a lesion of this pattern")
    _add_lesion_args(s, positional=False)
    s.add_argument("-o", "--output", default="section.png")
    s.set_defaults(func=cmd_section)
    s = sub.add_parser("rank", help="rank lesion hypotheses for a findings file")
    s.add_argument("file")
    s.add_argument("--top", type=int, default=10)
    s.add_argument("--json", action="store_true")
    s.set_defaults(func=cmd_rank)
    s = sub.add_parser("batch", help="rank a cohort (CSV with case_id, or JSONL) into a CSV")
    s.add_argument("file")
    s.add_argument("-o", "--output", required=True)
    s.set_defaults(func=cmd_batch)
    s = sub.add_parser("demo", help="rank a built-in invented demo case")
    s.add_argument("--case", default="thoracic-hemicord")
    s.add_argument("--top", type=int, default=5)
    s.add_argument("--json", action="store_true")
    s.set_defaults(func=cmd_demo)
    s = sub.add_parser("classify", help="ISNCSCI levels, completeness and impairment grade")
    s.add_argument("file")
    s.add_argument("--json", action="store_true")
    s.set_defaults(func=cmd_classify)
    s = sub.add_parser("serve", help="start the dashboard on 127.0.0.1 and print its address")
    s.add_argument("--port", type=int, default=None)
    s.add_argument("--findings", default=None)
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
