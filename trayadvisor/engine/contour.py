"""The closed curve at distance d outside the tray envelope, its field maximum, and clearance.

The curve is the set of points at exactly distance d from the envelope rectangle: four
straight sides joined by four quarter circles ("stray field at distance d",
docs/conventions.md). It is
parametrised by arc length s, counter-clockwise from the lower-left end of the bottom side.
All lengths here are metres and fields tesla.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from trayadvisor.engine.currents import Reaction, total_field
from trayadvisor.engine.field import resultant_rms
from trayadvisor.engine.measures import Measure

Envelope = tuple[float, float, float, float]  # (xmin, ymin, xmax, ymax), m

#: Distance d outside the tray envelope used when none is given, mm.
DEFAULT_DISTANCE_MM = 500.0

#: Points per bracket half-width in one zoom step of :func:`refine_maximum` (the bracket
#: shrinks by this factor per step, one vectorised field evaluation per step).
_ZOOM = 16
#: A sampled local maximum is refined when within this fraction of the best sample.
_PEAK_MARGIN = 0.2


def contour_length(env: Envelope, d: float) -> float:
    """Perimeter of the offset curve.

    Parameters
    ----------
    env : (xmin, ymin, xmax, ymax), m
    d : float
        Distance outside the envelope, m.

    Returns
    -------
    float
        2W + 2H + 2πd, m (W, H the envelope's width and height).
    """
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
        Arc-length parameters, m, counter-clockwise from (xmin, ymin − d).

    Returns
    -------
    (k, 2) float
        Points, m, each at distance exactly ``d`` from the rectangle.

    Notes
    -----
    Eight pieces in order: bottom side, lower-right quarter circle (centre (xmax, ymin)),
    right side, upper-right arc, top side, upper-left arc, left side, lower-left arc. On a
    side the point is the start plus ``t`` along the side; on an arc around corner c it is
    ``c + d (cos θ, sin θ)`` with ``θ = θ0 + t/d``.
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
    """Uniform samples on the curve before refinement.

    Parameters
    ----------
    env : (xmin, ymin, xmax, ymax), m
    d : float
        Distance outside the envelope, m.
    min_feature : float
        Smallest conductor diameter, m.

    Returns
    -------
    int
        Samples spaced a quarter of ρ = d + min_feature/2 (at least 1 mm), 360 to 8192.

    Notes
    -----
    Every conductor lies inside the envelope, so no conductor axis comes closer to the curve
    than ρ. A peak of the field along the curve is then at least ~3ρ wide (the resultant of a
    line current at closest distance ρ halves at ±√3 ρ), so a spacing of ρ/4 puts a dozen
    samples on every peak and the best sample is within ~1 % of the true maximum, which
    :func:`refine_maximum` then locates.
    """
    rho = max(d + 0.5 * min_feature, 1e-3)
    n = int(np.ceil(4.0 * contour_length(env, d) / rho))
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
    """Locate the maximum of a continuous periodic function sampled at ``s``.

    Parameters
    ----------
    f : callable, (k,) float -> (k,) float
        The function, vectorised over its argument (any real; periodic with ``period``).
    s : (k,) float
        Sample parameters, increasing, within one period.
    values : (k,) float
        ``f(s)``.
    period : float
        Period of ``f``.
    candidates : int
        Largest sampled local maxima refined (those within 20 % of the best sample).
    xtol : float
        Bracket half-width at which the refinement stops (same unit as ``s``).

    Returns
    -------
    (s_at_max, value) : (float, float)
        Location (in [0, period)) and value; the value is never below ``values.max()``.

    Notes
    -----
    Each candidate's maximum lies between its neighbouring samples. All brackets are zoomed
    together: per step, ``2·16 + 1`` equally spaced points across every bracket in one call
    of ``f``, and the new bracket is one spacing either side of the best point, so the
    bracket shrinks 16-fold per step (about six steps from the sample spacing to 1e-9 m).
    The zoom needs no derivative, so a maximum at a kink (a corner of the curve at d = 0) is
    found as well as a smooth one; near a smooth maximum the value error after a bracket of
    half-width δ is ½|f''|δ², i.e. at rounding level.

    References
    ----------
    A derivative-free grid search with successive bracket reduction; compare the bracketing
    searches of W. H. Press et al., *Numerical Recipes*, 3rd ed., ch. 10 (from memory).
    """
    s = np.asarray(s, dtype=float).reshape(-1)
    values = np.asarray(values, dtype=float).reshape(-1)
    k = values.size
    if k == 0:
        return 0.0, 0.0
    top = int(np.argmax(values))
    best_s, best_v = float(s[top]), float(values[top])
    if k < 3 or not period > 0 or not np.isfinite(best_v) or best_v <= 0.0:
        return float(np.mod(best_s, period)) if period > 0 else best_s, best_v
    left, right = np.roll(values, 1), np.roll(values, -1)
    peaks = np.nonzero((values >= left) & (values >= right))[0]
    peaks = peaks[np.argsort(values[peaks], kind="stable")[::-1][: max(1, candidates)]]
    peaks = peaks[values[peaks] >= (1.0 - _PEAK_MARGIN) * best_v]
    s_prev = np.where(peaks > 0, s[peaks - 1], s[-1] - period)
    s_next = np.where(peaks < k - 1, s[(peaks + 1) % k], s[0] + period)
    lo, hi = s_prev, s_next
    grid = np.linspace(0.0, 1.0, 2 * _ZOOM + 1)
    tol = max(xtol, 1e-13 * period)
    rows = np.arange(peaks.size)
    for _ in range(64):
        u = lo[:, None] + (hi - lo)[:, None] * grid[None, :]  # (nc, 2J+1)
        v = np.asarray(f(u.ravel()), dtype=float).reshape(u.shape)
        j = np.argmax(v, axis=1)
        centre = u[rows, j]
        i = int(np.argmax(v[rows, j]))
        if v[i, j[i]] > best_v:
            best_s, best_v = float(centre[i]), float(v[i, j[i]])
        step = (hi - lo) / (2 * _ZOOM)
        if step.max() <= tol:
            break
        lo, hi = centre - step, centre + step
    return float(np.mod(best_s, period)), best_v


def stray_field(src_xy: np.ndarray, radius: np.ndarray, currents: np.ndarray, env: Envelope,
                d: float, samples: int | None = None, refine: bool = True,
                measure: Measure | None = None, reaction: Reaction | None = None,
                frequency_hz: np.ndarray | None = None) -> StrayField:
    """Maximum resultant RMS flux density on the curve at distance ``d`` outside ``env``.

    Parameters
    ----------
    src_xy : (n, 2) float
        Conductor centres, m.
    radius : (n,) float
        Conductor radii, m.
    currents : (H, n) or (n,) complex
        RMS current phasors, A.
    env : (xmin, ymin, xmax, ymax), m
        The tray envelope; every conductor must lie inside it.
    d : float
        Distance outside the envelope, m (>= 0).
    samples : int, optional
        Number of uniform arc-length samples before refinement (default
        :func:`default_samples`).
    refine : bool
        Locate the true maximum between the samples (:func:`refine_maximum`).
    measure : Measure, optional
        What is maximised (default: the resultant of every row of ``currents``, T); e.g. an
        exposure index (:mod:`trayadvisor.engine.measures`). ``max_T`` and ``resultant_T``
        are then in the measure's unit.
    reaction, frequency_hz : Reaction and (H,) float, optional
        Plates near the conductors and the frequency of each current row: their field is
        added, and points of the curve inside a plate are left out (value 0).

    Returns
    -------
    StrayField
        The refined maximum (T), where it is (arc length and point, m), and the samples.

    Notes
    -----
    The stray field at distance d (docs/conventions.md) is the maximum over the curve of
    B_R = sqrt(Σ_h |Bx_h|² + |By_h|²) (IEC 61786-1 resultant, harmonics root-sum-square).
    """
    if not (d >= 0.0 and math.isfinite(d)):
        raise ValueError(f"distance must be finite and >= 0, got {d!r}")
    radius = np.asarray(radius, dtype=float).reshape(-1)
    min_feature = float(np.min(2.0 * radius)) if radius.size else 1e-3
    length = contour_length(env, d)
    k = samples or default_samples(env, d, min_feature)
    s = np.arange(k) * (length / k)
    xy = offset_points(env, d, s)

    fold = resultant_rms if measure is None else measure

    def value(pts: np.ndarray) -> np.ndarray:
        v = fold(total_field(src_xy, radius, currents, pts, reaction, frequency_hz))
        return v if reaction is None else np.where(reaction.inside(pts), 0.0, v)

    def f(u: np.ndarray) -> np.ndarray:
        return value(offset_points(env, d, u))

    values = value(xy)
    if refine and length > 0:
        s_max, v_max = refine_maximum(f, s, values, length, candidates=8)
    else:
        i = int(np.argmax(values))
        s_max, v_max = float(s[i]), float(values[i])
    return StrayField(d, v_max, s_max, offset_points(env, d, np.array([s_max]))[0], s, xy,
                      values)


def clearance(src_xy: np.ndarray, radius: np.ndarray, currents: np.ndarray, env: Envelope,
              limit_T: float, d_max: float = 100.0, rtol: float = 1e-4,
              measure: Measure | None = None, reaction: Reaction | None = None,
              frequency_hz: np.ndarray | None = None) -> float:
    """Smallest distance beyond which the stray field stays below ``limit_T``.

    Parameters
    ----------
    src_xy, radius, currents, env
        As for :func:`stray_field`.
    limit_T : float
        The limit, T (> 0).
    d_max : float
        Largest distance examined, m.
    rtol : float
        Relative accuracy of the returned distance.
    measure : Measure, optional
        What is compared with ``limit_T`` (default: the resultant, T); e.g. an exposure
        index with ``limit_T = 1``.
    reaction, frequency_hz : optional
        Plates, as for :func:`stray_field`. A plate outside the envelope is a source of its
        own (eddy currents, magnetisation): the field need not fall monotonically across
        it, and the distance returned is a crossing of the limit, the nearest one only
        when the field falls monotonically.

    Returns
    -------
    float
        Distance d, m, at which the stray field equals the limit; 0.0 when the field is at
        or below the limit on the envelope itself, ``inf`` when still above at ``d_max``.

    Notes
    -----
    Outside the envelope the field is source-free, so for every real current part
    Bx − iBy is an analytic function of z = x + iy and B_R² = Σ|Bx − iBy|² is subharmonic.
    It vanishes at infinity, so by the maximum principle its maximum over the region outside
    the curve at distance d is reached on that curve: the stray field decreases
    monotonically with d and the crossing of the limit is unique. It is found by Brent's
    method in t = log(d + e), e = half the envelope's smaller side (≥ 1 mm), where
    log B_R is nearly linear (slope −order of the far field), so few stray-field
    evaluations are needed: the envelope, d_max and typically 4–7 more.

    References
    ----------
    Maximum principle for subharmonic functions, e.g. T. Ransford, *Potential Theory in the
    Complex Plane*, Cambridge 1995, §2.3 (from memory); R. P. Brent, *Algorithms for
    Minimization without Derivatives*, 1973, ch. 4 (via scipy.optimize.brentq).
    """
    if not limit_T > 0.0:
        raise ValueError(f"limit must be > 0 T, got {limit_T!r}")
    # scipy.optimize costs about 0.3 s to import; only a clearance search needs it, so the
    # command line and the UI start without it.
    from scipy.optimize import brentq
    cache: dict[float, float] = {}

    def peak(d: float) -> float:
        d = max(float(d), 0.0)
        if d not in cache:
            cache[d] = stray_field(src_xy, radius, currents, env, d, measure=measure,
                                   reaction=reaction, frequency_hz=frequency_hz).max_T
        return cache[d]

    if peak(0.0) <= limit_T:
        return 0.0
    if peak(d_max) > limit_T:
        return math.inf
    x0, y0, x1, y1 = env
    e = max(0.5 * min(x1 - x0, y1 - y0), 1e-3)
    log_limit = math.log(limit_T)
    t_lo, t_hi = math.log(e), math.log(d_max + e)

    def g(t: float) -> float:
        d = 0.0 if t <= t_lo else (d_max if t >= t_hi else math.exp(t) - e)
        return math.log(max(peak(d), 1e-300)) - log_limit

    t = brentq(g, t_lo, t_hi, xtol=0.01 * rtol, rtol=4.0 * np.finfo(float).eps)
    return max(math.exp(t) - e, 0.0)
