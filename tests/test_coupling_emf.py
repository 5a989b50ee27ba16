"""EMF induced in victim signal loops, the coupling summary and the ranking constraints."""

from __future__ import annotations

import pickle
from dataclasses import replace

import numpy as np
import pytest
from references import (
    MU0,  # μ0 = 4π × 10⁻⁷ T·m/A; its source is named in references.py
    neumann_mutual,
)

from trayadvisor.coupling import coupling_summary, loop_inductance_matrix
from trayadvisor.coupling.constraints import imbalance_constraint, induced_voltage_constraint
from trayadvisor.coupling.sharing import solve_sharing, solved_sources
from trayadvisor.coupling.victims import induced_emf
from trayadvisor.model import Circuit, Conductor, Layout


def pair_layout(current=100.0, f=50.0, victim=((300.0, 40.0), (330.0, 90.0)), harmonics=(),
                length_m=None) -> Layout:
    """An ac1 go/return pair and one signal pair (mm): an invented arrangement."""
    (xa, ya), (xb, yb) = victim
    cons = (Conductor("P-L", "P", "L", 0.0, 0.0, 20.0), Conductor("P-N", "P", "N", 60.0, 0.0,
                                                                   20.0),
            Conductor("V-a", "V", "a", xa, ya, 6.0), Conductor("V-b", "V", "b", xb, yb, 6.0))
    return Layout(frequency_hz=f, circuits=(Circuit("P", "ac1", current, harmonics=harmonics),
                                            Circuit("V", "signal", length_m=length_m)),
                  conductors=cons)


def closed_form_emf_v_per_m(lay: Layout) -> float:
    """|E'| = ω I (μ0/2π) ln(r14 r23 / (r13 r24)).

    Source: Faraday's law with Grover's mutual inductance of two circuits of long parallel
    wires (Grover, Inductance Calculations, 1946; from memory)."""
    p = {c.name: np.array([c.x_mm, c.y_mm]) * 1e-3 for c in lay.conductors}

    def r(a, b):
        return float(np.linalg.norm(p[a] - p[b]))

    m = MU0 / (2 * np.pi) * np.log(r("P-L", "V-b") * r("P-N", "V-a")
                                   / (r("P-L", "V-a") * r("P-N", "V-b")))
    return 2 * np.pi * lay.frequency_hz * lay.circuits[0].current_a * abs(m)


def test_emf_equals_omega_m_i():
    lay = pair_layout()
    (v,) = induced_emf(lay)
    assert v.circuit == v.name == "V"
    assert v.induced_mV_per_m == pytest.approx(closed_form_emf_v_per_m(lay) * 1e3, rel=1e-9)
    assert v.induced_mV_per_m > 0.01
    assert v.length_m is None and v.induced_V is None and v.finite_length_factor is None


def test_emf_is_linear_in_current_and_frequency():
    e = induced_emf(pair_layout(100.0, 50.0))[0].induced_mV_per_m
    assert induced_emf(pair_layout(250.0, 50.0))[0].induced_mV_per_m == pytest.approx(2.5 * e,
                                                                                       rel=1e-12)
    assert induced_emf(pair_layout(100.0, 60.0))[0].induced_mV_per_m == pytest.approx(1.2 * e,
                                                                                       rel=1e-12)


def test_symmetric_victim_in_symmetric_field_sees_nothing():
    # The source pair is symmetric about x = 30 mm; a victim pair laid as mirror images
    # across that line sits at equal vector potential on both sides (common practice).
    lay = pair_layout(victim=((30.0 - 25.0, 200.0), (30.0 + 25.0, 200.0)))
    # turn the source loop so that it is mirror-symmetric: L and N one above the other
    cons = list(lay.conductors)
    cons[0], cons[1] = cons[0].moved(30.0, 0.0), cons[1].moved(30.0, 60.0)
    (v,) = induced_emf(lay.with_conductors(cons))
    assert v.induced_mV_per_m < 1e-12
    # the same victim moved off the line of symmetry does pick up an EMF
    cons[2] = cons[2].moved(0.0, 200.0)
    assert induced_emf(lay.with_conductors(cons))[0].induced_mV_per_m > 1e-3


def test_harmonics_weighted_by_frequency_and_root_sum_square():
    lay = pair_layout(harmonics=((3, 0.2), (5, 0.1)))
    (v,) = induced_emf(lay)
    e1 = closed_form_emf_v_per_m(lay) * 1e3
    parts = {p.order: p.induced_mV_per_m for p in v.harmonics}
    assert parts[1] == pytest.approx(e1, rel=1e-9)
    assert parts[3] == pytest.approx(3 * 0.2 * e1, rel=1e-9)  # ω ×3, current ×0.2
    assert parts[5] == pytest.approx(5 * 0.1 * e1, rel=1e-9)
    assert v.induced_mV_per_m == pytest.approx(np.sqrt(sum(x * x for x in parts.values())))


def test_finite_run_against_numerical_neumann_integrals():
    # A short run: each source–victim line pair coupled by its partial mutual inductance
    # M(l, d), here from the Neumann integral (Source: scipy.integrate.dblquad).
    length = 0.5
    lay = pair_layout(length_m=length)
    (v,) = induced_emf(lay)
    p = {c.name: np.array([c.x_mm, c.y_mm]) * 1e-3 for c in lay.conductors}

    def m(a, b):
        return neumann_mutual(length, float(np.linalg.norm(p[a] - p[b])))

    psi = 100.0 * (m("P-L", "V-a") - m("P-L", "V-b") - m("P-N", "V-a") + m("P-N", "V-b"))
    expect_v = 2 * np.pi * 50.0 * abs(psi)
    assert v.induced_V == pytest.approx(expect_v, rel=1e-7)
    assert v.finite_length_factor == pytest.approx(
        expect_v / (closed_form_emf_v_per_m(lay) * length), rel=1e-7)
    assert v.finite_length_factor < 0.9  # a 0.5 m run is visibly short of the 2D figure


def test_long_run_uses_per_metre_figure_and_cli_length_is_a_fallback():
    lay = pair_layout(length_m=None)
    (v,) = induced_emf(lay, length_m=200.0)
    assert v.length_m == 200.0
    assert v.finite_length_factor == pytest.approx(1.0, abs=2e-3)
    assert v.induced_V == pytest.approx(v.induced_mV_per_m * 1e-3 * 200.0, rel=2e-3)
    (own,) = induced_emf(replace(lay, circuits=(lay.circuits[0],
                                                replace(lay.circuits[1], length_m=40.0))),
                         length_m=200.0)
    assert own.length_m == 40.0  # the circuit's own length_m wins over the fallback


def test_earth_loop_uses_vector_potential_down_to_the_earth_plane():
    lay = pair_layout(victim=((300.0, 40.0), (300.0, 60.0)))
    (v,) = induced_emf(lay, earth_y_mm=-100.0, length_m=10.0)
    # the pair as one line at (0.3, 0.05) m returning at (0.3, −0.1) m: a two-wire victim
    # loop, so Grover's closed form applies again (Source: as closed_form_emf_v_per_m).
    r = np.hypot
    m = MU0 / (2 * np.pi) * np.log(r(0.3, 0.1) * r(0.24, 0.05) / (r(0.3, 0.05) * r(0.24, 0.1)))
    assert v.earth_loop_mV_per_m == pytest.approx(2 * np.pi * 50 * 100 * abs(m) * 1e3, rel=1e-9)
    assert v.earth_loop_V == pytest.approx(v.earth_loop_mV_per_m * 1e-2, rel=1e-12)
    no_earth = induced_emf(lay)[0]
    assert no_earth.earth_loop_mV_per_m is None
    lay = replace(lay, earth_y_mm=-100.0)  # the layout's own earth reference
    assert induced_emf(lay)[0].earth_loop_mV_per_m == v.earth_loop_mV_per_m


def sets_with_victim(order: str) -> Layout:
    """Two parallel sets of 240 mm² copper and a signal pair beside them (invented)."""
    cons, seen = [], {}
    for k, ph in enumerate(order.split()):
        seen[ph] = seen.get(ph, 0) + 1
        cons.append(Conductor(f"F1-{ph}{'ab'[seen[ph] - 1]}", "F1", ph, 20.0 + 30.0 * k, 15.0,
                              28.0, 240.0, "copper"))
    cons += [Conductor("C-a", "C", "a", 260.0, 5.0, 6.0), Conductor("C-b", "C", "b", 272.0,
                                                                     5.0, 6.0)]
    return Layout(circuits=(Circuit("F1", "ac3", 600.0), Circuit("C", "signal")),
                  conductors=tuple(cons))


def test_summary_json_shape_and_sharing_feed():
    lay = sets_with_victim("L1 L2 L3 L1 L2 L3")
    s = coupling_summary(lay, length_m=30.0)
    j = s.to_json()
    assert {"victims", "sharing", "groups", "reactance_only", "loops",
            "mutual_uH_per_m"} <= set(j)
    assert {"circuit", "induced_mV_per_m", "length_m", "induced_V"} <= set(j["victims"][0])
    assert {"conductor", "current_a", "angle_deg", "share_pct"} <= set(j["sharing"][0])
    assert j["victims"][0]["induced_mV_per_m"] == s.victims[0].induced_mV_per_m
    equal = induced_emf(lay)[0].induced_mV_per_m
    shared = induced_emf(lay, src=solved_sources(lay))[0].induced_mV_per_m
    assert s.victims[0].induced_mV_per_m == pytest.approx(shared, rel=1e-12)
    assert shared != pytest.approx(equal, rel=1e-3)  # uneven sharing changes the EMF
    assert coupling_summary(lay, currents="equal").victims[0].induced_mV_per_m == equal
    assert j["currents"] == "solved"
    m = np.array(j["mutual_uH_per_m"])
    assert m.shape == (3, 3) and np.array_equal(m, m.T)


def test_constraints_match_the_summary_and_follow_moves():
    bad = sets_with_victim("L1 L1 L2 L2 L3 L3")
    imb = imbalance_constraint(10.0)
    emf = induced_voltage_constraint(0.5)
    fig = imb(bad)
    assert fig.key == "imbalance_pct" and fig.worst.startswith("F1 ")
    assert fig.value == pytest.approx(max(g.imbalance_pct for g in solve_sharing(bad).groups),
                                      rel=1e-12)
    assert fig.passes is (fig.value <= 10.0)
    e = emf(bad)
    assert e.key == "induced_mV_per_m" and e.worst == "C"
    assert e.value == pytest.approx(coupling_summary(bad).victims[0].induced_mV_per_m,
                                    rel=1e-12)
    # the same constraint objects, re-used on a rearranged layout (cached plan), agree with
    # a fresh solve
    good = sets_with_victim("L1 L2 L3 L3 L2 L1")
    good_pos = bad.with_positions({c.name: (c.x_mm, c.y_mm) for c in good.conductors})
    assert imb(good_pos).value < 1e-9 and imb(good_pos).passes
    assert emf(good_pos).value == pytest.approx(coupling_summary(good).victims[0]
                                                .induced_mV_per_m, rel=1e-12)
    plain = induced_voltage_constraint(0.5, currents="equal")
    assert plain(bad).value == pytest.approx(induced_emf(bad)[0].induced_mV_per_m, rel=1e-12)
    again = pickle.loads(pickle.dumps(imb))  # process pools can ship constraints
    assert again(bad).value == fig.value


def test_constraints_on_a_layout_without_victims_or_parallel_sets():
    lay = Layout(circuits=(Circuit("F", "ac1", 10.0),),
                 conductors=(Conductor("L", "F", "L", 0, 0, 10), Conductor("N", "F", "N",
                                                                            20, 0, 10)))
    for c in (imbalance_constraint(1.0), induced_voltage_constraint(1.0)):
        f = c(lay)
        assert f.value == 0.0 and f.passes and f.worst == ""
    s = coupling_summary(lay)
    assert s.victims == () and s.to_json()["sharing"] == []


def test_batched_constraint_values_equal_one_by_one():
    bad = sets_with_victim("L1 L1 L2 L2 L3 L3")
    orders = ["L1 L1 L2 L2 L3 L3", "L1 L2 L3 L1 L2 L3", "L1 L2 L3 L3 L2 L1",
              "L2 L1 L3 L3 L1 L2"]
    lays = [bad.with_positions({c.name: (c.x_mm, c.y_mm)
                                for c in sets_with_victim(o).conductors}) for o in orders]
    xy = np.stack([[[c.x_mm * 1e-3, c.y_mm * 1e-3] for c in lay.conductors] for lay in lays])
    for con in (imbalance_constraint(5.0), induced_voltage_constraint(1.0),
                induced_voltage_constraint(1.0, currents="equal")):
        batch = con.values_batch(bad, xy)
        assert batch.shape == (4,)
        np.testing.assert_allclose(batch, [con(lay).value for lay in lays], rtol=1e-12)
        assert len(set(np.round(batch, 9))) > 1  # the arrangements do differ


def test_emf_agrees_with_the_loop_matrix_mutual():
    # Two code paths (vector potential at the victim; loop weights × log distances) must
    # give the same |E'| = ω |M'_sv| I.
    lay = pair_layout(current=80.0, victim=((250.0, 120.0), (205.0, 160.0)))
    names, m = loop_inductance_matrix(lay)
    e = induced_emf(lay)[0].induced_mV_per_m * 1e-3
    assert e == pytest.approx(2 * np.pi * 50.0 * 80.0 * abs(m[names.index("P:L/N"),
                                                               names.index("V:a/b")]),
                              rel=1e-9)
