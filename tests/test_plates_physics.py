"""Plates seen by every figure: the layout-level paths (field, sharing impedance, victim EMF,
losses, ranking tables) against closed forms, energy balance and the free-space engine.

References are named beside each value; the closed forms are written here, not taken from
the modules they check.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from trayadvisor.analysis import field_summary, plate_comparison
from trayadvisor.coupling import coupling_summary, induced_emf, plate_sources, solve_sharing
from trayadvisor.engine import layout_sources
from trayadvisor.model import Circuit, Conductor, Layout, ObservationPoint, Plate, Tray
from trayadvisor.ranking import rank_layout

MU0 = 4e-7 * math.pi  # SI (exact enough: the 2019 value differs by 1e-10)
K = MU0 / (2 * math.pi)


def _pair_layout(plates: tuple[Plate, ...] = (), *, signal: bool = False) -> Layout:
    """A 200 A go/return pair (ac1) 40 mm apart, 60 mm above y = 0; optional signal pair."""
    circuits = [Circuit("P", "ac1", current_a=200.0)]
    cons = [Conductor("P-L", "P", "L", -20.0, 60.0, 20.0, area_mm2=95.0),
            Conductor("P-N", "P", "N", 20.0, 60.0, 20.0, area_mm2=95.0)]
    if signal:
        circuits.append(Circuit("S", "signal", length_m=10.0))
        cons += [Conductor("S-a", "S", "a", 100.0, 40.0, 6.0),
                 Conductor("S-b", "S", "b", 100.0, 80.0, 6.0)]
    return Layout(title="pair", circuits=tuple(circuits), conductors=tuple(cons),
                  points=(ObservationPoint("above", 0.0, 400.0),), plates=plates)


# A wide, thick, non-conducting permeable slab below the pair: the image method holds for
# points and conductors far from its edges (closed form, any electromagnetics text).
SLAB_MU = 50.0
SLAB = Plate("slab", -3000.0, -1500.0, 6000.0, 1500.0, mu_r=SLAB_MU, sigma_s_per_m=0.0)
KAPPA = (SLAB_MU - 1) / (SLAB_MU + 1)


def _image_potential(src_xy: np.ndarray, cur: np.ndarray, pts: np.ndarray) -> np.ndarray:
    """A_z above a permeable half-space y < 0: sources plus images κ·I at (x, −y)."""
    out = np.zeros(pts.shape[0])
    for (x, y), i in zip(src_xy, cur, strict=True):
        out += -K * i * np.log(np.hypot(pts[:, 0] - x, pts[:, 1] - y))
        out += -K * KAPPA * i * np.log(np.hypot(pts[:, 0] - x, pts[:, 1] + y))
    return out


def test_without_plates_the_figures_are_the_free_space_engine_and_air_changes_nothing():
    # limiting case: no plates → no reaction at all; an "air" plate (μr 1, σ 0) → zero
    # reaction, so every figure equals the analytic engine's
    free = field_summary(_pair_layout())
    air = field_summary(_pair_layout((Plate("air", -500, -100, 1000, 5, mu_r=1.0,
                                            sigma_s_per_m=0.0),)))
    assert layout_sources(_pair_layout()).reaction is None
    assert air.max_resultant_uT == pytest.approx(free.max_resultant_uT, rel=1e-12)
    assert air.places[0].max_resultant_uT == pytest.approx(free.places[0].max_resultant_uT,
                                                           rel=1e-12)
    assert [p.loss_w_per_m for p in air.plates] == [0.0]


def test_field_above_a_permeable_slab_is_the_image_method():
    # B above the slab = pair + images κ·I (closed form); at 0.34 m above the pair
    lay = _pair_layout((SLAB,))
    src = plate_sources(lay)
    pts = np.array([[0.0, 0.4], [0.3, 0.25], [-0.2, 0.5]])
    got = np.sqrt((np.abs(src.field_at(pts)) ** 2).sum(axis=(0, 2)))
    want = []
    for p in pts:
        b = np.zeros(2)
        for (x, y), i in zip(src.xy_m, src.currents[0].real, strict=True):
            for yy, ii in ((y, i), (-y, KAPPA * i)):
                d = p - np.array([x, yy])
                b += K * ii * np.array([-d[1], d[0]]) / (d @ d)
        want.append(np.hypot(*b))
    assert got == pytest.approx(np.array(want), rel=5e-3)
    # the slab nearly doubles the field above it: far from the free-space value
    free = np.sqrt((np.abs(layout_sources(_pair_layout()).field_at(pts)) ** 2).sum(axis=(0, 2)))
    assert np.all(got > 1.5 * free)


def test_victim_emf_above_a_permeable_slab_is_the_image_method():
    # EMF per metre of the signal loop = ω |A(a) − A(b)| with the images (closed form)
    lay = _pair_layout((SLAB,), signal=True)
    (fig,) = induced_emf(lay, src=plate_sources(lay))
    src = np.array([[-0.02, 0.06], [0.02, 0.06]])
    a = _image_potential(src, np.array([200.0, -200.0]), np.array([[0.1, 0.04], [0.1, 0.08]]))
    want_mv = 2 * math.pi * 50.0 * abs(a[0] - a[1]) * 1e3
    assert fig.induced_mV_per_m == pytest.approx(want_mv, rel=5e-3)
    (free,) = induced_emf(_pair_layout(signal=True))
    assert fig.induced_mV_per_m > 1.3 * free.induced_mV_per_m


def test_loop_inductance_above_a_permeable_slab_is_the_image_method():
    # the plates' addition to the loop inductance of the pair: κ·(μ0/2π)·ln(d'_LN² / d'_LL
    # d'_NN) per metre with image distances d' (closed form); read from the sharing
    # impedance path (reaction potentials at the conductors)
    lay = _pair_layout((SLAB,))
    src = plate_sources(lay)
    p = src.reaction.potentials(src.xy_m, np.array([50.0]))[0]  # (2, 2)
    added = (p[0, 0] - p[0, 1] - p[1, 0] + p[1, 1]).real
    d_self = 2 * 0.06
    d_mutual = math.hypot(0.04, 0.12)
    want = K * KAPPA * 2 * math.log(d_mutual / d_self)
    assert added == pytest.approx(want, rel=5e-3)
    # the loop matrix `couple` reports carries the same addition
    with_slab = coupling_summary(lay).mutual_H_per_m[0, 0]
    free = coupling_summary(_pair_layout()).mutual_H_per_m[0, 0]
    assert with_slab - free == pytest.approx(want, rel=5e-3)


def _aluminium_under_pair() -> Layout:
    # 3 mm aluminium sheet 20 mm below the pair (typical σ recalled from memory)
    return _pair_layout((Plate("sheet", -400, 17, 800, 3, material="aluminium"),))


def test_plate_loss_equals_the_resistance_the_plates_add_to_the_loop():
    # energy balance (Poynting): the eddy-current loss in the plate equals Re(ΔZ)·|I|² of
    # the go/return loop, ΔZ = jω·(P_LL − P_LN − P_NL + P_NN)
    lay = _aluminium_under_pair()
    s = field_summary(lay)
    src = plate_sources(lay)
    p = src.reaction.potentials(src.xy_m, np.array([50.0]))[0]
    dz = 1j * 2 * math.pi * 50.0 * (p[0, 0] - p[0, 1] - p[1, 0] + p[1, 1])
    assert s.plates[0].loss_w_per_m == pytest.approx(dz.real * 200.0 ** 2, rel=2e-3)
    assert s.plates[0].loss_w_per_m > 0


def test_low_conductivity_loss_matches_the_resistance_limited_closed_form():
    # resistance-limited limit (eddy currents too weak to change the field): J = −jωσ(A0 −
    # mean A0 over the plate), P = ω²σ ∫|A0 − mean|² dA, by midpoint quadrature here
    sigma = 1e3
    lay = _pair_layout((Plate("resistive", -300, 10, 600, 2, mu_r=1.0,
                              sigma_s_per_m=sigma),))
    (plate,) = field_summary(lay, currents="equal").plates
    x = np.linspace(-0.3, 0.3, 6001)
    y = np.linspace(0.010, 0.012, 21)
    xm, ym = np.meshgrid(0.5 * (x[1:] + x[:-1]), 0.5 * (y[1:] + y[:-1]))
    a0 = sum(-K * i * np.log(np.hypot(xm - cx, ym - cy))
             for i, (cx, cy) in ((200.0, (-0.02, 0.06)), (-200.0, (0.02, 0.06))))
    w = 2 * math.pi * 50.0
    want = w * w * sigma * np.mean((a0 - a0.mean()) ** 2) * 0.6 * 0.002
    assert plate.loss_w_per_m == pytest.approx(want, rel=1e-3)


def test_comparison_says_an_aluminium_sheet_screens_the_point_above_less_than_below():
    lay = replace(_aluminium_under_pair(),
                  points=(ObservationPoint("above", 0.0, 400.0),
                          ObservationPoint("below", 0.0, -400.0)))
    c = plate_comparison(lay)
    rows = {r.name: r for r in c.rows}
    assert rows["below"].factor < 0.7  # screened: eddy currents oppose the field
    assert rows["above"].factor > rows["below"].factor
    assert rows["below"].reduction_db == pytest.approx(-20 * math.log10(rows["below"].factor))
    with pytest.raises(ValueError, match="nothing to compare"):
        plate_comparison(_pair_layout())


def _parallel_tray(sheet: str | None) -> Layout:
    """Two parallel sets of a 3-phase circuit in a tray (solid steel sheet or none)."""
    cons = []
    for k, ph in enumerate(["L1", "L2", "L3", "L1", "L2", "L3"]):
        cons.append(Conductor(f"F-{ph}{k // 3}", "F", ph, 30.0 + 40.0 * k, 15.0, 26.0,
                              area_mm2=240.0, tray="T"))
    return Layout(title="parallel", trays=(Tray("T", 0, 0, 300, 60, sheet=sheet),),
                  circuits=(Circuit("F", "ac3", current_a=600.0),), conductors=tuple(cons),
                  points=(ObservationPoint("below", 150.0, -300.0),))


def _four_in_a_sheet_tray() -> Layout:
    """Two parallel L and two parallel N of a 400 A ac1 circuit in a steel sheet tray."""
    cons = [Conductor(f"F-{ph}{k}", "F", ph, 40.0 + 60.0 * (2 * k + j), 15.0, 26.0,
                      area_mm2=240.0, tray="T")
            for k in range(2) for j, ph in enumerate(["L", "N"])]
    return Layout(title="four", trays=(Tray("T", 0, 0, 280, 60, sheet="steel"),),
                  circuits=(Circuit("F", "ac1", current_a=400.0),), conductors=tuple(cons),
                  points=(ObservationPoint("below", 140.0, -300.0),))


@pytest.mark.parametrize("currents", ["solved", "equal"])
def test_ranking_tables_with_plates_equal_the_direct_field_of_every_arrangement(currents):
    # the search's unit tables (complex, one per component, impedance with the plates'
    # reaction) against brute force: every assignment of the four conductors to the four
    # places, each with its own solved sharing and its field computed directly
    import itertools

    lay = _four_in_a_sheet_tray()
    res = rank_layout(lay, objective="point:below", top_k=2, currents=currents)
    assert res.method == "exhaustive"
    xs = [c.x_mm for c in lay.conductors]
    names = [c.name for c in lay.conductors]
    pt = np.array([[0.14, -0.3]])
    values = []
    for perm in itertools.permutations(range(4)):
        moved = lay.with_positions({names[i]: (xs[p], 15.0) for i, p in enumerate(perm)})
        src = solve_sharing(moved).sources if currents == "solved" else plate_sources(moved)
        b = src.field_at(pt)
        values.append(float(np.sqrt((np.abs(b) ** 2).sum())) * 1e6)
    assert res.options[0].max_resultant_uT == pytest.approx(min(values), rel=1e-6)
    assert max(values) > 1.5 * min(values)  # the order matters: the test can fail


def test_solved_sharing_sees_the_steel():
    # steel under parallel conductors adds inductance (and resistance by its losses): the
    # sharing changes, and the solved currents still sum to the phase current (Kirchhoff)
    free = solve_sharing(_parallel_tray(None))
    steel = solve_sharing(_parallel_tray("steel"))
    f_l1 = next(g for g in free.groups if g.phase == "L1")
    s_l1 = next(g for g in steel.groups if g.phase == "L1")
    assert s_l1.imbalance_pct != pytest.approx(f_l1.imbalance_pct, abs=0.05)
    cur = steel.sources.currents[0]
    idx = [i for i, c in enumerate(_parallel_tray(None).conductors) if c.phase == "L1"]
    assert abs(cur[idx].sum() - 600.0) < 1e-6 * 600.0
