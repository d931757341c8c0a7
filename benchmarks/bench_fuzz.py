"""Fuzzed input bar (issue 13): prints figures, asserts nothing. Run: python benchmarks/bench_fuzz.py

(a) 12,000 fuzzed findings documents (tests/fuzz_docs.py, seed 13) through the reader (`parse`, as a dict, JSON
    text, bytes or a file) and every accepted one through the ranker (`rank`): how many raised something other than
    `CordmapError`, the longest error message.
(b) 12,000 fuzzed tidy cohort cases through `findings.from_rows` (what `batch` does per case).
(c) 320 command-line runs on fuzzed files (rank, classify, batch; in-process `cordmap.cli.main`): the exit codes.
"""
from __future__ import annotations

import argparse
import collections
import contextlib
import io
import random
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

from fuzz_docs import documents, file_bytes, tidy_case, valid_documents  # noqa: E402

from cordmap.cli import main as cli_main  # noqa: E402
from cordmap.errors import CordmapError  # noqa: E402
from cordmap.findings import from_rows, parse  # noqa: E402
from cordmap.rank import rank  # noqa: E402


def _count(errors: collections.Counter, e: BaseException) -> None:
    errors[f"{type(e).__name__}: {str(e)[:80]}"] += 1


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--documents", type=int, default=12_000)
    ap.add_argument("--cli-runs", type=int, default=320)
    a = ap.parse_args()
    tmp = Path(tempfile.mkdtemp(prefix="cordmap-fuzz-"))

    t0 = time.perf_counter()
    other: collections.Counter = collections.Counter()
    refused = ranked = 0
    longest = 0
    for i, (form, value) in enumerate(documents(a.documents, seed=13)):
        try:
            if form == "path-text":
                p = tmp / f"{i % 7}-doc.json"
                p.write_text(value, encoding="utf-8", errors="surrogatepass")
                f = parse(p)
            else:
                f = parse(value)
            r = rank(f, top=3)
            assert r.hypotheses and r.cautions
            ranked += 1
        except CordmapError as e:
            refused += 1
            longest = max(longest, len(str(e)))
        except Exception as e:  # noqa: BLE001 - what this bench counts
            _count(other, e)
    dt = time.perf_counter() - t0
    print(f"(a) {a.documents:,} fuzzed documents: {refused:,} refused with CordmapError, {ranked:,} read and ranked, "
          f"{sum(other.values())} other exceptions; longest message {longest} characters; {dt:.0f} s"
          f"   [target 0 other] {'ok' if not other else 'MISSED'}")
    for k, n in other.most_common(5):
        print(f"    {n} x {k}")

    rng = random.Random(7)
    base = valid_documents()
    other = collections.Counter()
    ok = bad = 0
    for _ in range(a.documents):
        try:
            from_rows(tidy_case(rng, base))
            ok += 1
        except CordmapError:
            bad += 1
        except Exception as e:  # noqa: BLE001
            _count(other, e)
    print(f"(b) {a.documents:,} fuzzed cohort cases (tidy rows): {ok:,} read, {bad:,} refused with CordmapError, "
          f"{sum(other.values())} other exceptions   [target 0 other] {'ok' if not other else 'MISSED'}")
    for k, n in other.most_common(5):
        print(f"    {n} x {k}")

    codes: collections.Counter = collections.Counter()
    docs = documents(a.cli_runs, seed=99)
    for i, (_form, value) in enumerate(docs):
        data = file_bytes(value)
        kind = ("rank", "classify", "batch")[i % 3]
        src = tmp / (f"cli-{i}.jsonl" if kind == "batch" else f"cli-{i}.json")
        src.write_bytes(data.replace(b"\n", b" ") + b"\n" + data.replace(b"\n", b" ") if kind == "batch" else data)
        args = [kind, str(src)] + (["-o", str(tmp / f"out-{i}.csv")] if kind == "batch" else [])
        with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
            try:
                codes[cli_main(args)] += 1
            except BaseException as e:  # noqa: BLE001 - an uncaught exception is exit status 1
                codes[f"1 ({type(e).__name__})"] += 1
    shown = ", ".join(f"exit {k}: {n}" for k, n in sorted(codes.items(), key=str))
    print(f"(c) {a.cli_runs} command-line runs on fuzzed files: {shown}   [target only 0 and 2] "
          f"{'ok' if set(codes) <= {0, 2} else 'MISSED'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
