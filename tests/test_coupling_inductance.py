"""Mutual inductance per metre, loop matrix, and Grover's finite-length formula."""

from __future__ import annotations

import magpylib
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from references import (
    MU0,  # μ0 = 4π × 10⁻⁷ T·m/A; its source is named in references.py
    neumann_mutual,
)

from trayadvisor.coupling.inductance import (
    GMR_SOLID,
    grover_mutual_finite,
    layout_loops,
    loop_inductance_matrix,
    mutual_inductance_per_m,
)
from trayadvisor.model import Circuit, Conductor, Layout


def closed_form(p1, p2, p3, p4) -> float:
    """Source: Grover, Inductance Calculations (1946), two circuits of long parallel wires,
    M' = (μ0/2π) ln(r14 r23 / (r13 r24)) (from memory)."""
    r = {(i, j): float(np.hypot(*(np.subtract(a, b))))
         for i, a in ((1, p1), (2, p2)) for j, b in ((3, p3), (4, p4))}
    return MU0 / (2 * np.pi) * np.log(r[1, 4] * r[2, 3] / (r[1, 3] * r[2, 4]))


GEOMETRIES = [  # (go 1, return 1, go 2, return 2) in metres
    ((0.0, 0.0), (0.1, 0.0), (0.3, 0.05), (0.35, 0.12)),
    ((0.0, 0.0), (0.0, 0.05), (-0.1, 0.5), (0.2, 0.45)),
    ((0.01, 0.02), (0.04, 0.02), (0.06, 0.2), (0.065, 0.23)),
]
# victim on the source loop's line of symmetry: no net flux (common practice)
SYMMETRIC = ((0.0, 0.0), (0.0, 0.05), (-0.2, 0.5), (0.2, 0.5))


@pytest.mark.parametrize("g", GEOMETRIES)
def test_two_wire_loops_match_closed_form(g):
    got = float(mutual_inductance_per_m(*(np.array(p) for p in g)))
    assert got == pytest.approx(closed_form(*g), rel=1e-9)


def test_vectorised_over_many_loop_pairs():
    arr = np.array(GEOMETRIES)  # (3, 4, 2)
    got = mutual_inductance_per_m(arr[:, 0], arr[:, 1], arr[:, 2], arr[:, 3])
    assert got.shape == (3,)
    # rtol 1e-9: the core uses CODATA μ0 (scipy), the reference 4π × 10⁻⁷
    np.testing.assert_allclose(got, [closed_form(*g) for g in GEOMETRIES], rtol=1e-9)
    assert all(abs(closed_form(*g)) > 1e-10 for g in GEOMETRIES)  # none is a trivial zero


def test_victim_on_symmetry_line_links_no_flux():
    assert abs(float(mutual_inductance_per_m(*(np.array(p) for p in SYMMETRIC)))) < 1e-22
    assert abs(magpylib_flux_per_m(*SYMMETRIC)) < 1e-15


def magpylib_flux_per_m(p1, p2, p3, p4, half_length=1e4, nodes=96) -> float:
    """Flux through the strip p3 → p4 (1 m long) of +1 A at p1 and −1 A at p2.

    Source: magpylib (independent Biot–Savart library) for B of long straight lines,
    integrated across the victim loop with Gauss–Legendre quadrature (numpy).
    """
    lines = [magpylib.current.Polyline(current=i, vertices=[(*p, -half_length),
                                                          (*p, half_length)])
             for i, p in ((1.0, p1), (-1.0, p2))]
    t, w = np.polynomial.legendre.leggauss(nodes)
    s = 0.5 * (t + 1.0)
    a, b = np.array(p3), np.array(p4)
    pts = a[None, :] + s[:, None] * (b - a)[None, :]
    obs = np.column_stack([pts, np.zeros(nodes)])
    bfield = magpylib.getB(lines, obs, sumup=True)  # (nodes, 3) T
    u = (b - a) / np.linalg.norm(b - a)
    normal = np.array([-u[1], u[0]])  # ẑ × u: orientation of the loop go(+z) → return(−z)
    bn = bfield[:, :2] @ normal
    return float(0.5 * np.linalg.norm(b - a) * np.sum(w * bn))


@pytest.mark.parametrize("g", GEOMETRIES)
def test_mutual_equals_flux_of_magpylib_field_across_victim(g):
    got = float(mutual_inductance_per_m(*(np.array(p) for p in g)))
    flux = magpylib_flux_per_m(*g)
    # tolerance: lines of ±10 km (relative end effect ~ (d/L)²) and 96-node quadrature
    assert got == pytest.approx(flux, rel=1e-6, abs=1e-15)


def two_loop_layout(g_mm, d_mm=10.0) -> Layout:
    p1, p2, p3, p4 = g_mm
    cons = (
        Conductor("P-L", "P", "L", *p1, d_mm),
        Conductor("P-N", "P", "N", *p2, d_mm),
        Conductor("V-a", "V", "a", *p3, d_mm),
        Conductor("V-b", "V", "b", *p4, d_mm),
    )
    return Layout(circuits=(Circuit("P", "ac1", 100.0), Circuit("V", "signal")),
                  conductors=cons)


@pytest.mark.parametrize("g", GEOMETRIES)
def test_loop_matrix_of_single_wire_loops(g):
    g_mm = [tuple(1e3 * np.array(p)) for p in g]
    names, m = loop_inductance_matrix(two_loop_layout(g_mm))
    assert names == ("P:L/N", "V:a/b")
    assert m[0, 1] == pytest.approx(closed_form(*g), rel=1e-9)
    assert m[0, 1] == m[1, 0]  # symmetric by construction
    # Self: two-wire line L' = (μ0/π) ln(d/GMR), GMR = r e^(−1/4).
    # Source: Grover, Inductance Calculations (1946), GMD of a circle (from memory).
    d = float(np.hypot(*np.subtract(g[0], g[1])))
    assert m[0, 0] == pytest.approx(MU0 / np.pi * np.log(d / (0.005 * np.exp(-0.25))),
                                    rel=1e-12)


def test_gmr_of_solid_round_conductor():
    # Source: Grover, Inductance Calculations (1946): GMR of a circular area = 0.7788 r
    # (from memory).
    assert pytest.approx(0.7788, abs=5e-5) == GMR_SOLID


def test_parallel_conductors_share_loop_weight_and_pe_is_left_out():
    cons = tuple(Conductor(n, "F", ph, 40.0 * k, 0.0, 20.0) for k, (n, ph) in enumerate(
        [("a1", "L1"), ("a2", "L1"), ("b", "L2"), ("c", "L3"), ("pe", "PE")]))
    loops = layout_loops(Layout(circuits=(Circuit("F", "ac3", 10.0),), conductors=cons))
    assert loops.names == ("F:L1/L3", "F:L2/L3")
    np.testing.assert_array_equal(loops.weights, [[0.5, 0.5, 0, -1, 0], [0, 0, 1, -1, 0]])


coord = st.floats(-500.0, 500.0, allow_nan=False)


@settings(max_examples=30, deadline=None, derandomize=True)
@given(st.lists(st.tuples(coord, coord), min_size=6, max_size=6, unique=True))
def test_loop_matrix_is_symmetric_positive_definite_and_rigid(points):
    xy = np.array(points)
    dist = np.hypot(*(xy[:, None, :] - xy[None, :, :]).transpose(2, 0, 1))
    np.fill_diagonal(dist, np.inf)
    assume(dist.min() >= 12.0)  # conductors of 10 mm must not overlap
    phases = [("F", "L1"), ("F", "L2"), ("F", "L3"), ("F", "N"), ("V", "a"), ("V", "b")]
    cons = tuple(Conductor(f"c{k}", c, ph, x, y, 10.0) for k, ((c, ph), (x, y))
                 in enumerate(zip(phases, points, strict=True)))
    lay = Layout(circuits=(Circuit("F", "ac3", 1.0), Circuit("V", "signal")), conductors=cons)
    _, m = loop_inductance_matrix(lay)
    np.testing.assert_array_equal(m, m.T)
    # magnetic energy ½ iᵀ M i > 0 for any loop currents (common practice: passivity)
    assert np.linalg.eigvalsh(m).min() > 0
    # rotation by 90° (exact in floats) and translation leave every inductance unchanged
    moved = lay.with_conductors([c.moved(-c.y_mm + 123.0, c.x_mm - 45.0) for c in cons])
    np.testing.assert_allclose(loop_inductance_matrix(moved)[1], m, rtol=1e-9, atol=1e-18)


@pytest.mark.parametrize("ratio", [1e2, 1e3, 1e4, 1e5])
def test_grover_tends_to_long_run_limit(ratio):
    d = 0.05
    l = ratio * d  # noqa: E741
    # Source: Grover, Inductance Calculations (1946): for l ≫ d,
    # M → (μ0 l / 2π)(ln(2l/d) − 1) (from memory).
    limit = MU0 * l / (2 * np.pi) * (np.log(2 * l / d) - 1.0)
    got = float(grover_mutual_finite(l, d))
    # the next term is + (μ0 l / 2π) · d/l
    assert abs(got - limit) / limit < 1.01 / ratio / (np.log(2 * ratio) - 1.0)
    assert got - limit == pytest.approx(MU0 / (2 * np.pi) * d, rel=0.02)


@pytest.mark.parametrize("l,d", [(1.0, 0.1), (0.3, 0.3), (2.0, 0.02), (0.05, 1.0)])
def test_grover_matches_numerical_neumann_integral(l, d):  # noqa: E741
    # Source: the Neumann double integral evaluated by scipy.integrate.dblquad.
    assert float(grover_mutual_finite(l, d)) == pytest.approx(neumann_mutual(l, d),
                                                              rel=1e-8)


def test_grover_broadcasts():
    out = grover_mutual_finite(np.array([[1.0], [2.0]]), np.array([0.1, 0.2, 0.3]))
    assert out.shape == (2, 3)
    assert np.all(np.diff(out, axis=1) < 0)  # farther apart, less mutual
