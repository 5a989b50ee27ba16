"""How figures are written for people: zero up to rounding prints as 0, never -0.0."""

from __future__ import annotations

import math

import pytest

from trayadvisor.output import fmt_fixed
from trayadvisor.ranking import rank as rank_module


@pytest.mark.parametrize("value, want", [
    (-1e-14, "0"), (1.4e-13, "0"), (-0.04, "0"), (0.0, "0"), (-0.0, "0"),
    (0.05, "0.1"), (-0.06, "-0.1"), (12.345, "12.3"), (math.inf, "inf"),
    (-math.inf, "-inf"), (math.nan, "–")])
def test_fixed_figures_never_print_negative_zero(value, want):
    assert fmt_fixed(value) == want


def test_fixed_figures_keep_their_decimals():
    assert fmt_fixed(2.0, 2) == "2.00" and fmt_fixed(-0.004, 2) == "0"


def test_an_option_as_good_as_the_baseline_has_no_reduction():
    # The same field computed twice can differ in the last bits; that is no reduction.
    base = 3.2
    for noisy in (base * (1 + 1e-15), base * (1 - 1e-15)):
        assert rank_module._pct(base, noisy) == 0.0
        assert rank_module._db(base, noisy) == 0.0
    assert rank_module._pct(base, 1.6) == pytest.approx(50.0, rel=1e-12)
    assert rank_module._db(base, 1.6) == pytest.approx(20 * math.log10(2), rel=1e-12)
    assert rank_module._db(base, 0.0) == math.inf
