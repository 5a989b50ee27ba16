"""Current sharing between parallel conductors: hand-solved cases, symmetry, sums, R'."""

from __future__ import annotations

import numpy as np
import pytest
from references import MU0  # μ0 = 4π × 10⁻⁷ T·m/A; its source is named in references.py

from trayadvisor.analysis.summary import field_summary
from trayadvisor.coupling import SharingError, skin_effect_factor
from trayadvisor.coupling.resistance import resistance_per_m
from trayadvisor.coupling.sharing import DEFAULT_TEMPERATURE_C, solve_sharing
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
@pytest.mark.parametrize("material,area,table_ohm_per_km", [
    ("copper", 240.0, 0.0754), ("copper", 120.0, 0.153), ("copper", 16.0, 1.15),
    ("copper", 630.0, 0.0283), ("aluminium", 240.0, 0.125), ("aluminium", 95.0, 0.320)])
def test_resistance_of_standard_sizes_is_the_iec_60228_table(material, area,
                                                             table_ohm_per_km):
    # Source: IEC 60228 Table 2, maximum DC resistance at 20 °C of class 2 conductors,
    # plain copper and aluminium (from memory).
    got = resistance_per_m(area, material, 20.0) * 1e3
    assert got == pytest.approx(table_ohm_per_km, rel=1e-12)


def test_resistance_of_other_sizes_and_at_temperature_follows_iec_60287():
    # A size not in the table: ρ20 / A. Source: IEC 60287-1-1 Table 1, ρ20 (from memory).
    assert resistance_per_m(200.0, "copper", 20.0) == pytest.approx(RHO_CU / 200e-6,
                                                                     rel=1e-12)
    # Source: IEC 60287-1-1 clause 2.1.1, R' = R'0 [1 + α20 (θ − 20)] (from memory).
    r20 = resistance_per_m(240.0, "copper", 20.0)
    assert resistance_per_m(240.0, "copper", 90.0) / r20 == pytest.approx(1 + ALPHA_CU * 70)


def iec_skin(r_dc: float, f: float) -> float:
    """y_s of IEC 60287-1-1 clause 2.1.2, k_s = 1 (from memory), written here afresh."""
    xs = np.sqrt(8 * np.pi * f / r_dc * 1e-7)
    if xs <= 2.8:
        return xs**4 / (192 + 0.8 * xs**4)
    if xs <= 3.8:
        return -0.136 - 0.0177 * xs + 0.0563 * xs**2
    return 0.354 * xs - 0.733


def test_skin_effect_factor_follows_iec_60287():
    r90 = 0.0754e-3 * (1 + ALPHA_CU * 70)  # 240 mm² copper at 90 °C, Ω/m
    # about 0.9 % at 50 Hz for 240 mm² (from memory: "about 1 %" for this size)
    assert float(skin_effect_factor(r90, 50.0)) == pytest.approx(iec_skin(r90, 50.0),
                                                                 rel=1e-12)
    assert 0.007 < float(skin_effect_factor(r90, 50.0)) < 0.011
    for f in (250.0, 1250.0, 2500.0, 20e3):  # every range of the formula is reached
        assert float(skin_effect_factor(r90, f)) == pytest.approx(iec_skin(r90, f), rel=1e-12)
    assert float(skin_effect_factor(r90, 0.0)) == 0.0
    # the three pieces join: the standard's fits agree to about 0.003 at x_s = 2.8 and 3.8
    for xs in (2.8, 3.8):
        f = xs**2 * r90 / (8 * np.pi * 1e-7)
        below, above = (float(skin_effect_factor(r90, f * k)) for k in (1 - 1e-9, 1 + 1e-9))
        assert abs(above - below) < 0.003


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
        # Source: IEC 60228 Table 2, 240 and 120 mm² copper 0.0754 and 0.153 Ω/km at 20 °C
        # (from memory), at θ by IEC 60287-1-1, with the skin effect at f.
        r_dc = [r * 1e-3 * (1 + ALPHA_CU * (temp - 20)) for r in (0.0754, 0.153)]
        ra, rb = (r * (1 + iec_skin(r, f)) for r in r_dc)
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
    # At DC only R matters: I_a / I = R_b / (R_a + R_b) (Ohm's law), with R from IEC 60228
    # Table 2: 95 mm² 0.193 Ω/km, 50 mm² 0.387 Ω/km (from memory); the temperature factor
    # is common to both.
    cons = (Conductor("P1", "B", "+", 0.0, 0.0, 20.0, 95.0, "copper"),
            Conductor("P2", "B", "+", 40.0, 0.0, 16.0, 50.0, "copper"),
            Conductor("M", "B", "-", 80.0, 0.0, 24.0, 150.0, "copper"))
    lay = Layout(circuits=(Circuit("B", "dc", 290.0),), conductors=cons)
    res = solve_sharing(lay)
    got = {s.conductor: s for s in res.shares}
    np.testing.assert_allclose(res.sources.currents, res.currents)
    ia = 290.0 * 0.387 / (0.193 + 0.387)
    assert got["P1"].current == pytest.approx(ia, rel=1e-12)
    assert res.groups[0].order == 0
    assert res.groups[0].imbalance_pct == pytest.approx((2 * ia - 290.0) / 145.0 * 100,
                                                        rel=1e-12)


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


def test_another_circuits_harmonic_drives_circulating_currents():
    # F1 carries no harmonics; F2's 3rd and 5th induce circulating currents in F1's parallel
    # groups at 150 and 250 Hz (the loops are closed at both ends), summing to zero.
    res = solve_sharing(harmonic_tray())
    for g in res.groups:
        if g.circuit != "F1":
            continue
        idx = [res.names.index(n) for n in g.conductors]
        for h in (3, 5):
            k = list(res.orders).index(h)
            assert np.max(np.abs(res.currents[k, idx])) > 1e-3  # amperes, not noise
            assert abs(res.currents[k, idx].sum()) < 1e-9
        # nothing at DC: a static current induces no voltage
        assert np.all(np.abs(res.currents[list(res.orders).index(0), idx]) < 1e-12)


def test_solved_sources_change_the_field_and_equal_shares_give_the_old_one():
    lay = harmonic_tray()
    res = solve_sharing(lay)
    np.testing.assert_allclose(res.sources.currents, res.currents, atol=1e-12)
    equal = field_summary(lay, distance_mm=500.0, currents="equal")
    solved = field_summary(lay, distance_mm=500.0)
    assert solved.currents == "solved" and equal.currents == "equal"
    assert solved.max_resultant_uT != pytest.approx(equal.max_resultant_uT, rel=1e-3)
    # equal shares are the plain layout_sources figure
    src = layout_sources(lay)
    got = {(c.name, c.order): c for c in equal.conductor_currents}
    for k, h in enumerate(src.orders):
        for i, name in enumerate(src.names):
            assert got[name, int(h)].current_a == pytest.approx(abs(src.currents[k, i]),
                                                                abs=1e-12)


def test_no_parallel_conductors_means_nothing_to_solve():
    lay = flat("L1 L2 L3")
    res = solve_sharing(lay)
    assert res.shares == () and res.groups == () and not res.reactance_only
    assert res.temperature_c == DEFAULT_TEMPERATURE_C
    np.testing.assert_array_equal(res.currents, layout_sources(lay).currents)


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


def test_coincident_conductors_are_one_clear_error_naming_them():
    # Two parallel conductors at one place: the mutual inductance ln(1/0) has no value; the
    # answer is a message naming the conductors, never NaN figures or a reassuring 0 %.
    cons = (Conductor("a1", "F", "L", 0.0, 0.0, 10.0), Conductor("a2", "F", "L", 0.0, 0.0, 10.0),
            Conductor("n", "F", "N", 50.0, 0.0, 10.0))
    lay = Layout(circuits=(Circuit("F", "ac1", 100.0),), conductors=cons)
    with np.errstate(all="ignore"), pytest.raises(SharingError) as err:
        solve_sharing(lay)
    assert "'a1'" in str(err.value) and "'a2'" in str(err.value) and "\n" not in str(err.value)


def test_a_group_with_a_zero_total_is_reported_by_its_circulating_current():
    # Two parallel neutrals of a balanced ac3 circuit without harmonics: their total is zero
    # (Kirchhoff), but the phase currents induce a circulating current around the pair.
    cons = [Conductor(f"F-{ph}", "F", ph, x, 20.0, 30.0, 240.0, "copper")
            for ph, x in (("L1", 20.0), ("L2", 50.0), ("L3", 80.0))]
    cons += [Conductor("F-Na", "F", "N", 110.0, 20.0, 30.0, 240.0, "copper"),
             Conductor("F-Nb", "F", "N", 170.0, 20.0, 30.0, 240.0, "copper")]
    res = solve_sharing(Layout(circuits=(Circuit("F", "ac3", 400.0),), conductors=tuple(cons)))
    (g,) = res.groups
    assert g.phase == "N" and g.current_a == 0.0 and g.imbalance_pct is None
    na, nb = (s for s in res.shares)
    assert na.share_pct is None and nb.share_pct is None  # never a % of a zero total
    assert g.circulating_a == pytest.approx((na.current_a + nb.current_a) / 2, rel=1e-12)
    assert g.circulating_a > 1.0  # amperes: a real current, and so reported
    assert abs(na.current + nb.current) < 1e-9 * 400


def test_hand_built_impedance_solve_at_every_harmonic_with_every_circuit():
    # F1: two parallel sets of 185 mm² copper carrying a 5th harmonic; F2: one set of
    # 120 mm² with a 3rd harmonic and its neutral, laid beside F1. The impedance system of
    # all conductors is built here from its formulas and solved with numpy, each component
    # at its own frequency, F2's currents inducing voltage in F1's loops. A solve at 50 Hz
    # for every harmonic, or one that ignored F2, fails this test.
    f, temp, i1, i2 = 50.0, 80.0, 600.0, 300.0
    phi = {"L1": 0.0, "L2": -2 * np.pi / 3, "L3": 2 * np.pi / 3}  # common practice
    f1 = [("F1-L1a", "L1", 20.0), ("F1-L2a", "L2", 50.0), ("F1-L3a", "L3", 80.0),
          ("F1-L1b", "L1", 110.0), ("F1-L2b", "L2", 140.0), ("F1-L3b", "L3", 170.0)]
    f2 = [("F2-L1", "L1", 210.0), ("F2-L2", "L2", 240.0), ("F2-L3", "L3", 270.0),
          ("F2-N", "N", 300.0)]
    cons = [Conductor(n, "F1", ph, x, 15.0, 28.0, 185.0, "copper") for n, ph, x in f1]
    cons += [Conductor(n, "F2", ph, x, 15.0, 24.0, 120.0, "copper") for n, ph, x in f2]
    lay = Layout(frequency_hz=f, conductors=tuple(cons), circuits=(
        Circuit("F1", "ac3", i1, harmonics=((5, 0.2),)),
        Circuit("F2", "ac3", i2, harmonics=((3, 0.25),))))
    res = solve_sharing(lay, temperature_c=temp)
    assert sorted(int(h) for h in res.orders) == [1, 3, 5]

    xy = np.array([[c.x_mm, c.y_mm] for c in cons]) * 1e-3
    # Source: IEC 60228 Table 2, 185 and 120 mm² copper 0.0991 and 0.153 Ω/km at 20 °C
    # (from memory); IEC 60287-1-1 for θ and the skin effect.
    r20 = np.array([0.0991e-3] * 6 + [0.153e-3] * 4)
    r_dc = r20 * (1 + ALPHA_CU * (temp - 20))
    gmr = np.sqrt(np.array([185.0] * 6 + [120.0] * 4) * 1e-6 / np.pi) * np.exp(-0.25)
    d = np.hypot(*(xy[:, None, :] - xy[None, :, :]).transpose(2, 0, 1))
    np.fill_diagonal(d, gmr)
    free = list(range(6))
    groups = [[0, 3], [1, 4], [2, 5]]
    for k, h in enumerate(res.orders):
        w = 2 * np.pi * f * h
        r_ac = np.array([r * (1 + iec_skin(r, f * h)) for r in r_dc])
        z = np.diag(r_ac) + 1j * w * MU0 / (2 * np.pi) * np.log(1 / d)
        # the known currents: F2 at this harmonic (its neutral returns the sum)
        frac2 = {1: 1.0, 3: 0.25}.get(int(h), 0.0)
        i_k = np.array([i2 * frac2 * np.exp(1j * h * phi[ph]) for _, ph, _ in f2[:3]])
        i_k = np.append(i_k, -i_k.sum())
        frac1 = {1: 1.0, 5: 0.2}.get(int(h), 0.0)
        totals = [i1 * frac1 * np.exp(1j * h * phi[ph]) for ph in ("L1", "L2", "L3")]
        # unknowns: 6 currents and 3 group voltages; Z_ff I_f − E U = −Z_fk I_k, Eᵀ I_f = T
        a = np.zeros((9, 9), dtype=complex)
        a[:6, :6] = z[:6, :6]
        for g, members in enumerate(groups):
            for m in members:
                a[m, 6 + g] = -1.0
                a[6 + g, m] = 1.0
        rhs = np.concatenate([-z[:6, 6:] @ i_k, totals])
        want = np.linalg.solve(a, rhs)[:6]
        np.testing.assert_allclose(res.currents[k, free], want, rtol=1e-9,
                                   atol=1e-9 * i1)
        np.testing.assert_allclose(res.currents[k, 6:], i_k, atol=1e-9 * i2)
