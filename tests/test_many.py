"""Cohorts: cordmap.rank_many (lists, mappings, tidy DataFrames; errors as rows) and the README's batch formats."""
import json
import re
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest

import cordmap
from cordmap import Lesion, demo, simulate
from cordmap.cohort import read_cases
from cordmap.many import BATCH_FIELDS

README = Path(__file__).resolve().parent.parent / "README.md"


def readme_block(lang: str, after: str) -> str:
    """The first ```lang block after the heading or text `after` in the README."""
    text = README.read_text(encoding="utf-8")
    start = text.index(after)
    m = re.compile(rf"```{lang}\n(.*?)```", re.S).search(text, start)
    assert m, f"no {lang} block after {after!r}"
    return m.group(1)


def test_rank_many_agrees_with_rank():
    exams = [demo.case(n) for n in demo.names()]
    df = cordmap.rank_many(exams)
    assert list(df.columns) == BATCH_FIELDS and list(df["case_id"]) == ["1", "2", "3"]
    for (_, row), f in zip(df.iterrows(), exams):
        best = cordmap.rank(f, top=1, next_tests=0, classify=False).best
        assert (row.pattern, row.side, row.top, row.bottom) == (best.lesion.pattern, best.lesion.side,
                                                                 best.lesion.top, best.lesion.bottom)
        assert row.probability == pytest.approx(best.probability, abs=1e-3)


def test_errors_are_rows_not_exceptions():
    good = simulate(Lesion("complete", "both", "T8")).to_dict()
    exams = [{**good, "case_id": "a"}, {"format": "cordmap-findings/1", "motor": {"left": {"L2": 7}}},
             "not json", {**good, "case_id": "a"}, Path("/nonexistent/exam.json")]
    df = cordmap.rank_many(exams).set_index("case_id", drop=False)
    assert list(df["status"]) == ["ok", "error", "error", "error", "error"]
    assert df.iloc[0]["pattern"] == "complete"
    assert "motor.left['L2']" in df.iloc[1]["error"] and "not valid JSON" in df.iloc[2]["error"]
    assert "already used" in df.iloc[3]["error"] and "no such findings file" in df.iloc[4]["error"]
    assert df["probability"].dtype.kind == "f"


def test_tidy_dataframe_and_mapping():
    frames = []
    for cid, les in (("x1", Lesion("complete", "both", "T8")), ("x2", Lesion("root", "left", "C6"))):
        t = simulate(les).tidy()
        t.insert(0, "case_id", cid)
        frames.append(t)
    bad = pd.DataFrame([{"case_id": "x3", "exam": "motor", "name": "mrc", "side": "left", "segment": "L3",
                         "value": "2"}, {"case_id": "x3", "exam": "motor", "name": "mrc", "side": "left",
                                         "segment": "L3", "value": "4"}])
    df = cordmap.rank_many(pd.concat([*frames, bad], ignore_index=True))
    assert list(df["case_id"]) == ["x1", "x2", "x3"]
    assert list(df["pattern"][:2]) == ["complete", "root"] and df["status"][2] == "error"
    assert "two values" in df["error"][2]
    by_map = cordmap.rank_many({"p": demo.case(), "q": {"format": "nope"}})
    assert list(by_map["case_id"]) == ["p", "q"] and list(by_map["status"]) == ["ok", "error"]


def test_one_exam_or_a_bad_table_is_an_error_naming_it():
    with pytest.raises(cordmap.CordmapError, match="use cordmap.rank for one exam"):
        cordmap.rank_many(demo.case())
    with pytest.raises(cordmap.CordmapError, match="missing .case_id."):
        cordmap.rank_many(demo.case().tidy())


def test_readme_python_example_runs(tmp_path):
    code = readme_block("python", "### Cohorts")
    assert len(code.strip().splitlines()) <= 5
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=tmp_path)
    assert r.returncode == 0, r.stderr
    assert " a " in r.stdout and " b " in r.stdout and "ok" in r.stdout


def test_readme_cohort_files_are_read_and_batched(tmp_path):
    csv_path = tmp_path / "cohort.csv"
    csv_path.write_text(readme_block("csv", "### Cohorts"))
    jsonl = tmp_path / "cohort.jsonl"
    jsonl.write_text(readme_block("jsonl", "### Cohorts"))
    for path in (csv_path, jsonl):
        cases = list(read_cases(path))
        assert [c.case_id for c in cases] == ["a", "b"] and all(c.ok for c in cases), [c.error for c in cases]
    out = tmp_path / "results.csv"
    r = subprocess.run([sys.executable, "-m", "cordmap", "batch", str(csv_path), "-o", str(out), "--quiet"],
                       capture_output=True, text=True)
    assert r.returncode == 0 and r.stderr == ""  # --quiet: nothing on stderr (no progress, no summary)
    res = pd.read_csv(out)
    assert list(res.columns) == BATCH_FIELDS and list(res["status"]) == ["ok", "ok"]


def test_batch_progress_only_on_a_terminal_and_exit_2_on_failure(tmp_path, capsys, monkeypatch):
    from cordmap import cli

    src = tmp_path / "c.jsonl"
    src.write_text(json.dumps({**demo.case().to_dict(), "case_id": "a"}) + "\n{broken\n")
    monkeypatch.setattr(cli, "_stderr_is_terminal", lambda: True)
    assert cli.main(["batch", str(src), "-o", str(tmp_path / "o.csv")]) == 2
    err = capsys.readouterr().err
    assert "chronic [" in err and "1/1" in err and "2 cases: 1 ranked, 1 failed" in err
    monkeypatch.setattr(cli, "_stderr_is_terminal", lambda: False)
    assert cli.main(["batch", str(src), "-o", str(tmp_path / "p.csv")]) == 2
    assert "chronic [" not in capsys.readouterr().err
    assert cli.main(["batch", str(src), "-o", str(tmp_path / "q.csv"), "--quiet"]) == 2
    assert capsys.readouterr().err == ""
