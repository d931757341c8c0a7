"""The forward model: anatomy tables, syndromes that must emerge from the geometry, and properties."""
from __future__ import annotations

import numpy as np
import pytest

from cordmap import Lesion, simulate
from cordmap.anatomy import anatomy
from cordmap.errors import CordmapError
from cordmap.model import S, section, sections

A = anatomy()
D = A.dermatomes


def pp(f, side):
    return [f.items[("sensory", "pinprick", side, d)] for d in D]


def mod(f, m, side, d):
    return f.items[("sensory", m, side, d)]


def motor(f, side, myo):
    return f.items[("motor", side, myo)]


def refl(f, side, name):
    return f.items[("reflex", side, name)]


def first_lost(levels):
    """Index (into D) of the first dermatome with any loss, or None."""
    return next((i for i, g in enumerate(levels) if g < 2), None)


# ------------------------------------------------------------------ tables

def test_key_sensory_points():
    # ISNCSCI key sensory points, Kirshblum et al., J Spinal Cord Med 2011 (and 2019 revision, Rupp et al. 2021)
    kp = A.dermatome_table.set_index("dermatome")["key_point"]
    assert len(D) == 28 and D[0] == "C2" and D[-1] == "S4-5"
    assert "acromioclavicular" in kp["C4"]
    assert "thumb" in kp["C6"] and "middle finger" in kp["C7"] and "little finger" in kp["C8"]
    assert "nipple" in kp["T4"] and "umbilicus" in kp["T10"] and "inguinal" in kp["T12"]
    assert "medial malleolus" in kp["L4"] and "third metatarsophalangeal" in kp["L5"]
    assert "heel" in kp["S1"] and "popliteal" in kp["S2"] and "perianal" in kp["S4-5"]


def test_key_muscles():
    # ISNCSCI ten key muscles, Kirshblum et al. 2011
    m = A.muscle_table.set_index("myotome")
    keys = m[m["key"] == "yes"]["muscle"].to_dict()
    assert keys == {"C5": "elbow flexors", "C6": "wrist extensors", "C7": "elbow extensors", "C8": "finger flexors",
                    "T1": "finger abductors", "L2": "hip flexors", "L3": "knee extensors",
                    "L4": "ankle dorsiflexors", "L5": "long toe extensors", "S1": "ankle plantar flexors"}
    # diaphragm C3-C5: common clinical practice, no source
    assert set(A.muscle_weights["diaphragm"]) == {A.index("C3"), A.index("C4"), A.index("C5")}


@pytest.mark.parametrize("reflex, lo, hi", [
    # handbook reflex segments; sources differ, so the model's arc must lie inside the published range
    # (shared check values section 2: biceps C5-C6; triceps C6-C8; knee L2-L4; ankle S1-S2; from memory)
    ("biceps", "C5", "C6"), ("brachioradialis", "C5", "C7"), ("triceps", "C6", "C8"), ("knee", "L2", "L4"),
    ("ankle", "S1", "S2"), ("abdominal_upper", "T7", "T10"), ("abdominal_lower", "T10", "T12"),
    ("cremasteric", "L1", "L2"), ("plantar", "L5", "S2"), ("bulbocavernosus", "S1", "S4"),
])
def test_reflex_segments(reflex, lo, hi):
    segs = A.reflex_segments[reflex]
    assert A.index(lo) <= min(segs) and max(segs) <= A.index(hi)


def test_segment_to_vertebra():
    # rules of thumb: cervical segments about one body above, upper thoracic two, lower thoracic three; lumbar
    # segments behind T10-T12; conus at about L1-L2 (StatPearls Spinal Cord Morphology; Saifuddin, Spine 1998)
    def vnum(v):
        return {"C": 0, "T": 7, "L": 19, "S": 24}[v[0]] + int(v[1:])

    def snum(s):
        return {"C": 0, "T": 7, "L": 19, "S": 24}[s[0]] + int(s[1:]) if s != "Co1" else 30

    for seg in ("C3", "C5", "C7"):
        assert snum(seg) - vnum(A.vertebra(seg)) == 1
    for seg in ("T3", "T4", "T5", "T6"):
        assert snum(seg) - vnum(A.vertebra(seg)) == 2
    for seg in ("T10", "T11", "T12"):
        assert snum(seg) - vnum(A.vertebra(seg)) == 3
    assert {A.vertebra(s) for s in ("L1", "L2", "L3", "L4", "L5")} <= {"T10", "T11", "T12"}
    assert A.vertebra("S4") == "L1" and A.vertebra("Co1") in ("L1", "L2")


def test_tables_have_sources():
    for df in (A.segment_table, A.dermatome_table, A.muscle_table, A.reflex_table, A.column_table,
               A.lamination_table):
        assert (df["source"].str.len() > 5).all()


def test_cord_diameters():
    # Frostell et al., Front Neurol 2016: C5 13.3 x 7.4 mm, T8 8.3 x 6.3 mm (segment level)
    t = A.segment_table.set_index("segment").astype({"transverse_mm": float, "ap_mm": float})
    assert t.loc["C5", "transverse_mm"] == pytest.approx(13.3, abs=0.5)
    assert t.loc["T8", "transverse_mm"] == pytest.approx(8.3, abs=0.5)
    assert t.loc["C5", "transverse_mm"] > t.loc["T8", "transverse_mm"] < t.loc["L3", "transverse_mm"]


# ------------------------------------------------------------------ the section

def test_section_structures_and_lamination():
    c5, t10 = section("C5"), section("T10")
    assert (c5.structure == S["cuneatus"]).any() and not (t10.structure == S["cuneatus"]).any()
    # dorsal columns: lowest segments medial (Hendelman atlas; shared check values section 5)
    for sec in (c5, t10):
        g = (sec.structure == S["gracilis"]) & (sec.x > 0)
        sacral = g & (sec.body == A.index("S2"))
        lumbar = g & (sec.body == A.index("L1"))
        assert np.abs(sec.x[sacral]).mean() < np.abs(sec.x[lumbar]).mean()
    # lateral spinothalamic: sacral fibres outermost (Guttmann 1976, p.263)
    lst = (c5.structure == S["lateral_spinothalamic"]) & (c5.x > 0)
    r = np.hypot(c5.x, c5.y)
    assert r[lst & (c5.body == A.index("S2"))].mean() > r[lst & (c5.body == A.index("C8"))].mean()
    # smallest laminated tract has tens of pixels at the default resolution
    for sec in sections():
        for st in ("gracilis", "lateral_corticospinal", "lateral_spinothalamic"):
            n = ((sec.structure == S[st]) & (sec.x > 0)).sum()
            if sec.index < 29:
                assert n >= 10, (sec.segment, st, n)
    # white matter shrinks caudally: long tracts carry only fibres from below / for below
    area = [((sec.structure == S["lateral_spinothalamic"]).sum()) for sec in sections()]
    assert area[0] > area[15] > area[26]


# ------------------------------------------------------------------ syndromes
# The textbook pictures below are standard neurology teaching (from memory) unless a source is named.

def test_hemisection_brown_sequard():
    f = simulate(Lesion("hemisection", "left", "T6"))
    # ipsilateral weakness with UMN signs and dorsal column loss below
    assert all(motor(f, "left", m) <= 1 for m in ("L2", "L3", "L4", "L5", "S1"))
    assert all(motor(f, "right", m) == 5 for m in ("L2", "L3", "L4", "L5", "S1"))
    assert refl(f, "left", "knee") == "brisk" and refl(f, "left", "plantar") == "extensor"
    assert refl(f, "right", "plantar") == "flexor"
    assert all(mod(f, "vibration", "left", d) == 0 for d in D[D.index("T7"):])
    assert all(mod(f, "vibration", "right", d) == 2 for d in D)
    # contralateral pinprick loss beginning one to two segments below (shared check values section 5)
    onset = first_lost(pp(f, "right"))
    assert D.index("T7") <= onset <= D.index("T8")
    assert all(g == 0 for g in pp(f, "right")[D.index("T8"):])
    # ipsilateral band of all-modality loss at the lesion
    assert mod(f, "pinprick", "left", "T6") == 0 and mod(f, "vibration", "left", "T6") == 0
    assert all(g == 2 for g in pp(f, "left")[D.index("T10"):])


def test_anterior_cord():
    f = simulate(Lesion("anterior", "both", "T8"))
    for side in ("left", "right"):
        assert all(motor(f, side, m) <= 2 for m in ("L2", "L3", "L4", "L5", "S1"))
        assert all(g == 0 for g in pp(f, side)[D.index("T10"):])
        assert all(mod(f, "vibration", side, d) == 2 for d in D)
        assert all(mod(f, "joint_position", side, d) == 2 for d in D)


def test_small_central_is_suspended():
    f = simulate(Lesion("central", "both", "C5", "C7", params={"size": 0.15}))
    for side in ("left", "right"):
        levels = pp(f, side)
        lost = [D[i] for i, g in enumerate(levels) if g < 2]
        assert lost and set(lost) <= {"C4", "C5", "C6", "C7", "C8", "T1"}  # a suspended cape
        assert all(mod(f, "light_touch", side, d) == 2 for d in D)
        assert all(mod(f, "vibration", side, d) == 2 for d in D)
        assert all(motor(f, side, m) == 5 for m in A.key_myotomes)


def test_large_central_arms_weaker_and_sacral_sparing():
    f = simulate(Lesion("central", "both", "C5", "C7", params={"size": 0.6}))
    for side in ("left", "right"):
        arms = np.mean([motor(f, side, m) for m in ("C5", "C6", "C7", "C8", "T1")])
        legs = np.mean([motor(f, side, m) for m in ("L2", "L3", "L4", "L5", "S1")])
        assert arms < legs
        # sacral pinprick spared (Larner, Dictionary of Neurological Signs: sacral sparing of intramedullary lesions)
        assert mod(f, "pinprick", side, "S4-5") == 2


def test_posterior_cord():
    f = simulate(Lesion("posterior", "both", "T4"))
    for side in ("left", "right"):
        assert all(mod(f, "vibration", side, d) == 0 for d in D[D.index("T6"):])
        assert all(mod(f, "joint_position", side, d) == 0 for d in D[D.index("T6"):])
        assert all(motor(f, side, m) == 5 for m in A.key_myotomes)
        assert all(g == 2 for g in pp(f, side)[D.index("T7"):])


def test_complete_acute_and_chronic():
    chronic = simulate(Lesion("complete", "both", "T6"))
    acute = simulate(Lesion("complete", "both", "T6", phase="acute"))
    for f in (chronic, acute):
        for side in ("left", "right"):
            for m in ("pinprick", "light_touch", "vibration"):
                assert all(mod(f, m, side, d) <= 1 for d in D[D.index("T7"):])
                assert all(mod(f, m, side, d) == 0 for d in D[D.index("T8"):])
            assert all(motor(f, side, m) == 0 for m in ("L2", "L3", "L4", "L5", "S1"))
            assert all(motor(f, side, m) == 5 for m in ("C5", "C6", "C7", "C8", "T1"))
    for side in ("left", "right"):
        assert refl(acute, side, "knee") == "absent" and refl(acute, side, "plantar") == "mute"
        assert refl(chronic, side, "knee") == "brisk" and refl(chronic, side, "plantar") == "extensor"
    assert acute.items[("sign", "bulbocavernosus", "")] == "absent"  # spinal shock
    assert chronic.items[("sign", "bulbocavernosus", "")] == "present"
    assert chronic.items[("sign", "bladder", "")] == "urgency"
    assert chronic.items[("sign", "voluntary_anal_contraction", "")] is False


def test_lateral_compression_false_level_climbs():
    # Extramedullary compression: the level rises from the feet toward the lesion (Guttmann; shared check values
    # section 5); false thoracic levels below cervical compression (Arch Neurol 1996;53:1155)
    onsets = []
    for depth in (0.1, 0.17, 0.25, 0.33):
        f = simulate(Lesion("lateral_compression", "right", "C6", params={"depth": depth}))
        onsets.append(first_lost(pp(f, "left")))
    assert onsets[0] is not None and onsets[0] >= D.index("C6") + 6  # several segments below the lesion
    assert all(b <= a for a, b in zip(onsets, onsets[1:]))
    assert onsets[-1] <= D.index("C8")


def test_conus():
    f = simulate(Lesion("conus", "both", "S2"))
    for side in ("left", "right"):
        for d in ("S3", "S4-5"):
            assert mod(f, "pinprick", side, d) == 0 and mod(f, "light_touch", side, d) == 0
        assert refl(f, side, "plantar") != "extensor"
        assert motor(f, side, "L3") == 5
    assert f.items[("sign", "bladder", "")] == "retention"
    assert f.items[("sign", "bulbocavernosus", "")] == "absent"
    # cauda equina and conus: areflexic bladder, absent bulbocavernosus in sacral lesions (Medscape 2018, MD18)


def test_cauda_equina():
    f = simulate(Lesion("cauda_equina", "left", "L3", params={"contra": 0.5}))
    left = [motor(f, "left", m) for m in ("L3", "L4", "L5", "S1")]
    right = [motor(f, "right", m) for m in ("L3", "L4", "L5", "S1")]
    assert max(left) < min(right) or np.mean(left) < np.mean(right)  # asymmetric
    assert min(left) <= 1
    for side in ("left", "right"):
        assert refl(f, side, "knee") in ("absent", "reduced") and refl(f, side, "ankle") in ("absent", "reduced")
        assert refl(f, side, "plantar") != "extensor"
    assert mod(f, "pinprick", "left", "L4") == 0
    assert all(g == 2 for g in pp(f, "left")[: D.index("L2")])


def test_central_disc_takes_the_sacral_roots_of_both_sides():
    # A central disc catches the sacral roots of both sides (they lie medially in the thecal sac) while one leg bears
    # the brunt: saddle loss on both sides, retention, one-sided leg weakness (from memory, standard neurology
    # teaching). With medial 0 the other side keeps its saddle.
    central = simulate(Lesion("cauda_equina", "left", "L5", params={"contra": 0.0, "medial": 0.33}))
    one_sided = simulate(Lesion("cauda_equina", "left", "L5", params={"contra": 0.0}))
    assert mod(central, "pinprick", "right", "S4-5") == 0 and mod(central, "pinprick", "left", "S4-5") == 0
    assert mod(one_sided, "pinprick", "right", "S4-5") == 2
    assert all(mod(central, "pinprick", "right", d) == 2 for d in D[: D.index("L5") + 1])  # right leg spared
    assert motor(central, "left", "L5") <= 1 and motor(central, "right", "L4") == 5
    assert central.items[("sign", "bladder", "")] == "retention"
    assert one_sided.items[("sign", "bladder", "")] == "normal"


@pytest.mark.parametrize("contra", [0.0, 0.5])
def test_cauda_medial_is_monotone(contra):
    """A mass reaching further across the midline draws a superset mask on every section and never predicts less;
    the lowest roots go first (medial 0 keeps the old pattern)."""
    from cordmap.lesions import draw_mask

    grid = (0.0, 0.1, 0.33, 0.5, 0.67, 1.0)
    for sec in sections()[A.index("L1"):]:
        masks = [draw_mask("cauda_equina", "left", {"contra": contra, "medial": m}, sec) for m in grid]
        assert all((a <= b).all() for a, b in zip(masks, masks[1:])), sec.segment
    assert (draw_mask("cauda_equina", "left", {"contra": contra, "medial": 0.0}, section("S4"))
            == draw_mask("cauda_equina", "left", {"contra": contra}, section("S4"))).all()
    losses = [_loss_vector(Lesion("cauda_equina", "left", "L2", params={"contra": contra, "medial": m}))
              for m in grid]
    for lo, hi in zip(losses, losses[1:]):
        assert (hi >= lo - 1e-5).all()
    assert (losses[-1] > losses[0] + 1e-3).any()
    from cordmap.lesions import sac_share as _sac_share

    shares = [_sac_share(A.index(s), 0.33) for s in ("L3", "L5", "S1", "S2", "S3", "S5", "Co1")]
    assert shares == sorted(shares) and shares[0] == 0 and shares[-1] == 1


def test_single_root():
    f = simulate(Lesion("root", "left", "C6"))
    lost = [(s, d) for s in ("left", "right") for d in D if mod(f, "pinprick", s, d) < 2]
    assert lost == [("left", "C6")]
    weak = [(s, m) for s in ("left", "right") for m in A.key_myotomes if motor(f, s, m) < 5]
    assert ("left", "C6") in weak and all(s == "left" for s, _ in weak) and len(weak) <= 2
    assert refl(f, "left", "biceps") in ("reduced", "absent") and refl(f, "right", "biceps") == "normal"
    assert refl(f, "left", "knee") == "normal"


def test_horner_only_from_the_sympathetic_pathway():
    # first-order fibres descend to the intermediolateral column C8-T2 (Medscape 2019, HOR)
    assert simulate(Lesion("hemisection", "left", "C4")).items[("sign", "horner", "left")] is True
    assert simulate(Lesion("hemisection", "left", "C4")).items[("sign", "horner", "right")] is False
    assert simulate(Lesion("hemisection", "left", "T6")).items[("sign", "horner", "left")] is False
    assert simulate(Lesion("posterior", "both", "C4")).items[("sign", "horner", "left")] is False


def test_diaphragm_from_c3_c5():
    # phrenic nerve C3-C5: common clinical practice, no source
    assert simulate(Lesion("complete", "both", "C3", "C4")).items[("sign", "diaphragm", "")] == "weak"
    assert simulate(Lesion("complete", "both", "C7")).items[("sign", "diaphragm", "")] == "normal"
    assert simulate(Lesion("anterior_horn", "both", "C3", "C5")).items[("sign", "diaphragm", "")] == "weak"


def test_pure_lower_and_mixed_motor_neuron():
    lmn = simulate(Lesion("anterior_horn", "both", "C5", "T1"))
    mixed = simulate(Lesion("motor_neuron", "both", "C5", "S1"))
    for side in ("left", "right"):
        assert motor(lmn, side, "C6") <= 1 and refl(lmn, side, "biceps") == "absent"
        assert refl(lmn, side, "plantar") == "flexor"
        assert all(g == 2 for g in pp(lmn, side)) and all(g == 2 for g in pp(mixed, side))
        assert refl(mixed, side, "plantar") in ("extensor", "mute")


# ------------------------------------------------------------------ properties

def _loss_vector(lesion):
    from cordmap.simulate import predict

    r = predict(lesion)
    return np.concatenate([r.sensory.ravel(), (5 - r.motor).ravel()])


@pytest.mark.parametrize("small, large", [
    (Lesion("central", "both", "C5", params={"size": 0.2}), Lesion("central", "both", "C5", params={"size": 0.5})),
    (Lesion("lateral_compression", "left", "T4", params={"depth": 0.1}),
     Lesion("lateral_compression", "left", "T4", params={"depth": 0.4})),
    (Lesion("hemisection", "right", "T6"), Lesion("complete", "both", "T6")),
    (Lesion("complete", "both", "T6"), Lesion("complete", "both", "T5", "T8")),
    (Lesion("posterolateral", "both", "T6", params={"severity": 0.35}), Lesion("posterolateral", "both", "T6")),
])
def test_larger_lesion_never_predicts_less(small, large):
    assert (_loss_vector(large) >= _loss_vector(small) - 1e-5).all()


THINNED = [("motor_neuron", "C5", "T1"), ("motor_neuron", "T10", "T10"), ("posterolateral", "C6", "C7"),
           ("posterolateral", "T4", "T4")]


@pytest.mark.parametrize("pattern, top, bottom", THINNED)
def test_severity_is_monotone(pattern, top, bottom):
    """A larger severity draws a superset mask on every section and never predicts less loss."""
    from cordmap.lesions import PATTERNS, draw_mask

    grid = sorted({*next(p.grid for p in PATTERNS[pattern].params if p.name == "severity"), 0.05, 0.5, 0.8})
    for sec in sections()[::5]:
        masks = [draw_mask(pattern, "both", {"severity": v}, sec) for v in grid]
        assert all((a <= b).all() for a, b in zip(masks, masks[1:])), sec.segment
        assert masks[0].sum() < masks[-1].sum()
    losses = [_loss_vector(Lesion(pattern, "both", top, bottom, params={"severity": v})) for v in grid]
    for lo, hi in zip(losses, losses[1:]):
        assert (hi >= lo - 1e-5).all()
    assert (losses[-1] > losses[0] + 1e-3).any()


@pytest.mark.parametrize("pattern, top, bottom", THINNED)
@pytest.mark.parametrize("severity", [0.35, 0.65, 1.0])
def test_thinned_patterns_are_mirror_symmetric(pattern, top, bottom, severity):
    from cordmap.lesions import draw_mask
    from cordmap.simulate import predict

    for sec in sections()[::6]:
        m = draw_mask(pattern, "both", {"severity": severity}, sec)
        assert (m == m[:, ::-1]).all(), sec.segment
    r = predict(Lesion(pattern, "both", top, bottom, params={"severity": severity}))
    np.testing.assert_allclose(r.sensory[:, :, 0], r.sensory[:, :, 1], atol=1e-5)
    np.testing.assert_allclose(r.motor[:, 0], r.motor[:, 1], atol=1e-5)
    assert all((v[0] == v[1]) for v in [(r.reflexes[("left", n)], r.reflexes[("right", n)])
                                        for n in ("biceps", "triceps", "knee", "ankle", "plantar", "hoffmann")])


def test_thinning_spreads_over_every_body_segment():
    """Severity s removes about the share s of every region (structure, side, body segment) the full mask hits."""
    from cordmap.lesions import draw_mask

    for sec in sections()[::4]:
        full = sec.fraction_lost(draw_mask("motor_neuron", "both", {"severity": 1.0}, sec))
        part = sec.fraction_lost(draw_mask("motor_neuron", "both", {"severity": 0.35}, sec))
        hit = (full > 0) & (sec.region_pixels >= 20)
        np.testing.assert_allclose(part[hit] / full[hit], 0.35, atol=0.05)


def test_partial_motor_neuron_is_partial():
    # mixed motor neuron disease: weak, not paralysed, hands with brisk legs; from memory (standard neurology teaching)
    f = simulate(Lesion("motor_neuron", "both", "C8", params={"severity": 0.35}))
    for side in ("left", "right"):
        assert 1 <= motor(f, side, "C8") <= 4 and 1 <= motor(f, side, "L3") <= 4
        assert refl(f, side, "knee") == "brisk" and refl(f, side, "plantar") == "extensor"
        assert all(g == 2 for g in pp(f, side))


def test_posterolateral_is_white_matter_and_spares_pinprick():
    # Combined degeneration: dorsal columns and lateral corticospinal tracts, pain and temperature spared (from
    # memory, standard neurology teaching on vitamin B12 deficiency).
    from cordmap.lesions import draw_mask

    white = {S[n] for n in ("gracilis", "cuneatus", "lateral_corticospinal", "dorsal_spinocerebellar", "other_white")}
    for sec in sections():
        m = draw_mask("posterolateral", "both", {"severity": 1.0}, sec)
        assert set(np.unique(sec.structure[m])) <= white, sec.segment
        for name in ("gracilis", "cuneatus", "lateral_corticospinal"):
            tract = sec.structure == S[name]
            assert (m[tract]).all(), (sec.segment, name)
    for severity in (0.35, 0.65, 1.0):
        f = simulate(Lesion("posterolateral", "both", "C5", "C7", params={"severity": severity}))
        for side in ("left", "right"):
            assert all(g == 2 for g in pp(f, side)), severity
            # the longest fibres first: the toes' vibration goes at every severity (the trunk's only later)
            assert mod(f, "vibration", side, "L5") < 2 and refl(f, side, "plantar") == "extensor"


def test_shallow_lateral_compression_gives_a_partial_root_sign():
    # A small extramedullary mass irritates and partly compresses its root before it takes the whole root (from
    # memory, standard neurology teaching): numb (not dead) dermatome, reduced jerk; a deep one a complete root sign.
    shallow = simulate(Lesion("lateral_compression", "right", "C7", params={"depth": 0.17}))
    deep = simulate(Lesion("lateral_compression", "right", "C7", params={"depth": 0.42}))
    assert mod(shallow, "pinprick", "right", "C7") == 1 and refl(shallow, "right", "triceps") == "reduced"
    assert mod(deep, "pinprick", "right", "C7") == 0 and refl(deep, "right", "triceps") == "absent"
    assert motor(deep, "right", "C7") < motor(shallow, "right", "C7")


@pytest.mark.parametrize("pattern, top, params", [
    ("hemisection", "C6", {}), ("lateral_compression", "T3", {"depth": 0.33}), ("root", "L4", {}),
    ("cauda_equina", "L2", {"contra": 0.5}), ("cauda_equina", "L4", {"contra": 0.0, "medial": 0.33}),
    ("cauda_equina", "S1", {"contra": 0.5, "medial": 0.67}), ("anterior_horn", "C7", {}),
])
def test_mirror_symmetry(pattern, top, params):
    from cordmap.simulate import predict

    pat_sides = {"anterior_horn": ("left", "right")}
    sides = pat_sides.get(pattern, ("left", "right"))
    left, right = (predict(Lesion(pattern, s, top, params=params)) for s in sides)
    np.testing.assert_allclose(left.sensory, right.sensory[:, :, ::-1], atol=1e-5)
    np.testing.assert_allclose(left.motor, right.motor[:, ::-1], atol=1e-5)


def test_caudal_lesion_leaves_rostral_sensation():
    from cordmap.simulate import predict

    base = predict(Lesion("complete", "both", "T10"))
    for i, d in enumerate(D):
        if A.dermatome_segments[d][0] < A.index("T9"):
            assert np.all(base.sensory[0, :, :, i] == 0), d


def test_custom_mask_matches_named_pattern():
    from cordmap.lesions import draw_mask

    sec = section("T6")
    m = draw_mask("hemisection", "left", {}, sec)
    a = simulate(Lesion.custom(m, "T6"))
    b = simulate(Lesion("hemisection", "left", "T6"))
    assert a.items == b.items


@pytest.mark.parametrize("kwargs, needle", [
    ({"pattern": "hemi"}, "did you mean hemisection"),
    ({"pattern": "hemisection", "side": "up"}, "allowed left, right"),
    ({"pattern": "complete", "top": "T13"}, "did you mean T12"),
    ({"pattern": "complete", "top": "T8", "bottom": "T6"}, "rostral"),
    ({"pattern": "central", "params": {"size": 3}}, "outside"),
    ({"pattern": "central", "params": {"depth": 0.3}}, "parameter"),
])
def test_bad_lesions_are_clear(kwargs, needle):
    with pytest.raises(CordmapError, match=needle) as e:
        Lesion(**kwargs)
    assert "\n" not in str(e.value)
    assert isinstance(e.value, ValueError)
