"""The closed curve at distance d outside the tray envelope, its field maximum, and clearance.

The curve is the set of points at exactly distance d from the envelope rectangle: four
straight sides joined by four quarter circles (SPEC: "stray field at distance d"). It is
parametrised by arc length s, counter-clockwise from the lower-left end of the bottom side.
All lengths here are metres and fields tesla.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq, minimize_scalar

from trayadvisor.field import phasor_field, resultant_rms

Envelope = tuple[float, float, float, float]  # (xmin, ymin, xmax, ymax), m


def contour_length(env: Envelope, d: float) -> float:
    """Perimeter of the offset curve: 2W + 2H + 2πd (m)."""
    x0, y0, x1, y1 = env
    return 2.0 * (x1 - x0) + 2.0 * (y1 - y0) + 2.0 * np.pi * d


def offset_points(env: Envelope, d: float, s: np.ndarray) -> np.ndarray:
    """Points of the offset curve at arc-length parameters ``s`` (any real; taken modulo L).

    Parameters
    ----------
    env : (xmin, ymin, xmax, ymax), m
    d : float
        Distance outside the envelope, m (>= 0).
    s : (k,) float
        Arc-length parameters, m.

    Returns
    -------
    (k, 2) float, m.
    """
    x0, y0, x1, y1 = env
    w, h = x1 - x0, y1 - y0
    q = 0.5 * np.pi * d
    lengths = np.array([w, q, h, q, w, q, h, q])
    bounds = np.concatenate([[0.0], np.cumsum(lengths)])
    total = bounds[-1]
    s = np.asarray(s, dtype=float).reshape(-1)
    s = np.mod(s, total) if total > 0 else np.zeros_like(s)
    seg = np.clip(np.searchsorted(bounds, s, side="right") - 1, 0, 7)
    t = s - bounds[seg]
    # straight sides: start point and direction; arcs: centre and start angle
    sx = np.array([x0, x1, x1 + d, x1, x1, x0, x0 - d, x0])
    sy = np.array([y0 - d, y0, y0, y1, y1 + d, y1, y1, y0])
    ux = np.array([1.0, 0.0, 0.0, 0.0, -1.0, 0.0, 0.0, 0.0])
    uy = np.array([0.0, 0.0, 1.0, 0.0, 0.0, 0.0, -1.0, 0.0])
    theta0 = np.array([0.0, -0.5, 0.0, 0.0, 0.0, 0.5, 0.0, 1.0]) * np.pi
    is_arc = (seg % 2) == 1
    out = np.empty((s.size, 2))
    out[:, 0] = sx[seg] + ux[seg] * t
    out[:, 1] = sy[seg] + uy[seg] * t
    if d > 0 and np.any(is_arc):
        th = theta0[seg[is_arc]] + t[is_arc] / d
        out[is_arc, 0] = sx[seg[is_arc]] + d * np.cos(th)
        out[is_arc, 1] = sy[seg[is_arc]] + d * np.sin(th)
    return out


def default_samples(env: Envelope, d: float, min_feature: float) -> int:
    """Samples on the curve: spacing a quarter of the finest feature the field can have."""
    h = max(d, min_feature, 1e-3)
    n = int(np.ceil(4.0 * contour_length(env, d) / h))
    return int(np.clip(n, 360, 8192))


@dataclass(frozen=True)
class StrayField:
    """The field on the curve at distance d and its refined maximum."""

    distance_m: float
    max_T: float
    max_s_m: float
    max_xy_m: np.ndarray  # (2,)
    s_m: np.ndarray  # (k,) sample parameters
    xy_m: np.ndarray  # (k, 2)
    resultant_T: np.ndarray  # (k,) resultant RMS at the samples


def refine_maximum(f: Callable[[np.ndarray], np.ndarray], s: np.ndarray, values: np.ndarray,
                   period: float, candidates: int = 4, xtol: float = 1e-9
                   ) -> tuple[float, float]:
    """Locate the maximum of a smooth periodic function sampled at ``s``.

    The largest local maxima of the samples (up to ``candidates`` within 20 % of the top) are
    each refined by bounded Brent search between their neighbouring samples.

    Returns
    -------
    (s_at_max, value)
    """
    k = values.size
    if k == 0:
        return 0.0, 0.0
    left, right = np.roll(values, 1), np.roll(values, -1)
    peaks = np.nonzero((values >= left) & (values >= right))[0]
    if peaks.size == 0:
        peaks = np.array([int(np.argmax(values))])
    peaks = peaks[np.argsort(values[peaks])[::-1][:candidates]]
    peaks = peaks[values[peaks] >= 0.8 * values[peaks[0]]]
    best_s, best_v = float(s[peaks[0]]), float(values[peaks[0]])
    ds = period / k
    for i in peaks:
        res = minimize_scalar(lambda u: -float(f(np.array([u]))[0]),
                              bounds=(s[i] - ds, s[i] + ds), method="bounded",
                              options={"xatol": max(xtol, 1e-12 * period)})
        if -res.fun > best_v:
            best_s, best_v = float(res.x), float(-res.fun)
    return float(np.mod(best_s, period)), best_v


def stray_field(src_xy: np.ndarray, radius: np.ndarray, currents: np.ndarray, env: Envelope,
                d: float, samples: int | None = None, refine: bool = True) -> StrayField:
    """Maximum resultant RMS flux density on the curve at distance ``d`` outside ``env``.

    Parameters
    ----------
    src_xy, radius, currents
        As for :func:`trayadvisor.field.phasor_field` (m, m, A).
    env : (xmin, ymin, xmax, ymax), m
    d : float, m
    samples : int, optional
        Number of uniform arc-length samples before refinement (default: a quarter of the
        finest feature size, 360 to 8192).
    refine : bool
        Refine the sampled maximum by bounded Brent search (to far better than 0.1 %).
    """
    min_feature = float(np.min(2 * radius)) if np.size(radius) else 1e-3
    length = contour_length(env, d)
    k = samples or default_samples(env, d, min_feature)
    s = np.arange(k) * (length / k)
    xy = offset_points(env, d, s)

    def f(u: np.ndarray) -> np.ndarray:
        return resultant_rms(phasor_field(src_xy, radius, currents, offset_points(env, d, u)))

    values = resultant_rms(phasor_field(src_xy, radius, currents, xy))
    if refine and length > 0:
        s_max, v_max = refine_maximum(f, s, values, length)
    else:
        i = int(np.argmax(values))
        s_max, v_max = float(s[i]), float(values[i])
    return StrayField(d, v_max, s_max, offset_points(env, d, np.array([s_max]))[0], s, xy,
                      values)


def clearance(src_xy: np.ndarray, radius: np.ndarray, currents: np.ndarray, env: Envelope,
              limit_T: float, d_max: float = 100.0, rtol: float = 1e-4) -> float:
    """Smallest distance beyond which the stray field stays below ``limit_T``.

    The stray field is scanned on a log grid from 1 mm to ``d_max``; the outermost crossing
    of the limit is then located by Brent's method. Returns 0.0 when the field is below the
    limit even on the envelope itself, and ``inf`` when it is still above at ``d_max``.
    """
    def g(d: float) -> float:
        return stray_field(src_xy, radius, currents, env, d).max_T - limit_T

    grid = np.concatenate([[0.0], np.geomspace(1e-3, d_max, 36)])
    vals = np.array([g(d) for d in grid])
    above = np.nonzero(vals > 0)[0]
    if above.size == 0:
        return 0.0
    i = int(above[-1])
    if i == grid.size - 1:
        return float("inf")
    return float(brentq(g, grid[i], grid[i + 1], rtol=rtol, xtol=1e-6))
