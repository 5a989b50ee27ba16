"""Cable screens and passive loops against IEC 60287-1-1 and solves written out here.

Sources:
- IEC 60287-1-1 §2.3.1 (from memory): for three single-core cables in trefoil with the
  screens bonded at both ends, the circulating screen current is I·X/sqrt(Rs² + X²) and the
  loss factor λ1 = (Rs/R)/(1 + (Rs/X)²), with X = 2ω·10⁻⁷·ln(2s/d) Ω/m (s the axial
  spacing, d the screen's mean diameter); bonded at one point, the standing voltage is I·X
  per metre.
- Resistivity at 20 °C and temperature coefficient, IEC 60287-1-1 Table 1 (from memory):
  copper 1.7241e-8 Ω·m and 3.93e-3 1/K.
- Long parallel filaments, Z_ij = jω(μ0/2π) ln(1/D_ij) (Grover, *Inductance Calculations*,
  1946; from memory), for the independent solves written in this file.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from tests.references import MU0
from trayadvisor.analysis import field_summary
from trayadvisor.cli.main import main
from trayadvisor.coupling import solve_sharing
from trayadvisor.coupling.resistance import ac_resistance_per_m, resistance_per_m
from trayadvisor.layoutfile.reader import parse_layout

RHO_CU, ALPHA_CU = 1.7241e-8, 3.93e-3
W = 2 * math.pi * 50.0
K = MU0 / (2 * math.pi)

HEAD = '''format = "trayadvisor/1"
frequency_hz = 50
[[tray]]
name = "T"
x_mm = 0
y_mm = 0
width_mm = 600
depth_mm = 200
'''


def cable(name: str, circuit: str, phase: str, x: float, y: float, *, d: float = 40.0,
          area: float = 240.0, screen: tuple[float, float] | None = (25.0, 30.0)) -> str:
    text = (f'[[conductor]]\nname = "{name}"\ncircuit = "{circuit}"\nphase = "{phase}"\n'
            f"x_mm = {x!r}\ny_mm = {y!r}\ndiameter_mm = {d}\narea_mm2 = {area}\n")
    if screen is not None:
        text += f"screen_area_mm2 = {screen[0]}\nscreen_diameter_mm = {screen[1]}\n"
    return text


def trefoil(bonding: str, s: float = 40.0, current: float = 400.0) -> str:
    h = s * math.sqrt(3) / 2
    return HEAD + (f'[[circuit]]\nname = "M"\nsystem = "ac3"\ncurrent_a = {current}\n'
                   f'screen_bonding = "{bonding}"\n') + \
        cable("a", "M", "L1", 100.0, 25.0) + cable("b", "M", "L2", 100.0 + s, 25.0) + \
        cable("c", "M", "L3", 100.0 + s / 2, 25.0 + h)


def screen_r(area_mm2: float, temp: float = 90.0) -> float:
    return RHO_CU * (1 + ALPHA_CU * (temp - 20.0)) / (area_mm2 * 1e-6)


def test_trefoil_both_ends_matches_iec_60287():
    res = solve_sharing(parse_layout(trefoil("both-ends")))
    x = 2 * W * 1e-7 * math.log(2 * 40.0 / 30.0)
    rs = screen_r(25.0)
    # core R: the product's IEC 60228 value at 90 °C with the IEC 60287-1-1 skin effect
    # (checked against IEC 60228 in tests/test_coupling_sharing.py)
    r = float(ac_resistance_per_m(resistance_per_m(240.0, "copper", 90.0), 50.0))
    want_is = 400.0 * x / math.sqrt(rs * rs + x * x)
    want_l1 = (rs / r) / (1 + (rs / x) ** 2)
    assert len(res.screens) == 3
    for f in res.screens:
        assert f.bonding == "both-ends" and f.standing_v_per_m == 0.0
        assert f.current_a == pytest.approx(want_is, rel=1e-6)
        assert f.loss_factor == pytest.approx(want_l1, rel=1e-6)
        assert f.loss_w_per_m == pytest.approx(rs * want_is ** 2, rel=1e-6)
    # the screens carry no net current (no earth return)
    row = list(res.orders).index(1)
    assert abs(sum(res.currents[row])) < 1e-9 * 400


def test_trefoil_single_point_standing_voltage_is_i_x():
    res = solve_sharing(parse_layout(trefoil("single-point")))
    x = 2 * W * 1e-7 * math.log(2 * 40.0 / 30.0)
    for f in res.screens:
        assert f.bonding == "single-point" and f.current_a == 0.0 and f.loss_w_per_m == 0.0
        assert f.standing_v_per_m == pytest.approx(400.0 * x, rel=1e-6)
    # no screen current: the field is that of the cores alone
    lay = parse_layout(trefoil("single-point"))
    bare = parse_layout(trefoil("single-point").replace(
        'screen_bonding = "single-point"\n', "").replace(
        "screen_area_mm2 = 25.0\nscreen_diameter_mm = 30.0\n", ""))
    assert field_summary(lay).max_resultant_uT == pytest.approx(
        field_summary(bare).max_resultant_uT, rel=1e-12)


def independent_solve(lines: list[dict], omega: float) -> np.ndarray:
    """Currents of long parallel lines: each with a position (m), self GMR (m), R (Ω/m) and
    either a fixed current or a group name; the lines of a group share one voltage drop and
    their currents sum to the group's total. ``pair`` names a line whose mutual distance with
    this one is ``pair_d`` (a screen and its core). Written here, apart from the product."""
    n = len(lines)
    z = np.zeros((n, n), dtype=complex)
    for i, a in enumerate(lines):
        for j, b in enumerate(lines):
            if i == j:
                dist = a["gmr"]
            elif a.get("pair") == j or b.get("pair") == i:
                dist = a.get("pair_d") or b.get("pair_d")
            else:
                dist = math.dist(a["xy"], b["xy"])
            z[i, j] = 1j * omega * K * math.log(1.0 / dist)
        z[i, i] += a["r"]
    free = [i for i, a in enumerate(lines) if "group" in a]
    fixed = [i for i, a in enumerate(lines) if "group" not in a]
    groups = sorted({lines[i]["group"] for i in free})
    nf, ng = len(free), len(groups)
    a_mat = np.zeros((nf + ng, nf + ng), dtype=complex)
    rhs = np.zeros(nf + ng, dtype=complex)
    i_fixed = np.array([lines[i]["current"] for i in fixed], dtype=complex)
    for r, i in enumerate(free):
        a_mat[r, :nf] = z[i, free]
        a_mat[r, nf + groups.index(lines[i]["group"])] = -1.0
        rhs[r] = -z[i, fixed] @ i_fixed
    for g, name in enumerate(groups):
        for r, i in enumerate(free):
            if lines[i]["group"] == name:
                a_mat[nf + g, r] = 1.0
        rhs[nf + g] = lines[free[0]].get("totals", {}).get(name, 0.0)
    sol = np.linalg.solve(a_mat, rhs)
    out = np.zeros(n, dtype=complex)
    out[fixed] = i_fixed
    out[free] = sol[:nf]
    return out


def test_flat_two_sets_with_screens_equal_an_independent_solve():
    """Two parallel sets L1 L2 L3 L1 L2 L3 in a flat row, screens bonded at both ends: the
    screens change the sharing of the parallel cores, solved jointly."""
    xs = [60.0 + 45.0 * k for k in range(6)]
    phases = ["L1", "L2", "L3"] * 2
    text = HEAD + ('[[circuit]]\nname = "F"\nsystem = "ac3"\ncurrent_a = 800\n'
                   'screen_bonding = "both-ends"\n')
    text += "".join(cable(f"c{k}", "F", p, x, 25.0)
                    for k, (p, x) in enumerate(zip(phases, xs, strict=True)))
    res = solve_sharing(parse_layout(text))
    r_core = float(ac_resistance_per_m(resistance_per_m(240.0, "copper", 90.0), 50.0))
    gmr_core = math.sqrt(240e-6 / math.pi) * math.exp(-0.25)
    angle = {"L1": 0.0, "L2": -120.0, "L3": 120.0}
    totals = {p: 800.0 * np.exp(1j * math.radians(angle[p])) for p in angle}
    lines = [{"xy": (x * 1e-3, 0.025), "gmr": gmr_core, "r": r_core, "group": p}
             for p, x in zip(phases, xs, strict=True)]
    lines += [{"xy": (x * 1e-3, 0.025), "gmr": 0.015, "r": screen_r(25.0), "group": "S",
               "pair": k, "pair_d": 0.015} for k, x in enumerate(xs)]
    lines[0]["totals"] = {**totals, "S": 0.0}
    want = independent_solve(lines, W)
    row = list(res.orders).index(1)
    got_cores = {s.conductor: s.current for s in res.shares}
    for k in range(6):
        assert got_cores[f"c{k}"] == pytest.approx(want[k], rel=1e-6, abs=1e-9)
    by = {f.conductor: f for f in res.screens}
    for k in range(6):
        assert by[f"c{k}"].current_a == pytest.approx(abs(want[6 + k]), rel=1e-6)
        # the field sees each cable's core plus screen
        assert res.currents[row, k] == pytest.approx(want[k] + want[6 + k], rel=1e-6)
    # without screens the same sets share differently (common practice: screens bonded at
    # both ends change the sharing)
    bare = solve_sharing(parse_layout(text.replace('screen_bonding = "both-ends"\n', "")
                                      .replace("screen_area_mm2 = 25.0\n"
                                               "screen_diameter_mm = 30.0\n", "")))
    assert abs(bare.shares[0].current - got_cores["c0"]) > 1e-3 * 400


LOOP = HEAD + '''[[circuit]]
name = "S"
system = "ac1"
current_a = 500
[[circuit]]
name = "P"
system = "loop"
''' + cable("go", "S", "L", 100.0, 30.0, screen=None) + \
    cable("ret", "S", "N", 160.0, 30.0, screen=None) + \
    cable("pa", "P", "a", 100.0, 150.0, d=20.0, area=95.0, screen=None) + \
    cable("pb", "P", "b", 160.0, 150.0, d=20.0, area=95.0, screen=None)


def test_passive_loop_current_is_minus_j_omega_m_i_over_its_impedance():
    res = solve_sharing(parse_layout(LOOP))
    (loop,) = res.passive
    # Grover: M = K ln(r14 r23 / (r13 r24)) between loops (go=1, ret=2) and (a=3, b=4)
    p1, p2, p3, p4 = (0.100, 0.030), (0.160, 0.030), (0.100, 0.150), (0.160, 0.150)
    m = K * math.log(math.dist(p1, p4) * math.dist(p2, p3)
                     / (math.dist(p1, p3) * math.dist(p2, p4)))
    g = math.sqrt(95e-6 / math.pi) * math.exp(-0.25)
    l_loop = K * math.log(0.060 ** 2 / (g * g))
    r_loop = 2 * float(ac_resistance_per_m(resistance_per_m(95.0, "copper", 90.0), 50.0))
    want = -1j * W * m * 500.0 / (r_loop + 1j * W * l_loop)
    assert loop.current_a == pytest.approx(abs(want), rel=1e-6)
    assert loop.angle_deg == pytest.approx(math.degrees(np.angle(want)), abs=1e-5)
    assert loop.loss_w_per_m == pytest.approx(r_loop * abs(want) ** 2, rel=1e-6)
    # the stray field includes the loop's current: the loop at its place lowers it
    with_loop = field_summary(parse_layout(LOOP), distance_mm=300.0)
    open_loop = field_summary(parse_layout(LOOP.replace('system = "loop"',
                                                        'system = "signal"')),
                              distance_mm=300.0)
    assert with_loop.max_resultant_uT < open_loop.max_resultant_uT
    # and equals the field of the hand-solved currents (long-wire formula) at a point
    pt = (0.130, 0.600)
    bx = by = 0j
    for (x, y), i in ((p1, 500.0), (p2, -500.0), (p3, want), (p4, -want)):
        dx, dy = pt[0] - x, pt[1] - y
        r2 = dx * dx + dy * dy
        bx += -K * i * dy / r2
        by += K * i * dx / r2
    b = math.sqrt(abs(bx) ** 2 + abs(by) ** 2) * 1e6
    at = field_summary(parse_layout(LOOP), at=[(130.0, 600.0)]).points[0]
    assert at.resultant_uT == pytest.approx(b, rel=1e-6)


BAD = [
    ("screen larger than the cable", lambda t: t.replace("screen_diameter_mm = 30.0",
                                                         "screen_diameter_mm = 45.0", 1),
     "screen_diameter_mm = 45 is not inside the cable"),
    ("screen inside the conductor", lambda t: t.replace("screen_diameter_mm = 30.0",
                                                        "screen_diameter_mm = 12.0", 1),
     "is inside the conductor"),
    ("screened circuit without bonding",
     lambda t: t.replace('screen_bonding = "both-ends"\n', ""),
     "say how the screens are bonded"),
    ("unknown bonding", lambda t: t.replace('"both-ends"', '"both"'),
     "unknown screen_bonding 'both'"),
]


@pytest.mark.parametrize("name,edit,words", BAD, ids=[b[0] for b in BAD])
def test_bad_screens_one_line_exit_2(capsys, tmp_path, name, edit, words):
    path = tmp_path / "bad.toml"
    path.write_text(edit(trefoil("both-ends")), encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and words in err and err.startswith(f"{path}:")


def test_bad_loops_one_line_exit_2(capsys, tmp_path):
    one = LOOP.replace(cable("pb", "P", "b", 160.0, 150.0, d=20.0, area=95.0, screen=None), "")
    no_area = LOOP.replace("area_mm2 = 95.0\n", "", 1)
    for text, words in ((one, "a passive loop needs two or more conductors"),
                        (no_area, "a passive-loop conductor needs area_mm2")):
        path = tmp_path / "bad.toml"
        path.write_text(text, encoding="utf-8")
        assert main(["field", str(path)]) == 2
        err = capsys.readouterr().err
        assert err.count("\n") == 1 and words in err and err.startswith(f"{path}:")


def test_couple_json_lists_screens_and_passive_loops(capsys, tmp_path):
    path = tmp_path / "ok.toml"
    path.write_text(trefoil("single-point"), encoding="utf-8")
    assert main(["couple", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert {"conductor", "current_a", "angle_deg", "loss_w_per_m", "standing_v_per_m"} <= set(
        data["screens"][0])
    assert any("touch voltage" in n for n in data["notes"])
    path.write_text(LOOP, encoding="utf-8")
    assert main(["couple", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert {"circuit", "current_a", "angle_deg", "loss_w_per_m"} <= set(data["passive"][0])


def test_ranking_with_a_passive_loop_equals_a_solved_brute_force():
    """Two ac1 pairs and a two-conductor passive loop of the same size on one row: every
    arrangement's field with its own induced loop current, by brute force over
    itertools.permutations and `field_summary`; each option reports the loop's loss."""
    import itertools

    from trayadvisor.ranking import apply_option, rank_layout

    text = HEAD + '''[[circuit]]
name = "S"
system = "ac1"
current_a = 300
[[circuit]]
name = "P"
system = "loop"
'''
    xs = [60.0, 100.0, 140.0, 180.0]
    names = [("g", "S", "L"), ("r", "S", "N"), ("pa", "P", "a"), ("pb", "P", "b")]
    text += "".join(cable(n, c, p, x, 20.0, d=30.0, area=95.0, screen=None)
                    for (n, c, p), x in zip(names, xs, strict=True))
    lay = parse_layout(text)
    res = rank_layout(lay, top_k=3, objective="contour")
    assert res.method == "exhaustive" and res.certified
    values = set()
    for perm in itertools.permutations(xs):
        moved = lay.with_positions({n: (x, 20.0) for (n, _, _), x in zip(names, perm, strict=True)})
        values.add(round(field_summary(moved).max_resultant_uT, 9))
    want = sorted(values)
    got = [o.max_resultant_uT for o in res.options]
    # Source: the brute force above (distinct values; mirror twins merged in the ranking)
    assert got[0] == pytest.approx(want[0], rel=1e-9)
    for o in res.options:
        moved = apply_option(lay, o)
        assert o.max_resultant_uT == pytest.approx(field_summary(moved).max_resultant_uT,
                                                   rel=1e-9)
        (loop,) = solve_sharing(moved).passive
        assert o.figures["induced_loss_w_per_m"] == pytest.approx(loop.loss_w_per_m, rel=1e-9)


def test_field_reports_screens_and_loops_and_equal_shares_say_they_are_left_out(
        capsys, tmp_path):
    path = tmp_path / "loop.toml"
    path.write_text(LOOP, encoding="utf-8")
    assert main(["field", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    (loop,) = solve_sharing(parse_layout(LOOP)).passive
    assert data["passive"][0]["current_a"] == loop.current_a and data["screens"] == []
    assert main(["field", str(path)]) == 0
    assert f"passive loop P: {loop.current_a:.3g} A" in capsys.readouterr().out
    assert main(["field", str(path), "--equal-shares", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["passive"] == [] and any("no current is induced" in n for n in data["notes"])


def test_equal_shares_ranking_says_induced_currents_are_left_out():
    from trayadvisor.ranking import rank_layout

    res = rank_layout(parse_layout(LOOP), top_k=1, currents="equal", objective="contour")
    assert any("no current is induced in screens or passive loops" in n for n in res.notes)
    solved = rank_layout(parse_layout(LOOP), top_k=1, objective="contour")
    assert not any("no current is induced" in n for n in solved.notes)
