"""Checks of the current phasors every engine receives (phase, harmonic and DC conventions)."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from trayadvisor.engine.currents import MM, conductor_currents, layout_sources
from trayadvisor.engine.field import far_field, phasor_field, resultant_rms
from trayadvisor.model import Circuit, Conductor, Layout


def cond(name, circuit, phase, x, y=20.0, d=30.0, **kw):
    return Conductor(name=name, circuit=circuit, phase=phase, x_mm=x, y_mm=y, diameter_mm=d,
                     **kw)


def ac3_layout(current=400.0, harmonics=(), neutral=True, angle=0.0, sets=1):
    circ = Circuit("F1", "ac3", current_a=current, angle_deg=angle, harmonics=harmonics)
    cons = []
    x = 20.0
    for k in range(sets):
        for ph in ("L1", "L2", "L3"):
            cons.append(cond(f"{ph}{k}", "F1", ph, x))
            x += 35.0
    if neutral:
        cons.append(cond("N", "F1", "N", x))
        x += 35.0
    cons.append(cond("PE", "F1", "PE", x, d=20.0))
    return Layout(circuits=(circ,), conductors=tuple(cons))


def by_name(src, order):
    row = src.currents[list(src.orders).index(order)]
    return dict(zip(src.names, row, strict=True))


def test_fundamental_phase_angles():
    # Source: common practice (IEC phase sequence L1-L2-L3; L2 lags L1 by 120°): L1 0°,
    # L2 −120°, L3 +120° (docs/conventions.md).
    src = layout_sources(ac3_layout(current=400.0))
    i = by_name(src, 1)
    assert i["L10"] == pytest.approx(400.0)
    assert i["L20"] == pytest.approx(400.0 * np.exp(-2j * np.pi / 3))
    assert i["L30"] == pytest.approx(400.0 * np.exp(2j * np.pi / 3))
    assert abs(i["N"]) < 1e-9  # balanced: no fundamental in the neutral — common practice
    assert i["PE"] == 0.0  # PE carries no load current — common practice
    assert src.frequency_hz[list(src.orders).index(1)] == pytest.approx(50.0)


def test_circuit_angle_shifts_every_phase():
    src = layout_sources(ac3_layout(current=100.0, angle=30.0))
    i = by_name(src, 1)
    assert np.angle(i["L10"], deg=True) == pytest.approx(30.0)
    assert np.angle(i["L20"], deg=True) == pytest.approx(-90.0)
    assert np.angle(i["L30"], deg=True) == pytest.approx(150.0)


def test_harmonic_sequences_and_triplen_neutral():
    # Harmonic h of a phase at angle φ has angle h·φ: triplens are zero-sequence (in phase
    # in L1, L2, L3), the 5th negative-sequence, the 7th positive. Source: common practice
    # (symmetrical components of harmonic currents).
    # A balanced ac3 neutral carries 3 × the phase triplen current and no fundamental.
    # Source: common practice.
    lay = ac3_layout(current=200.0, harmonics=((3, 0.10), (5, 0.20), (7, 0.05), (9, 0.02)))
    src = layout_sources(lay)
    assert list(src.orders) == [1, 3, 5, 7, 9]
    np.testing.assert_allclose(src.frequency_hz, [50.0, 150.0, 250.0, 350.0, 450.0])
    for h, frac in ((3, 0.10), (9, 0.02)):
        i = by_name(src, h)
        np.testing.assert_allclose([i["L10"], i["L20"], i["L30"]], 200.0 * frac, atol=1e-9)
        assert i["N"] == pytest.approx(-3 * 200.0 * frac)  # return: 3× the phase current
    i5 = by_name(src, 5)
    assert np.angle(i5["L20"], deg=True) == pytest.approx(120.0)  # −600° ≡ +120°
    assert np.angle(i5["L30"], deg=True) == pytest.approx(-120.0)
    assert abs(i5["N"]) < 1e-9
    i7 = by_name(src, 7)
    assert np.angle(i7["L20"], deg=True) == pytest.approx(-120.0)  # −840° ≡ −120°
    assert abs(i7["N"]) < 1e-9
    assert abs(by_name(src, 1)["N"]) < 1e-9
    # the neutral's RMS current over all harmonics: 3 × sqrt(0.1² + 0.02²) × 200 A
    n_rms = np.sqrt(np.sum(np.abs(src.currents[:, src.names.index("N")]) ** 2))
    assert n_rms == pytest.approx(3 * 200.0 * np.hypot(0.10, 0.02))


def test_parallel_sets_share_equally_and_explicit_override():
    lay = ac3_layout(current=630.0, sets=2, neutral=False)
    i = by_name(layout_sources(lay), 1)
    assert i["L10"] == pytest.approx(315.0) and i["L11"] == pytest.approx(315.0)
    cons = list(lay.conductors)
    cons[0] = replace(cons[0], current_a=400.0, angle_deg=-5.0)
    i = by_name(layout_sources(lay.with_conductors(cons)), 1)
    assert i["L10"] == pytest.approx(400.0 * np.exp(-1j * np.deg2rad(5.0)))
    assert i["L11"] == pytest.approx(315.0)


def test_dc_sign_convention():
    # docs/conventions.md: dc + = +I, − = −I, a real current at frequency 0 (one real problem).
    circ = Circuit("B1", "dc", current_a=200.0)
    lay = Layout(frequency_hz=60.0, circuits=(circ,),
                 conductors=(cond("p", "B1", "+", 20.0), cond("m", "B1", "-", 60.0)))
    src = layout_sources(lay)
    assert list(src.orders) == [0]
    assert src.frequency_hz[0] == 0.0
    np.testing.assert_array_equal(src.currents[0], [200.0, -200.0])
    # go/return: no net current, the far field is a dipole (order 2)
    assert far_field(src.xy_m, src.currents).order == 2


def test_ac1_neutral_returns_line_current():
    # Source: Kirchhoff's current law (common practice): N carries the return of L.
    circ = Circuit("S1", "ac1", current_a=63.0, harmonics=((3, 0.3),))
    lay = Layout(circuits=(circ,),
                 conductors=(cond("L", "S1", "L", 20.0), cond("N", "S1", "N", 60.0)))
    src = layout_sources(lay)
    for h in (1, 3):
        i = by_name(src, h)
        assert i["N"] == pytest.approx(-i["L"])
    assert by_name(src, 1)["L"] == pytest.approx(63.0)


def test_signal_and_pe_carry_nothing_unless_given():
    lay = Layout(circuits=(Circuit("C7", "signal"),),
                 conductors=(cond("a", "C7", "a", 20.0, d=5.0),
                             cond("b", "C7", "b", 30.0, d=5.0, current_a=0.01)))
    src = layout_sources(lay)
    assert src.currents[0, 0] == 0.0 and src.currents[0, 1] == pytest.approx(0.01)
    empty = layout_sources(Layout())
    assert empty.currents.shape == (1, 0) and empty.xy_m.shape == (0, 2)


def test_units_and_geometry():
    src = layout_sources(ac3_layout())
    assert src.xy_m[0] == pytest.approx([20.0 * MM, 20.0 * MM])
    assert src.radius_m[0] == pytest.approx(15.0 * MM)
    assert conductor_currents(ac3_layout()).keys() == {1}


def test_neutral_harmonic_field_through_the_engine():
    # With harmonics the resultant is the root-sum-square over the components (IEC 61786-1),
    # and the field of the triplen component alone is that of the N return loop.
    lay = ac3_layout(current=200.0, harmonics=((3, 0.1),))
    src = layout_sources(lay)
    pts = np.array([[0.1, 1.0], [2.0, -0.5]])
    b = phasor_field(src.xy_m, src.radius_m, src.currents, pts)
    per = [resultant_rms(phasor_field(src.xy_m, src.radius_m, row, pts)) for row in src.currents]
    np.testing.assert_allclose(resultant_rms(b), np.sqrt(per[0] ** 2 + per[1] ** 2), rtol=1e-12)
