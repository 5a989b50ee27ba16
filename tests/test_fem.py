"""The finite-element reaction of plates against closed forms and an independent Fourier
solution (the first step of steel and aluminium in the section; see docs/method.md).

Sources:
- A line current above a permeable half-space (μr): above, the field of the current and of
  an image current (μr − 1)/(μr + 1)·I at the mirror point; inside, H of a current
  2/(μr + 1)·I at the source, B = μ0 μr H (image method, any electromagnetics text, e.g.
  Jackson, *Classical Electrodynamics*, 3rd ed., §5.13 problem; from memory). A go/return
  pair is used so that the finite slab of the model differs from the half-space only by
  its far edges (the error then falls as 1/size²).
- A conducting, non-magnetic sheet of thickness d: each Fourier mode e^{ikx} of the
  source's field is transmitted by 1/(cosh γd + ½(γ/k + k/γ) sinh γd), γ² = k² + jωμ0σ
  (shielding by a conducting plate, from memory; its thin-sheet limit
  1/(1 + jωμ0σd/(2k)) is derived from the jump condition in the comment below). The
  integral over k is done here with scipy.integrate.quad, independently of the product.
- Reciprocity of linear media: the reaction potential of source j at source i equals that
  of source i at source j (common practice).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from tests.references import MU0
from trayadvisor.fem import Plate, PlateSolver

K = MU0 / (2 * math.pi)
PAIR = np.array([[-0.05, 0.05], [0.05, 0.05]])
PAIR_I = np.array([1.0, -1.0])


def b_line(i: float, xs: float, ys: float, p: np.ndarray) -> np.ndarray:
    dx, dy = p[0] - xs, p[1] - ys
    r2 = dx * dx + dy * dy
    return np.array([-K * i * dy / r2, K * i * dx / r2])


@pytest.mark.parametrize("mu_r", [4.0, 100.0])
def test_pair_above_a_permeable_slab_matches_the_image_method(mu_r):
    solver = PlateSolver([Plate(-4.0, -4.0, 4.0, 0.0, mu_r, 0.0)], 50.0,
                         (-0.3, -0.3, 0.3, 0.3), near_h_m=0.02)
    pts = np.array([[0.2, 0.1], [0.0, 0.3], [0.1, -0.1], [-0.2, -0.2]])
    b = np.einsum("k,kmc->mc", PAIR_I, solver.field(PAIR, pts))
    f = (mu_r - 1) / (mu_r + 1)
    for p, got in zip(pts, b, strict=True):
        if p[1] > 0:
            want = sum(b_line(i, x, y, p) + b_line(f * i, x, -y, p)
                       for (x, y), i in zip(PAIR, PAIR_I, strict=True))
        else:
            want = sum(mu_r * b_line(2 / (mu_r + 1) * i, x, y, p)
                       for (x, y), i in zip(PAIR, PAIR_I, strict=True))
        assert np.linalg.norm(got - want) <= 5e-3 * np.linalg.norm(want)


def test_an_air_plate_has_no_reaction():
    # limiting case: μr = 1 and σ = 0 is free space, whatever the mesh
    solver = PlateSolver([Plate(-0.5, -0.2, 0.5, -0.1, 1.0, 0.0)], 50.0,
                         (-0.3, -0.3, 0.3, 0.3), near_h_m=0.03)
    a_r = solver.reaction(PAIR)
    assert np.abs(a_r).max() == 0.0


def test_conducting_sheet_matches_an_independent_fourier_solution():
    sigma, d, f = 3.5e7, 2e-3, 50.0  # aluminium, typical value recalled from memory
    w = 2 * math.pi * f
    src = np.array([[-0.05, 0.1], [0.05, 0.1]])
    solver = PlateSolver([Plate(-1.2, -d / 2, 1.2, d / 2, 1.0, sigma)], f,
                         (-0.3, -0.3, 0.3, 0.3), near_h_m=0.02)

    def t(k: float) -> complex:
        g = np.sqrt(k * k + 1j * w * MU0 * sigma)
        return 1.0 / (np.cosh(g * d) + 0.5 * (g / k + k / g) * np.sinh(g * d))

    # thin-sheet check of the transmission: jump of H_x by the sheet current −jωσd·A
    # gives 1/(1 + jωμ0σd/(2k)) (derived by hand; the exact form reduces to it)
    for k in (5.0, 20.0):
        thin = 1.0 / (1.0 + 1j * w * MU0 * sigma * d / (2 * k))
        assert abs(t(k) * np.exp(k * d) - thin) < 0.03 * abs(thin)

    def fourier(p: np.ndarray) -> np.ndarray:
        out = np.zeros(2, dtype=complex)
        for (xs, h), i in zip(src, PAIR_I, strict=True):
            gap = (h - d / 2) - (p[1] + d / 2)  # free distance: source to sheet to point
            for comp, trig in ((0, math.cos), (1, math.sin)):
                def fun(k: float, trig=trig, xs=xs, gap=gap) -> complex:
                    return trig(k * (p[0] - xs)) * math.exp(-k * gap) * t(k)
                re = quad(lambda k: fun(k).real, 1e-12, np.inf, limit=400)[0]
                im = quad(lambda k: fun(k).imag, 1e-12, np.inf, limit=400)[0]
                out[comp] += K * i * (re + 1j * im)
        return out

    pts = np.array([[0.0, -0.1], [0.2, -0.2]])
    b = np.einsum("k,kmc->mc", PAIR_I, solver.field(src, pts))
    for p, got in zip(pts, b, strict=True):
        want = fourier(p)
        free = sum(b_line(i, x, y, p) for (x, y), i in zip(src, PAIR_I, strict=True))
        assert np.linalg.norm(got - want) <= 1e-2 * np.linalg.norm(want)
        assert np.linalg.norm(want) < 0.6 * np.linalg.norm(free)  # the sheet shields


def test_reaction_is_reciprocal():
    solver = PlateSolver([Plate(-0.4, -0.05, 0.4, -0.048, 200.0, 5e6)], 50.0,
                         (-0.3, -0.3, 0.3, 0.3), near_h_m=0.02)
    xy = np.array([[-0.1, 0.02], [0.05, 0.03], [0.2, 0.08]])
    a_r = solver.reaction(xy)
    m = solver.basis.probes(xy.T) @ a_r  # A_r of source j at source i
    # symmetric to the discretisation (the load of an analytic source is integrated by
    # quadrature on the plate's elements): 3e-5 observed
    assert np.abs(m - m.T).max() <= 1e-4 * np.abs(m).max()
    assert np.abs(m.imag).max() > 0.1 * np.abs(m).max()  # the eddy currents act


def test_eddy_currents_of_an_insulated_plate_sum_to_zero():
    """A single line current beside a steel strip: the strip's eddy current
    −jωσ(A_r + A0 − c) integrates to zero over it (it is insulated, in 2D a conductor of
    its own); ∫σ A0 over the strip by scipy.integrate.dblquad, apart from the product."""
    from scipy.integrate import dblquad

    sigma, plate = 5e6, Plate(-0.3, -0.06, 0.3, -0.056, 200.0, 5e6)
    solver = PlateSolver([plate], 50.0, (-0.3, -0.3, 0.3, 0.3), near_h_m=0.02)
    src = np.array([[0.12, 0.03]])
    a_r = solver.reaction(src)[:, 0]
    g, _ = dblquad(lambda y, x: -0.5 * K * math.log((x - 0.12) ** 2 + (y - 0.03) ** 2),
                   plate.x0, plate.x1, plate.y0, plate.y1, epsrel=1e-10)
    total = solver._b[0] @ a_r + sigma * g - solver._s[0] * solver._c[0, 0]
    scale = sigma * abs(g)
    assert abs(total) <= 1e-6 * scale
    assert abs(solver._c[0, 0]) > 0  # the plate floats at a potential of its own


def test_touching_plates_share_their_corner_and_solve():
    """A tray's bottom and side meet at a corner: the mesh merges the shared vertex (a
    duplicate left in no triangle made the system singular); the reaction of a steel
    corner then equals the reaction found with the corner's plates ordered the other way."""
    bottom = Plate(-0.002, -0.002, 0.302, 0.0, 200.0, 5e6)
    side = Plate(-0.002, 0.0, 0.0, 0.1, 200.0, 5e6)
    src = np.array([[0.05, 0.03]])
    pts = np.array([[0.15, -0.4], [-0.4, 0.05]])
    one = PlateSolver([bottom, side], 50.0, (-0.05, -0.05, 0.35, 0.15), near_h_m=0.01)
    two = PlateSolver([side, bottom], 50.0, (-0.05, -0.05, 0.35, 0.15), near_h_m=0.01)
    b1, b2 = one.field(src, pts)[0], two.field(src, pts)[0]
    assert np.all(np.isfinite(b1))
    assert np.linalg.norm(b1 - b2) <= 1e-3 * np.linalg.norm(b1)


def test_unit_tables_superpose_and_dc_sees_only_the_permeability():
    """Σ I_k G_k of the per-source tables equals one solve of the combined load (a separate
    assembly path); at DC a conducting plate acts as its permeability alone (no eddy
    currents at ω = 0: limiting case); the reaction potentials between conductors are
    symmetric at every frequency (reciprocity, to the discretisation: the asymmetry falls
    from 4e-4 to 1e-5 as the near element size goes from 40 to 10 mm)."""
    from trayadvisor.fem import PlateReaction

    steel = Plate(-0.3, -0.004, 0.3, -0.002, 200.0, 5e6)
    iron = Plate(-0.3, -0.004, 0.3, -0.002, 200.0, 0.0)
    xy = np.array([[-0.1, 0.02], [0.0, 0.02], [0.1, 0.02], [0.05, 0.05]])
    pts = np.array([[0.0, -0.5], [0.4, 0.1]])
    extent = (-0.3, -0.3, 0.3, 0.3)
    freqs = np.array([0.0, 50.0, 150.0])
    reaction = PlateReaction([steel], extent)
    g = reaction.unit_fields(xy, freqs, pts)  # (3, 4, 2, 2): the plates' part
    w = np.array([1.0, -0.4, -0.6, 0.25])  # real weights: one instant of the currents
    solver = reaction.solver(50.0)
    combined = solver.reaction_field(solver.reaction(xy, weights=w[:, None]), pts)[0]
    assert np.allclose(np.einsum("k,kmc->mc", w, g[1]), combined, rtol=1e-9,
                       atol=1e-12 * np.abs(combined).max())
    # the arrangement's field through the engine's interface: the same sum
    assert np.allclose(reaction.field(xy, w[None].astype(complex), freqs[1:2], pts)[0],
                       combined, rtol=1e-9, atol=1e-12 * np.abs(combined).max())
    dc_iron = PlateReaction([iron], extent)
    assert np.allclose(g[0], dc_iron.unit_fields(xy, freqs[:1], pts)[0], rtol=1e-6,
                       atol=1e-15)
    for f in freqs:
        s = reaction.solver(f)
        m = s.probes(xy) @ s.reaction(xy)
        assert np.abs(m - m.T).max() <= 3e-4 * np.abs(m).max()


def test_skin_depths_of_the_typical_materials():
    from trayadvisor.fem import PLATE_MATERIALS, skin_depth_m

    # Source: δ = sqrt(2/(ωμσ)) (any electromagnetics text); textbook values at 50 Hz
    # (from memory): copper about 9.3 mm, aluminium about 12 mm, mild steel a few mm.
    cu = skin_depth_m(*PLATE_MATERIALS["copper"], 50.0)
    al = skin_depth_m(*PLATE_MATERIALS["aluminium"], 50.0)
    st = skin_depth_m(*PLATE_MATERIALS["steel"], 50.0)
    assert cu == pytest.approx(9.35e-3, rel=0.01)
    assert 11e-3 < al < 13e-3 and 1e-3 < st < 4e-3
    assert skin_depth_m(200.0, 5e6, 0.0) == math.inf
    # δ ∝ f^(-1/2): four times the frequency halves it
    assert skin_depth_m(1.0, 5.8e7, 200.0) == pytest.approx(cu / 2, rel=1e-12)
