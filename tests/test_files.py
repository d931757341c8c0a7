"""Files: nothing overwritten unless asked, atomic writes, regular files only, bounded reads, a path is a path,
and a cohort whose rows contradict themselves is an error for that case only."""
from __future__ import annotations

import json
import os
import subprocess
import sys
import threading
import time

import pandas as pd
import pytest

from cordmap import Lesion, simulate
from cordmap.cohort import read_cases
from cordmap.errors import CordmapError
from cordmap.files import MAX_FINDINGS_BYTES, check_output, write_atomic
from cordmap.findings import parse

DOC = simulate(Lesion("complete", "both", "T8")).to_json()


def run(*args, timeout=60):
    return subprocess.run([sys.executable, "-m", "cordmap", *map(str, args)], capture_output=True, text=True,
                          timeout=timeout)


def one_line_error(r) -> str:
    assert r.returncode == 2, r.stderr
    assert "Traceback" not in r.stderr
    lines = r.stderr.strip().splitlines()
    assert len(lines) == 1, lines
    return lines[0]


def cohort_csv(path, cases):
    frames = []
    for cid, les in cases:
        df = simulate(les).tidy()
        df.insert(0, "case_id", cid)
        frames.append(df)
    pd.concat(frames).to_csv(path, index=False)
    return path


def test_batch_never_overwrites_its_input_or_an_existing_file(tmp_path):
    src = cohort_csv(tmp_path / "c.csv", [("a", Lesion("complete", "both", "T8"))])
    before = src.read_bytes()
    assert "is the input file" in one_line_error(run("batch", src, "-o", src))
    assert "is the input file" in one_line_error(run("batch", src, "-o", src, "--force"))
    assert "is the input file" in one_line_error(run("batch", src, "-o", tmp_path / "." / "c.csv"))
    assert src.read_bytes() == before
    out = tmp_path / "out.csv"
    out.write_text("my notes")
    assert "--force" in one_line_error(run("batch", src, "-o", out))
    assert out.read_text() == "my notes"
    r = run("batch", src, "-o", out, "--force")
    assert r.returncode == 0, r.stderr
    assert pd.read_csv(out)["status"].tolist() == ["ok"]
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".part")]


def test_batch_output_problems_are_found_before_the_work(tmp_path):
    src = cohort_csv(tmp_path / "c.csv", [("a", Lesion("complete", "both", "T8"))])
    assert "does not exist" in one_line_error(run("batch", src, "-o", tmp_path / "missing" / "out.csv"))
    (tmp_path / "folder").mkdir()
    assert "is a folder" in one_line_error(run("batch", src, "-o", tmp_path / "folder"))
    assert "is a folder" in one_line_error(run("batch", src, "-o", tmp_path / "folder", "--force"))


def test_section_png_refuses_an_existing_file(tmp_path):
    out = tmp_path / "s.png"
    out.write_bytes(b"keep")
    assert "--force" in one_line_error(run("section", "C5", "-o", out))
    assert out.read_bytes() == b"keep"
    assert run("section", "C5", "-o", out, "--force").returncode == 0
    assert out.read_bytes()[:4] == b"\x89PNG"


def test_write_atomic_leaves_no_half_file(tmp_path, monkeypatch):
    out = check_output(tmp_path / "r.csv")
    calls = []

    def broken_fsync(fd):
        calls.append(fd)
        raise OSError(28, "No space left on device")
    monkeypatch.setattr(os, "fsync", broken_fsync)
    with pytest.raises(CordmapError, match="cannot be written .No space left"):
        write_atomic(out, b"x" * 1000)
    assert calls and list(tmp_path.iterdir()) == []


def test_conflicting_rows_are_an_error_for_that_case_only(tmp_path):
    """27 of 100 injected bad cases once passed as ok; now every one is an error and every good case is kept."""
    good = [(f"g{i}", Lesion("hemisection", "left" if i % 2 else "right", f"T{3 + i % 8}")) for i in range(20)]
    bad = [(f"b{i}", Lesion("complete", "both", f"T{2 + i % 9}")) for i in range(10)]
    src = cohort_csv(tmp_path / "c.csv", good + bad)
    df = pd.read_csv(src, dtype=str, keep_default_na=False)
    extra = []
    for i, (cid, _) in enumerate(bad):
        rows = df[df.case_id == cid]
        if i % 3 == 0:  # a motor grade given twice, differently
            row = rows[rows.exam == "motor"].iloc[0].copy()
            row["value"] = "5" if row["value"] != "5" else "0"
        elif i % 3 == 1:  # a sensory grade: 'normal' against the recorded one
            row = rows[(rows.exam == "sensory") & (rows.value == "absent")].iloc[0].copy()
            row["value"] = "normal"
        else:  # two phases
            row = rows.iloc[0].copy()
            row["exam"], row["name"], row["side"], row["segment"], row["value"] = "phase", "", "", "", "acute"
            extra.append(row.to_dict() | {"value": "chronic"})
        extra.append(row.to_dict())
    dup = df[df.case_id == "g0"].iloc[[0]]  # a repeated row that agrees is fine
    pd.concat([df, pd.DataFrame(extra), dup]).to_csv(src, index=False)
    out = tmp_path / "out.csv"
    r = run("batch", src, "-o", out)
    assert r.returncode == 2  # some cases failed
    res = pd.read_csv(out, dtype=str, keep_default_na=False).set_index("case_id")
    assert len(res) == 30 and set(res.index) == {c for c, _ in good + bad}
    assert (res.loc[[c for c, _ in good], "status"] == "ok").all()
    errors = res.loc[[c for c, _ in bad]]
    assert (errors["status"] == "error").all()
    assert errors["error"].str.contains(r"line \d+ and line \d+ give .* two values").all(), errors["error"].tolist()
    assert "30 cases: 20 ranked, 10 failed" in r.stderr
    # the good cases get the same answer as in a clean cohort
    clean = cohort_csv(tmp_path / "clean.csv", good)
    assert run("batch", clean, "-o", tmp_path / "clean-out.csv").returncode == 0
    ref = pd.read_csv(tmp_path / "clean-out.csv", dtype=str, keep_default_na=False).set_index("case_id")
    assert (res.loc[ref.index, "pattern"] == ref["pattern"]).all() and (res.loc[ref.index, "top"] == ref["top"]).all()


def test_cohort_rows_with_hostile_values(tmp_path):
    src = tmp_path / "c.csv"
    src.write_text("case_id,exam,name,side,segment,value\n"
                   "a,motor,mrc,left,L2,²\n"
                   "b,motor,mrc,left,L2," + "1" * 5000 + "\n"
                   "c,sensory,pinprick,left,T10," + "x" * 10_000 + "\n"
                   "d,motor,mrc,left,L2,3,extra\n"
                   ",motor,mrc,left,L2,3\n"
                   "e,motor,mrc,left,L2,4\n", encoding="utf-8")
    cases = {c.case_id: c for c in read_cases(src)}
    assert cases["e"].ok and not any(cases[k].ok for k in "abcd")
    assert "motor.left['L2']" in cases["a"].error and "'²'" in cases["a"].error
    assert all(len(c.error) < 400 for c in cases.values())
    assert "line 6" in cases["line 6"].error
    jl = tmp_path / "c.jsonl"
    jl.write_text("\n".join([json.dumps(str(tmp_path / "c.csv")), '"' + DOC.replace('"', '\\"').replace("\n", "")
                             + '"', "[" * 100_000, '{"case_id": [1], "format": "cordmap-findings/1"}',
                             json.dumps(json.loads(DOC) | {"case_id": "x"}),
                             json.dumps(json.loads(DOC) | {"case_id": "x"})]))
    cases = list(read_cases(jl))
    assert [c.ok for c in cases] == [False, False, False, False, True, False]
    assert "expected a findings document" in cases[0].error  # a JSON string is not opened as a path
    assert "nested too deeply" in cases[2].error and "already used on line 5" in cases[5].error


@pytest.mark.parametrize("name", ["2024-exam.json", "-exam.json", "[draft].json", "{x}.json", "true.json",
                                  "null", "false-alarm.json", "123"])
def test_a_path_is_a_path_whatever_its_first_character(tmp_path, name):
    p = tmp_path / name
    p.write_text(DOC)
    assert parse(p).items == parse(DOC).items
    r = run("rank", "--show", "1", "--", p)
    assert r.returncode == 0 and "whole cross-section of the cord at T8" in r.stdout, r.stderr


def _answers_within(fn, seconds: float):
    """Run fn in a thread: (finished in time, its exception)."""
    box = {}

    def go():
        try:
            fn()
        except BaseException as e:  # noqa: BLE001
            box["e"] = e
    t = threading.Thread(target=go, daemon=True)
    t0 = time.perf_counter()
    t.start()
    t.join(seconds)
    return not t.is_alive(), box.get("e"), time.perf_counter() - t0


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no FIFOs on this system")
def test_fifo_and_devices_answered_at_once(tmp_path):
    fifo = tmp_path / "exam.json"
    os.mkfifo(fifo)
    for path, kind in ((fifo, "FIFO"), ("/dev/zero", "device"), ("/dev/null", "device"), (tmp_path, "folder")):
        done, err, dt = _answers_within(lambda p=path: parse(__import__("pathlib").Path(p)), 1.0)
        assert done and isinstance(err, CordmapError) and kind in str(err), (path, err)
        assert dt < 1.0
    for args in (("rank", fifo), ("classify", "/dev/zero"), ("batch", fifo, "-o", tmp_path / "o.csv")):
        assert "regular file" in one_line_error(run(*args, timeout=20))


def test_findings_file_size_limit(tmp_path):
    p = tmp_path / "big.json"
    p.write_bytes(b" " * (MAX_FINDINGS_BYTES + 1))
    with pytest.raises(CordmapError, match="over the 4 MB limit"):
        parse(p)


def test_messages_cut_long_values():
    with pytest.raises(CordmapError) as e:
        parse({"format": "cordmap-findings/1", "motor": {"left": {"L2": "7" * 10_000}}})
    assert len(str(e.value)) < 200 and "..." in str(e.value)
    with pytest.raises(CordmapError) as e:
        parse({"format": "cordmap-findings/1", "sensory": {"pinprick": {"left": {"T" * 10_000: "normal"}}}})
    assert len(str(e.value)) < 300


def test_top_must_be_positive():
    for bad in ("0", "-5", "x", "²"):
        r = run("demo", "--show", bad)
        assert r.returncode == 2 and "1..100" in r.stderr and "Traceback" not in r.stderr
