"""Courses of serial exams (cordmap.course, course_report, course_alarms, course_cohort, `cordmap course`).

Sources named beside each check:
[R19] ISNCSCI 2019 revision, Rupp et al., Top Spinal Cord Inj Rehabil 2021;27(2):1-22, read through the summary table
      in shared/reference/clinical-check-values.md section 1c (the same worked examples as tests/test_classify.py).
[RK]  a clinicians' forum (rehabknowledge.com replies 487960, 489490 via the same table): low authority.
Courses built only to exercise the alarm rules are invented (they are scenarios, not data).
"""
from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

import cordmap
from cordmap import cautions as C
from cordmap.anatomy import anatomy
from cordmap.course import FORMAT, MAX_EXAMS, Course, demo, demo_path, parse_course, read
from cordmap.course_alarms import MOTOR_TOTAL_NOISE, NOT_SHOCK, alarms
from cordmap.course_report import fast_leads, follow
from cordmap.errors import CordmapError
from cordmap.findings import parse

DERMS = anatomy().dermatomes
MYO = ("C5", "C6", "C7", "C8", "T1", "L2", "L3", "L4", "L5", "S1")


def motor(spec: str) -> dict:
    """Ten characters for C5..S1: a grade 0-5."""
    return {m: int(ch) for m, ch in zip(MYO, spec)}


def normal_to(level: str, below: str = "absent", sacral: str | None = None) -> dict:
    n = DERMS.index(level) + 1 if level != "C1" else 0
    spec = {d: ("normal" if i < n else below) for i, d in enumerate(DERMS)}
    if sacral:
        spec["S4-5"] = sacral
    return spec


def doc(left: dict, right: dict | None = None, *, ml="5555555555", mr=None, vac=False, dap=False, phase="chronic",
        reflexes=None, bladder=None) -> dict:
    right = left if right is None else right
    lt = {"left": left, "right": right}
    d = {"format": "cordmap-findings/1", "phase": phase, "sensory": {"light_touch": lt, "pinprick": lt},
         "motor": {"left": motor(ml), "right": motor(ml if mr is None else mr)},
         "signs": {"voluntary_anal_contraction": vac, "deep_anal_pressure": dap}}
    if reflexes:
        d["reflexes"] = reflexes
    if bladder:
        d["signs"]["bladder"] = bladder
    return d


def level_exam(level: str, legs: str = "44444", vac=True, **kw) -> dict:
    """An incomplete thoracic exam: sensation normal to `level`, impaired below (S4-5 impaired: sacral sparing)."""
    return doc(normal_to(level, "impaired"), ml="55555" + legs, vac=vac, dap=True, **kw)


def rules(course) -> list[str]:
    return [a.rule for a in alarms(course)]


# ---------------------------------------------------------------- worked examples: conversion and level changes

def test_conversion_a_to_d_with_levels_descending():
    # First exam: the grade-A thoracic example of tests/test_classify.py ([R19] definitions: sensory L T6 / R T7,
    # motor following the sensory level in T2-L1, NLI T6, complete). Last exam: the forum's NLI T10 example with
    # VAC present and 7 of the 10 key muscles below the NLI >= 3 -> AIS D ([RK], rule [R19]).
    a = doc({"C2-T6": "normal", "T7-T9": "impaired", "T10-S4-5": "absent"},
            {"C2-T7": "normal", "T8-T9": "impaired", "T10-S4-5": "absent"}, ml="5555500000")
    d = doc(normal_to("T10", "impaired"), ml="5555533300", mr="5555533330", vac=True, dap=True)
    r = follow(Course([(0, a), (30, d)], time_unit="days"), rank="none")
    assert [c.ais for c in r.classifications] == ["A", "D"]
    st = r.steps[0]
    assert st.conversion == "AIS A -> D (3 grades better)"
    by = {(c.measure, c.side): c for c in st.changes}
    # T6 -> T10 is 4 segments caudal ("down"), T7 -> T10 is 3: levels counted on C1, C2 .. S4-5 [R19]
    assert by[("sensory_level", "left")].delta == 4 and "4 segments down" in by[("sensory_level", "left")].words
    assert by[("sensory_level", "right")].delta == 3
    assert (by[("nli", "")].before, by[("nli", "")].after) == ("T6", "T10")
    assert by[("complete", "")].words == "complete -> incomplete"
    # LEMS 0 -> 9 + 12 = 21 (scores as [R19]: 25 per limb)
    assert by[("lems", "total")].delta == 21
    # the motor zone applies only without VAC (2019 rule [R19]): T6 on the left at the first exam, NA at the last
    assert (by[("zpp_motor", "left")].before, by[("zpp_motor", "left")].after) == ("T6", "NA")
    assert not [a for a in r.alarms if a.severity != "note"]  # recovery raises nothing


def test_conversion_b_to_c():
    # AIS B: sensory sparing only, NLI C5 ([R19]; the B example of tests/test_classify.py). AIS C: VAC present and
    # 3 of the 16 key muscles below NLI C6 >= 3 ([RK] forum example, rule [R19]).
    b = doc(normal_to("C5", "impaired"), ml="4000000000", vac=False, dap=False)
    c = doc(normal_to("C6", "impaired"), ml="5433000000", mr="5420030000", vac=True, dap=True)
    r = follow(Course([(0, b), (72, c)]), rank="none")
    assert [k.ais for k in r.classifications] == ["B", "C"]
    assert r.steps[0].conversion == "AIS B -> C (1 grade better)"
    by = {(k.measure, k.side): k for k in r.steps[0].changes}
    assert by[("nli", "")].words == "neurological level C5 -> C6 (1 segment down)"
    assert not r.urgent


def test_table_is_tidy():
    c = Course([(0, level_exam("T10")), (6, level_exam("T8"))])
    t = c.table
    assert list(t.columns) == ["exam", "time", "time_unit", "phase", "measure", "side", "value", "numeric"]
    assert len(t) == 2 * 23 and t.groupby(["exam", "measure", "side"]).size().max() == 1
    row = t[(t.exam == 1) & (t.measure == "sensory_level") & (t.side == "left")].iloc[0]
    assert row.value == "T8" and row.numeric == 1 + DERMS.index("T8")  # C1 = 0, C2 = 1, ...
    assert math.isnan(t[(t.measure == "zpp_motor")].numeric.iloc[0])  # "NA" is no number


# ---------------------------------------------------------------- alarms (invented courses)

def test_compression_climbing_t10_to_t6_over_12_hours_raises_the_alarm():
    c = Course([(0, level_exam("T10")), (12, level_exam("T6"))])
    al = [a for a in alarms(c) if a.rule == "level_ascent"]
    assert len(al) == 1 and al[0].severity == "urgent" and al[0].exam == 1
    assert "T10 -> T6 (4 segments up)" in al[0].what and "12 h" in al[0].what
    assert al[0].source and C.EMERGENCY in al[0].cautions


def test_climb_in_two_steps_and_slow_creep():
    steps = Course([(0, level_exam("T10")), (6, level_exam("T8")), (12, level_exam("T6"))])
    assert rules(steps).count("level_ascent") == 2
    creep = Course([(0, level_exam("T10")), (4, level_exam("T9")), (8, level_exam("T8")), (12, level_exam("T7"))])
    al = [a for a in alarms(creep) if a.rule == "level_ascent"]
    assert len(al) == 1 and al[0].exam == 2 and "first exam" in al[0].what  # raised once, when it reaches 2


def test_stable_or_falling_level_raises_nothing():
    stable = Course([(0, level_exam("T10")), (6, level_exam("T10")), (12, level_exam("T10"))])
    assert rules(stable) == []
    one = Course([(0, level_exam("T10")), (6, level_exam("T9"))])  # one segment: within charting noise
    assert rules(one) == []
    falling = Course([(0, level_exam("T6", "11111")), (72, level_exam("T8", "22222")),
                      (336, level_exam("T10", "44444"))])
    assert rules(falling) == []


def test_breathing_alarm_on_any_ascent_into_c5():
    c = Course([(0, level_exam("C6", legs="33333")), (3, level_exam("C5", legs="33333"))])
    got = alarms(c)
    assert [a.rule for a in got] == ["breathing"]  # one segment: no level_ascent, but the diaphragm is reached
    assert C.BREATHING in got[0].cautions
    assert C.BREATHING in follow(c, rank="none").cautions


def test_incomplete_becoming_complete():
    b = doc(normal_to("T4", "impaired"), ml="5555500000", vac=False, dap=True)
    a = doc(normal_to("T4"), ml="5555500000", vac=False, dap=False)
    got = rules(Course([(0, b), (24, a)]))
    assert "became_complete" in got and "grade_fell" not in got and "sacral_loss" in got


def test_grade_falling_without_becoming_complete():
    d = level_exam("T10", "44444")
    c = level_exam("T10", "22222")
    got = alarms(Course([(0, d), (24, c)]))
    assert {a.rule for a in got} == {"grade_fell", "motor_fall"}


def test_new_sacral_loss_and_retention():
    c = Course([(0, level_exam("T10", bladder="urgency")), (6, level_exam("T10", vac=False, bladder="retention"))])
    al = [a for a in alarms(c) if a.rule == "sacral_loss"]
    assert len(al) == 1 and "voluntary anal contraction lost" in al[0].what and "retention" in al[0].what
    # a thoracic level: the cauda equina caution does not fit this patient
    assert all("Cauda equina" not in x for x in al[0].cautions)


def test_motor_fall_beyond_stated_noise_only():
    base = level_exam("T10", "44444")
    within = level_exam("T10", "44443")  # total 2 lower: within the noise of MOTOR_TOTAL_NOISE points
    assert MOTOR_TOTAL_NOISE == 5
    assert "motor_fall" not in rules(Course([(0, base), (6, within)]))
    beyond = level_exam("T10", "33334")  # 8 points lower
    assert "motor_fall" in rules(Course([(0, base), (6, beyond)]))
    one_muscle = level_exam("T10", "44442")  # 2 grades in S1 on each side, 4 points in all
    got = [a for a in alarms(Course([(0, base), (6, one_muscle)])) if a.rule == "motor_fall"]
    assert len(got) == 1 and "2 key muscles down 2 grades" in got[0].what and "total" not in got[0].what


def test_spinal_shock_explains_reflexes_not_a_climbing_level():
    quiet = {"left": {"knee": "absent", "ankle": "absent"}, "right": {"knee": "absent", "ankle": "absent"}}
    brisk = {"left": {"knee": "brisk", "ankle": "brisk"}, "right": {"knee": "brisk", "ankle": "brisk"}}
    c = Course([(0, level_exam("T10", phase="acute", reflexes=quiet)),
                (24, level_exam("T6", phase="acute", reflexes=quiet)),
                (21 * 24, level_exam("T8", reflexes=brisk))])
    al = alarms(c)
    climb = next(a for a in al if a.rule == "level_ascent")
    assert NOT_SHOCK in climb.meaning
    note = al[-1]
    assert note.rule == "spinal_shock" and note.severity == "note"
    assert "left knee reflex absent -> brisk" in note.what  # the end of shock, not a new finding to alarm on
    assert "level ascent" in note.meaning  # named as not explained
    # a chronic course gets no shock note
    assert "spinal_shock" not in rules(Course([(0, level_exam("T10")), (6, level_exam("T10"))]))


# ---------------------------------------------------------------- hypotheses and words

def test_leading_hypothesis_stays_or_moves_and_fast_leads_match_rank():
    from cordmap.rank import rank

    c = demo()
    r = follow(c)
    for e, lead in zip(c.exams, r.leads):
        h = rank(e.findings, top=1, next_tests=0, classify=False).hypotheses[0]
        assert (lead.pattern, lead.side, lead.top, lead.bottom) == (h.lesion.pattern, h.lesion.side, h.lesion.top,
                                                                    h.lesion.bottom)
        assert lead.probability == pytest.approx(h.probability, abs=1e-4)
    assert all(s.lead_moved is not None for s in r.steps)
    same = follow(Course([(0, c.exams[2].findings), (1, c.exams[2].findings)]))
    assert same.steps[0].lead_moved is False and same.steps[0].lead.startswith("stayed")
    assert fast_leads([parse({"format": "cordmap-findings/1"})]) == [None]  # nothing entered: no leader


def test_findings_appeared_and_resolved_in_words():
    c = Course([(0, level_exam("T10")), (6, level_exam("T8", vac=False)), (9, level_exam("T10"))])
    r = follow(c, rank="none")
    assert "light touch left T9-T10: normal -> impaired" in r.steps[0].appeared
    assert "voluntary anal contraction: present -> absent" in r.steps[0].appeared
    assert "voluntary anal contraction: absent -> present" in r.steps[1].resolved
    assert r.overall is not None and r.overall.changes == ()


# ---------------------------------------------------------------- the format and bad input

def test_one_exam_is_a_course_with_nothing_to_compare():
    r = follow(Course([(0, level_exam("T10"))]), rank="none")
    assert r.steps == () and r.overall is None and r.alarms == ()
    assert any("nothing to compare" in n for n in r.notes)


@pytest.mark.parametrize(("exams", "kw", "needle"), [
    ([(6, "A"), (3, "A")], {}, "exams[1].time: 3 h is not later than exams[0] at 6 h"),
    ([(0, "A"), (0, "A")], {}, "one exam per time"),
    ([(0, "C"), (6, "A")], {}, "exams[1].phase: 'acute' after a 'chronic' exam"),
    ([], {}, "at least one exam"),
    ([(2, "A")], {"since": "first_exam"}, "starts at 0"),
    ([(-1, "A")], {}, "exams[0].time: -1 is not a time >= 0"),
    ([(True, "A")], {}, "exams[0].time: expected a number"),
    ([(float("nan"), "A")], {}, "not a time"),
    ([(0, "A")], {"time_unit": "weeks"}, "time_unit: unknown time unit 'weeks'"),
])
def test_bad_courses_are_one_line_errors(exams, kw, needle):
    docs = {"A": level_exam("T10", phase="acute"), "C": level_exam("T10")}
    with pytest.raises(CordmapError) as e:
        Course([(t, docs[k]) for t, k in exams], **kw)
    assert needle in str(e.value) and "\n" not in str(e.value)


def test_acute_then_chronic_is_allowed():
    c = Course([(0, level_exam("T10", phase="acute")), (72, level_exam("T10"))])
    assert [e.findings.phase for e in c.exams] == ["acute", "chronic"]


def _write(folder: Path, name: str, obj) -> Path:
    p = folder / name
    p.write_text(json.dumps(obj))
    return p


def test_file_format_reads_inline_and_relative_exams(tmp_path):
    _write(tmp_path, "later.json", level_exam("T8"))
    p = _write(tmp_path, "course.json", {"format": FORMAT, "time_unit": "days", "exams": [
        {"time": 0, "findings": level_exam("T10")}, {"time": 1.5, "file": "later.json"}]})
    c = read(p)
    assert c.times == (0, 1.5) and c.time_unit == "days"
    assert parse_course(c.to_document()) == c  # written inline, read back the same
    assert parse_course(p) == c  # a Path is a file
    assert repr(c) == "Course(2 exams, t=0-1.5d since onset)"


@pytest.mark.parametrize(("entry", "needle"), [
    ({"time": 1, "file": "../outside.json"}, "leads outside the course file's folder"),
    ({"time": 1, "file": "/etc/passwd"}, "is absolute"),
    ({"time": 1, "file": "missing.json"}, "no such findings file"),
    ({"time": 1, "file": "sub"}, "is a folder"),
    ({"time": 1}, "exactly one of them"),
    ({"time": 1, "findings": level_exam("T8"), "file": "x.json"}, "exactly one of them"),
    ({"file": "x.json"}, "exams[1].time: missing"),
    ({"time": 1, "findings": {"format": "cordmap-findings/1", "motor": {"left": {"L3": 7}}}},
     "exams[1].findings.motor.left['L3']: unknown MRC grade 7"),
    ({"time": 1, "when": 3}, "exams[1][\'when\']: unknown key"),
])
def test_bad_exam_entries(tmp_path, entry, needle):
    inner = tmp_path / "course"
    inner.mkdir()
    (inner / "sub").mkdir()
    _write(tmp_path, "outside.json", level_exam("T8"))
    p = _write(inner, "course.json", {"format": FORMAT, "exams": [{"time": 0, "findings": level_exam("T10")}, entry]})
    with pytest.raises(CordmapError) as e:
        read(p)
    assert needle in str(e.value) and "\n" not in str(e.value)


def test_link_out_of_the_folder_is_refused(tmp_path):
    inner = tmp_path / "course"
    inner.mkdir()
    _write(tmp_path, "outside.json", level_exam("T8"))
    (inner / "link.json").symlink_to(tmp_path / "outside.json")
    p = _write(inner, "c.json", {"format": FORMAT, "exams": [{"time": 0, "file": "link.json"}]})
    with pytest.raises(CordmapError, match="leads outside"):
        read(p)


def test_mapping_with_paths_needs_a_base(tmp_path):
    _write(tmp_path, "e.json", level_exam("T8"))
    d = {"format": FORMAT, "exams": [{"time": 0, "file": "e.json"}]}
    with pytest.raises(CordmapError, match="no folder to read it from"):
        parse_course(d)
    assert len(parse_course(d, base=tmp_path)) == 1


def test_exam_limit():
    with pytest.raises(CordmapError, match=f"limit of {MAX_EXAMS}"):
        parse_course({"format": FORMAT, "exams": [{"time": i, "findings": {"format": "cordmap-findings/1"}}
                                                 for i in range(MAX_EXAMS + 1)]})


# ---------------------------------------------------------------- the demo, the command line, the cohort

def test_demo_course_is_package_data_and_raises_its_alarms():
    assert demo_path().is_file()
    r = follow(demo())
    assert len(r.course) == 5
    assert {"level_ascent", "sacral_loss", "motor_fall"} <= {a.rule for a in r.alarms}
    assert all("invented" in e.findings.label for e in r.course.exams)


def _cli(*args):
    return subprocess.run([sys.executable, "-m", "cordmap", "course", *args], capture_output=True, text=True)


def test_cli_text_json_and_errors(tmp_path):
    out = _cli("--demo")
    assert out.returncode == 0
    assert out.stdout.count(C.BANNER) == 1 and "[level_ascent]" in out.stdout and "Alarms" in out.stdout
    js = json.loads(_cli(str(demo_path()), "--json").stdout)
    assert js["caution"] == C.BANNER and js["format"] == "cordmap-course-report/1"
    assert {a["rule"] for a in js["alarms"]} >= {"level_ascent", "sacral_loss"}
    bad = _write(tmp_path, "bad.json", {"format": FORMAT, "exams": [{"time": 5, "findings": level_exam("T8")},
                                                                    {"time": 2, "findings": level_exam("T8")}]})
    for args in ((str(bad),), (), (str(tmp_path / "nope.json"),), (str(tmp_path),)):
        out = _cli(*args)
        assert out.returncode == 2 and out.stdout == ""
        assert len(out.stderr.strip().splitlines()) == 1 and out.stderr.startswith("cordmap: error: ")


def test_cohort_conversion_rates_and_curves():
    up = Course([(0, level_exam("T10", "22222")), (30, level_exam("T10", "44444"))], time_unit="days")
    down = Course([(0, level_exam("T10", "44444")), (48, level_exam("T10", "22222"))], time_unit="hours")
    same = Course([(0, level_exam("T10", "44444")), (10, level_exam("T10", "44444"))], time_unit="days")
    co = cordmap.course_cohort([up, down, same, {"format": "nope"}], ids=["u", "d", "s", "x"])
    assert [e[0] for e in co.errors] == ["x"]  # the bad one is listed, the rest summarised
    assert co.conversion.loc["C", "D"] == 1 and co.conversion.loc["D", "C"] == 1 and co.conversion.loc["D", "D"] == 1
    rates = co.conversion_rates.set_index("first_ais")
    assert rates.loc["D", "n"] == 2 and rates.loc["D", "rate_worsened"] == 0.5 and rates.loc["C", "rate_improved"] == 1
    lems = co.curves[co.curves.measure == "lems"].set_index("t")
    assert lems.loc[2.0, "mean"] == 20  # 48 hours is day 2: the clocks are put together
    assert lems.loc[0.0, "n"] == 3 and lems.loc[0.0, "median"] == 40
    binned = cordmap.course_cohort([up, down, same], bins=[0, 7, 60]).curves
    lems = binned[binned.measure == "lems"]
    assert list(lems["n"]) == [3, 2]  # the first week: all three (the last exam of each in it); then up and same
    assert list(lems["mean"]) == pytest.approx([(20 + 20 + 40) / 3, 40])  # LEMS 20 at "22222", 40 at "44444"
    with pytest.raises(CordmapError, match="no course could be read"):
        cordmap.course_cohort([{"format": "nope"}])


def test_course_picture_carries_caution_and_alarms():
    from cordmap.course_plot import course_png, draw_course

    fig = draw_course(demo())
    texts = [t.get_text() for t in fig.texts]
    assert C.DECISION_SUPPORT in texts
    assert any(t.startswith("Alarms (urgent): 1 at 6 h: level up") for t in texts)
    png = course_png(Course([(0, level_exam("T10")), (6, level_exam("T10"))]), size=(640, 480))
    assert png[:8] == b"\x89PNG\r\n\x1a\n"


def test_cli_full_ranking_gives_fit_verdicts():
    js = json.loads(_cli("--demo", "--json", "--full").stdout)
    assert all(e["lead"]["fit"] in ("good", "poor", "normal") for e in js["exams"])
    fast = json.loads(_cli("--demo", "--json").stdout)
    # the same leaders either way (the fast path lists the leader as rank() does)
    assert [e["lead"]["describe"] for e in js["exams"]] == [e["lead"]["describe"] for e in fast["exams"]]
