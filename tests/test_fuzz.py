"""Fuzzed findings documents and cohort rows: the reader, the ranker and the command line raise nothing but
`CordmapError`, with one bounded line. A fixed seed and a size that keeps the suite fast; benchmarks/bench_fuzz.py
runs the full 12,000 documents and prints the counts."""
from __future__ import annotations

import contextlib
import io
import random
from pathlib import Path

from fuzz_docs import documents, file_bytes, tidy_case, valid_documents

from cordmap import atlas as atlas_mod
from cordmap.cli import main
from cordmap.errors import MAX_MESSAGE, CordmapError
from cordmap.findings import from_rows, parse
from cordmap.rank import batch_scores, rank

N_DOCUMENTS = 3000  # the benchmark runs 12,000
N_RANKED = 40  # of the documents the reader accepts, this many also go through rank(); all go through the scores


def _read(form, value, tmp_path: Path, i: int):
    if form == "path-text":
        p = tmp_path / f"{i % 7}-doc.json"
        p.write_text(value, encoding="utf-8", errors="surrogatepass")
        return parse(p)
    return parse(value)


def test_fuzzed_documents_raise_only_cordmap_errors(tmp_path):
    accepted, refused, other = [], 0, []
    for i, (form, value) in enumerate(documents(N_DOCUMENTS, seed=13)):
        try:
            accepted.append(_read(form, value, tmp_path, i))
        except CordmapError as e:
            refused += 1
            msg = str(e)
            assert "\n" not in msg and len(msg) <= MAX_MESSAGE, msg[:200]
        except Exception as e:  # noqa: BLE001 - what the test counts
            other.append(f"{form}: {type(e).__name__}: {str(e)[:120]}")
    assert not other, f"{len(other)} of {N_DOCUMENTS} raised something else, e.g. {other[:5]}"
    assert refused > N_DOCUMENTS // 4 and len(accepted) > N_DOCUMENTS // 10  # the generator does both
    for phase in ("chronic", "acute"):
        sel = [f for f in accepted if f.phase == phase]
        if sel:
            scores = batch_scores(sel, atlas_mod.get(phase))
            assert scores.shape[0] == len(sel)
    for f in random.Random(1).sample(accepted, min(N_RANKED, len(accepted))):
        r = rank(f, top=3)
        assert r.hypotheses and r.cautions


def test_fuzzed_cohort_rows_are_errors_of_their_case():
    rng = random.Random(7)
    base = valid_documents()
    for _ in range(600):
        rows = tidy_case(rng, base)
        try:
            from_rows(rows)
        except CordmapError as e:
            assert "\n" not in str(e) and len(str(e)) <= MAX_MESSAGE
        # anything else fails the test with its traceback


def _cli(*args) -> int:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(list(args))
    if code == 2 and args[0] != "batch":
        assert len(err.getvalue().strip().splitlines()) == 1, err.getvalue()[:300]
    return code


def test_fuzzed_files_on_the_command_line_exit_0_or_2(tmp_path):
    codes = []
    for i, (_form, value) in enumerate(documents(60, seed=99)):
        p = tmp_path / f"case-{i}.json"
        p.write_bytes(file_bytes(value))
        codes.append(_cli("rank", str(p), "--show", "2") if i % 2 else _cli("classify", str(p)))
    assert set(codes) <= {0, 2} and 0 in codes and 2 in codes
