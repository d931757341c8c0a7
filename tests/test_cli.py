"""The command line: outputs, exit codes, one-line errors."""
import json
import subprocess
import sys

import pytest

from cordmap.cli import main


def run(*args):
    return subprocess.run([sys.executable, "-m", "cordmap", *args], capture_output=True, text=True)


def test_patterns_lists_every_id(capsys):
    from cordmap.lesions import PATTERNS

    assert main(["patterns"]) == 0
    out = capsys.readouterr().out
    for pid in PATTERNS:
        assert pid in out


def test_patterns_read_in_clinical_groups(capsys):
    """Nerves and the polyneuropathy have no cord level; every parameter is explained with the values ranked."""
    assert main(["patterns"]) == 0
    out = capsys.readouterr().out
    cord, rest = out.split("The conus, the cauda equina", 1)
    roots, nerves = rest.split("One peripheral nerve of a limb", 1)
    assert "hemisection" in cord and "cauda_equina" in roots and "peroneal_fibular_head" in nerves
    assert "rostral segment" not in nerves.split("No lesion")[0]
    assert "no cord level (its exam resembles the L5 root's)" in nerves
    assert "- contra: share of the other side's roots involved (default 0.5; ranked at 0, 0.5, 1)" in roots


def test_simulate_prints_a_findings_document(capsys):
    assert main(["simulate", "hemisection", "--side", "left", "--rostral", "T6"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["format"] == "cordmap-findings/2"  # the forward model predicts the non-key muscles too
    assert doc["motor"]["left"]["L3"] == 0 and doc["motor"]["right"]["L3"] == 5
    assert doc["muscles"]["left"]["hip_adduction"] == 0 and doc["muscles"]["right"]["hip_adduction"] == 5


@pytest.mark.parametrize("args, needle", [
    (["simulate", "hemi"], "did you mean hemisection"),
    (["simulate", "complete", "--rostral", "T13"], "did you mean T12"),
    (["simulate", "hemisection", "--side", "up"], "allowed left, right"),
    (["simulate", "central", "--param", "size"], "NAME=VALUE"),
    (["simulate", "central", "--param", "size=big"], "not a number"),
    (["simulate", "complete", "--phase", "later"], "allowed chronic, acute"),
    (["rank", "/nonexistent/file.json"], "no such findings file"),
])
def test_bad_input_exits_2_with_one_line(args, needle):
    r = run(*args)
    assert r.returncode == 2
    assert needle in r.stderr
    assert "Traceback" not in r.stderr and len(r.stderr.strip().splitlines()) == 1


def test_rank_text_and_json(tmp_path):
    from cordmap import Lesion, simulate

    path = tmp_path / "case.json"
    path.write_text(simulate(Lesion("complete", "both", "T8")).to_json())
    text = run("rank", str(path), "--show", "3")
    assert text.returncode == 0
    assert "whole cross-section of the cord at T8" in text.stdout and "Decision support, not a diagnosis" in text.stdout
    js = json.loads(run("rank", str(path), "--json").stdout)
    assert js["format"] == "cordmap-ranking/1" and js["hypotheses"][0]["pattern"] == "complete"


def test_demo_runs_with_cautions():
    r = run("demo")
    assert r.returncode == 0
    assert "invented" in r.stdout and "Decision support, not a diagnosis" in r.stdout
    assert "half of the cord (Brown-Séquard)" in r.stdout.split("\n 2.")[0]


def test_bad_rank_file(tmp_path):
    p = tmp_path / "bad.json"
    p.write_text('{"format": "cordmap-findings/1", "motor": {"left": {"L2": 7}}}')
    r = run("rank", str(p))
    assert r.returncode == 2 and "motor.left['L2']" in r.stderr and "allowed 0, 1, 2, 3, 4, 5, NT" in r.stderr


def test_batch_keeps_good_cases(tmp_path):
    from cordmap import Lesion, simulate

    lines = [json.dumps({**simulate(Lesion("complete", "both", "T8")).to_dict(), "case_id": "a"}),
             '{"format": "cordmap-findings/1", "sensory": {"pinprick": {"left": {"T13": "absent"}}}, "case_id": "b"}',
             "not json at all",
             json.dumps({**simulate(Lesion("root", "left", "C6")).to_dict(), "case_id": "d"})]
    src = tmp_path / "cohort.jsonl"
    src.write_text("\n".join(lines))
    out = tmp_path / "out.csv"
    r = run("batch", str(src), "-o", str(out))
    assert r.returncode == 2, r.stderr  # some cases failed; the others are in the output
    import pandas as pd

    df = pd.read_csv(out).set_index("case_id")
    assert df.loc["a", "pattern"] == "complete" and df.loc["d", "pattern"] == "root"
    assert df.loc["b", "status"] == "error" and "T13" in df.loc["b", "error"]
    assert (df["status"] == "error").sum() == 2
    assert "case b: error:" in r.stderr and "4 cases: 2 ranked, 2 failed" in r.stderr


def test_batch_tidy_csv(tmp_path):
    from cordmap import Lesion, simulate

    frames = []
    for cid, les in (("x1", Lesion("complete", "both", "T8")), ("x2", Lesion("hemisection", "right", "T4"))):
        df = simulate(les).tidy()
        df.insert(0, "case_id", cid)
        frames.append(df)
    import pandas as pd

    src = tmp_path / "cohort.csv"
    pd.concat(frames).to_csv(src, index=False)
    out = tmp_path / "out.csv"
    assert run("batch", str(src), "-o", str(out)).returncode == 0
    res = pd.read_csv(out).set_index("case_id")
    assert res.loc["x1", "pattern"] == "complete"
    assert res.loc["x2", "pattern"] in ("hemisection", "lateral_compression") and res.loc["x2", "side"] == "right"
    # the right hemisection T4 and a right lateral compression of depth 0.5 predict the same exam: one row names both
    other = "compression from the right" if res.loc["x2", "pattern"] == "hemisection" else "right half of the cord"
    assert other in res.loc["x2", "same_exam"]


def test_section_png(tmp_path):
    out = tmp_path / "s.png"
    r = run("section", "C5", "--lesion", "hemisection", "--side", "left", "--rostral", "C5", "-o", str(out))
    assert r.returncode == 0, r.stderr
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_extent_and_count_have_their_own_options(capsys):
    """--rostral/--caudal give the lesion's extent, --show the number of hypotheses listed; the old --top and
    --bottom still work with a note on stderr (issue 12: --top meant both)."""
    assert main(["simulate", "hemisection", "--side", "left", "--rostral", "T6", "--caudal", "T7"]) == 0
    out = capsys.readouterr()
    assert '"T6-T7"' in out.out or "T6" in out.out
    assert "note" not in out.err
    assert main(["simulate", "hemisection", "--side", "left", "--top", "T6", "--bottom", "T7"]) == 0
    err = capsys.readouterr().err
    assert "--top is now spelled --rostral" in err and "--bottom is now spelled --caudal" in err
    assert main(["demo", "--show", "2"]) == 0
    out = capsys.readouterr()
    assert " 2. " in out.out and " 3. " not in out.out and "note" not in out.err
    assert main(["demo", "--top", "1"]) == 0
    out = capsys.readouterr()
    assert " 1. " in out.out and " 2. " not in out.out and "--top is now spelled --show" in out.err
