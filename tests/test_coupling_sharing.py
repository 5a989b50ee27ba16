"""Current sharing between parallel conductors: hand-solved cases, symmetry, sums, R'."""

from __future__ import annotations

import numpy as np
import pytest
from references import MU0  # μ0 = 4π × 10⁻⁷ T·m/A; its source is named in references.py

from trayadvisor.analysis.summary import field_summary
from trayadvisor.coupling.sharing import (
    DEFAULT_TEMPERATURE_C,
    resistance_per_m,
    sharing_overrides,
    solve_sharing,
)
from trayadvisor.engine.currents import layout_sources
from trayadvisor.model import Circuit, Conductor, Layout

# Source: IEC 60228 / IEC 60287-1-1 Table 1, annealed copper ρ20 and α20 (from memory)
RHO_CU, ALPHA_CU = 1.7241e-8, 3.93e-3


def flat(order: str, area: float | None = 240.0, pitch: float = 30.0,
         current: float = 600.0) -> Layout:
    """One ac3 circuit of parallel sets laid in one row in the given phase order."""
    cons, seen = [], {}
    for k, ph in enumerate(order.split()):
        seen[ph] = seen.get(ph, 0) + 1
        cons.append(Conductor(f"F1-{ph}{'abcd'[seen[ph] - 1]}", "F1", ph, 20.0 + k * pitch,
                              15.0, 28.0, area, "copper" if area else None))
    return Layout(circuits=(Circuit("F1", "ac3", current),), conductors=tuple(cons))


# -- R' against the standards -------------------------------------------------------------
@pytest.mark.parametrize("area,table_ohm_per_km", [(240.0, 0.0754), (120.0, 0.153),
                                                    (16.0, 1.15)])
def test_copper_resistance_against_iec_60228_table(area, table_ohm_per_km):
    # Source: IEC 60228 Table 2, maximum DC resistance at 20 °C of class 2 plain copper
    # (from memory). Resistivity / nominal area gives a value a few % under that maximum.
    got = resistance_per_m(area, "copper", 20.0) * 1e3
    assert 0.90 * table_ohm_per_km < got < table_ohm_per_km


def test_resistance_at_temperature_follows_iec_60287():
    # Source: IEC 60287-1-1 clause 2.1.1, R' = R'0 [1 + α20 (θ − 20)] (from memory).
    r20 = resistance_per_m(240.0, "copper", 20.0)
    assert r20 == pytest.approx(RHO_CU / 240e-6, rel=1e-12)
    assert resistance_per_m(240.0, "copper", 90.0) / r20 == pytest.approx(1 + ALPHA_CU * 70)
    # aluminium: Source: IEC 60228 Table 2, 240 mm² class 2 aluminium 0.125 Ω/km (from memory)
    r_al = resistance_per_m(np.array([240.0]), ["aluminium"], 20.0)[0] * 1e3
    assert 0.90 * 0.125 < r_al < 0.125


# -- symmetry: equal shares exactly ---------------------------------------------------------
@pytest.mark.parametrize("area", [240.0, None])
def test_mirrored_row_shares_equally(area):
    # L1 L2 L3 L3 L2 L1: each phase's pair are mirror images, so they must share equally.
    res = solve_sharing(flat("L1 L2 L3 L3 L2 L1", area))
    assert len(res.groups) == 3
    for g in res.groups:
        assert g.imbalance_pct < 1e-9
    for s in res.shares:
        assert s.share_pct == pytest.approx(50.0, abs=1e-9)


def test_square_of_two_single_phase_pairs_shares_equally():
    # L at (±40, 0), N at (0, ±40): a square; the mirror x → −x swaps the L conductors.
    cons = (Conductor("La", "S", "L", -40.0, 0.0, 20.0, 50.0, "copper"),
            Conductor("Lb", "S", "L", 40.0, 0.0, 20.0, 50.0, "copper"),
            Conductor("Na", "S", "N", 0.0, 40.0, 20.0, 50.0, "copper"),
            Conductor("Nb", "S", "N", 0.0, -40.0, 20.0, 50.0, "copper"))
    res = solve_sharing(Layout(circuits=(Circuit("S", "ac1", 100.0),), conductors=cons))
    i = {s.conductor: s.current for s in res.shares}
    assert abs(i["La"] - i["Lb"]) < 1e-12 * 100
    assert abs(i["Na"] - i["Nb"]) < 1e-12 * 100
    assert i["La"] == pytest.approx(50.0, abs=1e-9)


# -- a two-conductor case solved by hand ----------------------------------------------------
@pytest.mark.parametrize("with_area", [True, False])
def test_two_parallel_conductors_by_hand(with_area):
    # Two L conductors La, Lb (different sizes) in parallel, one N returning the current.
    f, current, temp = 50.0, 300.0, 70.0
    pa, pb, pn = np.array([0.0, 0.0]), np.array([0.06, 0.0]), np.array([0.02, 0.045])
    ar_a, ar_b = (240.0, 120.0) if with_area else (None, None)
    cons = (Conductor("La", "S", "L", *(pa * 1e3), 30.0, ar_a, "copper" if with_area else None),
            Conductor("Lb", "S", "L", *(pb * 1e3), 22.0, ar_b, "copper" if with_area else None),
            Conductor("N", "S", "N", *(pn * 1e3), 30.0, ar_a, "copper" if with_area else None))
    lay = Layout(frequency_hz=f, circuits=(Circuit("S", "ac1", current),), conductors=cons)
    res = solve_sharing(lay, temperature_c=temp)
    # By hand: Za·Ia + Zab·Ib + ZaN·IN = Zba·Ia + Zbb·Ib + ZbN·IN, Ia + Ib = I, IN = −I, so
    # Ia / I = [Rb + jX(ln(dab/gb) + ln(dbN/daN))] / [Ra + Rb + jX ln(dab² / (ga gb))],
    # X = ωμ0/2π; g = r e^(−1/4) (Source: Grover, Inductance Calculations, GMR of a circle).
    x = 2 * np.pi * f * MU0 / (2 * np.pi)
    if with_area:
        ra, rb = (RHO_CU * (1 + ALPHA_CU * (temp - 20)) / (a * 1e-6) for a in (ar_a, ar_b))
        ga, gb = (np.sqrt(a * 1e-6 / np.pi) * np.exp(-0.25) for a in (ar_a, ar_b))
    else:  # reactance only, overall radius
        ra = rb = 0.0
        ga, gb = 0.015 * np.exp(-0.25), 0.011 * np.exp(-0.25)
    dab, dan, dbn = (float(np.linalg.norm(u - v)) for u, v in ((pa, pb), (pa, pn), (pb, pn)))
    ia = current * (rb + 1j * x * (np.log(dab / gb) + np.log(dbn / dan))) / (
        ra + rb + 1j * x * np.log(dab**2 / (ga * gb)))
    got = {s.conductor: s for s in res.shares}
    assert got["La"].current == pytest.approx(ia, rel=1e-7)
    assert got["Lb"].current == pytest.approx(current - ia, rel=1e-7)
    assert got["La"].share_pct == pytest.approx(abs(ia) / current * 100, rel=1e-7)
    assert res.reactance_only is (not with_area)
    assert res.groups[0].reactance_only is (not with_area)
    assert (res.gmr_from_overall == ()) is with_area


def test_dc_parallel_conductors_share_by_resistance():
    # At DC only R matters: I_a / I = R_b / (R_a + R_b) = A_a / (A_a + A_b) (Ohm's law).
    cons = (Conductor("P1", "B", "+", 0.0, 0.0, 20.0, 95.0, "copper"),
            Conductor("P2", "B", "+", 40.0, 0.0, 16.0, 50.0, "copper"),
            Conductor("M", "B", "-", 80.0, 0.0, 24.0, 150.0, "copper"))
    lay = Layout(circuits=(Circuit("B", "dc", 290.0),), conductors=cons)
    res = solve_sharing(lay)
    got = {s.conductor: s for s in res.shares}
    np.testing.assert_allclose(layout_sources(lay, sharing_overrides(lay)).currents, res.currents)
    assert got["P1"].current == pytest.approx(290.0 * 95 / 145, rel=1e-12)
    assert res.groups[0].order == 0
    assert res.groups[0].imbalance_pct == pytest.approx(45 / 72.5 * 100, rel=1e-12)


# -- conservation ---------------------------------------------------------------------------
def harmonic_tray() -> Layout:
    """Two parallel sets (grouped, deliberately poor) beside a harmonic-rich circuit with two
    parallel neutrals, and a DC link: an invented tray."""
    base = flat("L1 L1 L2 L2 L3 L3", 185.0, pitch=26.0, current=500.0).conductors
    f2 = [Conductor(n, "F2", ph, x, 60.0, 21.0, 120.0, "copper") for n, ph, x in (
        ("F2-L1", "L1", 20.0), ("F2-L2", "L2", 45.0), ("F2-L3", "L3", 70.0),
        ("F2-Na", "N", 95.0), ("F2-Nb", "N", 120.0))]
    b = [Conductor("B+", "B", "+", 180.0, 60.0, 18.0, 70.0, "copper"),
         Conductor("B-", "B", "-", 205.0, 60.0, 18.0, 70.0, "copper")]
    return Layout(circuits=(Circuit("F1", "ac3", 500.0),
                            Circuit("F2", "ac3", 250.0, harmonics=((3, 0.3), (5, 0.2))),
                            Circuit("B", "dc", 100.0)),
                  conductors=tuple(base) + tuple(f2) + tuple(b))


def test_solved_currents_sum_to_each_phase_current_at_every_component():
    lay = harmonic_tray()
    res = solve_sharing(lay)
    nominal = layout_sources(lay)  # equal shares: the phase currents split evenly
    np.testing.assert_array_equal(res.orders, nominal.orders)
    for g in res.groups:
        idx = [res.names.index(n) for n in g.conductors]
        np.testing.assert_allclose(res.currents[:, idx].sum(axis=1),
                                   nominal.currents[:, idx].sum(axis=1), atol=1e-9)
    # every circuit still sums to zero (go = return)
    for circ in ("F1", "F2", "B"):
        idx = [i for i, c in enumerate(lay.conductors) if c.circuit == circ]
        np.testing.assert_allclose(res.currents[:, idx].sum(axis=1), 0.0, atol=1e-9)
    # the grouped row does share unevenly, and F2's parallel neutrals carry the triplens
    assert max(g.imbalance_pct for g in res.groups if g.circuit == "F1") > 5.0
    k3 = list(res.orders).index(3)
    neutrals = [res.names.index(n) for n in ("F2-Na", "F2-Nb")]
    assert abs(res.currents[k3, neutrals].sum()) == pytest.approx(3 * 0.3 * 250.0, rel=1e-9)


def test_a_group_is_solved_only_at_its_own_circuits_components():
    res = solve_sharing(harmonic_tray())
    f1 = [res.names.index(s.conductor) for s in res.shares if s.circuit == "F1"]
    for h in (0, 3, 5):
        assert np.all(res.currents[list(res.orders).index(h), f1] == 0)


def test_overrides_feed_sources_and_change_the_field():
    lay = harmonic_tray()
    res = solve_sharing(lay)
    ov = sharing_overrides(lay)
    assert set(ov) == {int(h) for h in res.orders}
    assert set(ov[1]) == {s.conductor for s in res.shares}
    np.testing.assert_allclose(layout_sources(lay, ov).currents, res.currents, atol=1e-12)
    equal = field_summary(lay, distance_mm=500.0).max_resultant_uT
    shared = field_summary(lay, distance_mm=500.0, sharing=True).max_resultant_uT
    assert shared != pytest.approx(equal, rel=1e-3)


def test_no_parallel_conductors_means_no_overrides():
    lay = flat("L1 L2 L3")
    assert sharing_overrides(lay) == {}
    res = solve_sharing(lay)
    assert res.shares == () and res.groups == () and not res.reactance_only
    assert res.temperature_c == DEFAULT_TEMPERATURE_C


def test_grouped_phases_share_worse_than_alternating_sets():
    # Common practice: parallel conductors of one phase laid side by side (L1 L1 L2 L2 L3 L3)
    # share far worse than sets laid one after the other (L1 L2 L3 L1 L2 L3).
    def worst(order: str, area: float | None) -> float:
        return max(g.imbalance_pct for g in solve_sharing(flat(order, area)).groups)

    for area in (240.0, None):
        bad, alt = worst("L1 L1 L2 L2 L3 L3", area), worst("L1 L2 L3 L1 L2 L3", area)
        assert bad > 1.3 * alt > 0


def test_sharing_is_independent_of_where_the_origin_is():
    lay = harmonic_tray()
    moved = lay.with_conductors([c.moved(-c.y_mm + 1e4, c.x_mm - 3e3)
                                 for c in lay.conductors])
    np.testing.assert_allclose(solve_sharing(moved).currents, solve_sharing(lay).currents,
                               rtol=1e-9, atol=1e-9)


def test_coincident_conductors_give_no_imbalance_figure_rather_than_zero():
    # Two parallel conductors at one place: the mutual inductance ln(1/0) has no value, so
    # the imbalance must be reported as missing (NaN), never as a reassuring 0 %.
    from trayadvisor.coupling.sharing import solve_sharing
    from trayadvisor.model import Circuit, Conductor, Layout

    cons = (Conductor("a1", "F", "L", 0.0, 0.0, 10.0), Conductor("a2", "F", "L", 0.0, 0.0, 10.0),
            Conductor("n", "F", "N", 50.0, 0.0, 10.0))
    lay = Layout(circuits=(Circuit("F", "ac1", 100.0),), conductors=cons)
    with np.errstate(all="ignore"):
        res = solve_sharing(lay)
    assert all(not np.isfinite(g.imbalance_pct) for g in res.groups)
