"""View settings, limit choice, keymap file and the staged field computation (no textual)."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import pytest

from trayadvisor.analysis.summary import field_summary
from trayadvisor.layoutfile import demo_path
from trayadvisor.layoutfile.reader import read_layout
from trayadvisor.tui.logic.compute import Failed, LimitDone, SummaryDone, run_analysis
from trayadvisor.tui.logic.keymap import KeymapError, load_keymap
from trayadvisor.tui.logic.settings import (
    TYPED_LIMIT,
    ViewSettings,
    available_limits,
    chosen_limit,
)

DEMO = read_layout(demo_path())


def test_limits_offered_and_the_default_choice() -> None:
    limits = available_limits(DEMO, typed_uT=0.4)
    names = [lim.name for lim in limits]
    on_curve = [lim.name for lim in DEMO.limits if not lim.places]
    at_places = [lim.name for lim in DEMO.limits if lim.places]
    assert on_curve and at_places  # the demo has both, so the checks below bite
    assert set(on_curve) <= set(names) and names[-1] == TYPED_LIMIT
    assert not set(at_places) & set(names)  # judged at their places, not on the curve
    assert chosen_limit(ViewSettings(), limits, DEMO).name == TYPED_LIMIT
    own = available_limits(DEMO)
    assert chosen_limit(ViewSettings(), own, DEMO).name == on_curve[0]
    pick = own[0].name
    assert chosen_limit(ViewSettings(limit_name=pick), own, DEMO).name == pick


def test_settings_reject_bad_values() -> None:
    for bad in ({"distance_mm": -1.0}, {"fine_step_mm": 0.0}, {"typed_limit_uT": float("nan")},
                {"map_style": "rainbow"}):
        with pytest.raises(ValueError):
            ViewSettings(**bad)


def test_staged_results_equal_the_cli_figures() -> None:
    out = []
    lim = next(lim for lim in DEMO.limits if not lim.places)
    run_analysis(DEMO, 500.0, [lim], out.append)
    assert isinstance(out[0], SummaryDone) and isinstance(out[1], LimitDone)
    cli = field_summary(DEMO, distance_mm=500.0)  # what `trayadvisor field` shows
    assert out[0].summary.max_resultant_uT == cli.max_resultant_uT
    assert out[0].summary.far_field_order == cli.far_field_order
    assert out[0].summary.places == cli.places  # every place with its bound limits
    assert any(p.limits for p in cli.places)
    want = next(f for f in cli.limits if f.name == lim.name)
    assert out[1].figure == want


def test_staged_results_stop_when_cancelled_and_report_failures() -> None:
    out = []
    run_analysis(DEMO, 500.0, list(DEMO.limits), out.append, cancelled=lambda: True)
    assert out == []
    broken = replace(DEMO, conductors=(replace(DEMO.conductors[0], diameter_mm="x"),))
    run_analysis(broken, 500.0, [], out.append)
    assert len(out) == 1 and isinstance(out[0], Failed)


def test_keymap_file(tmp_path: Path) -> None:
    p = tmp_path / "k.toml"
    assert load_keymap(p) == {}
    p.write_text('[keys]\n"file.save" = "f2"\n', encoding="utf-8")
    assert load_keymap(p, known={"file.save"}) == {"file.save": "f2"}
    with pytest.raises(KeymapError, match="unknown binding id"):
        load_keymap(p, known={"edit.add"})
    p.write_text('[keys]\n"file.save" = 3\n', encoding="utf-8")
    with pytest.raises(KeymapError, match="must be a string"):
        load_keymap(p)
