"""The Ranking and Coupling views' plain parts (no textual): parameters, rows, staleness,
worst-value markers. Reference values are the engines' own results and the exporter's
independent "moved" column."""

from __future__ import annotations

import csv
import io
import math
from dataclasses import replace
from pathlib import Path

import pytest

from trayadvisor.coupling import SharingError, coupling_summary
from trayadvisor.layoutfile import demo_path
from trayadvisor.layoutfile.reader import read_layout
from trayadvisor.model import Conductor
from trayadvisor.output.exports import result_csv
from trayadvisor.ranking import apply_option
from trayadvisor.ranking.rank import rank_layout
from trayadvisor.tui.logic.couplingtext import (
    WORST_EMF,
    WORST_IMBALANCE,
    WORST_SHARE,
    coupling_lines,
    victim_lines,
)
from trayadvisor.tui.logic.edits import move_conductor
from trayadvisor.tui.logic.ranktable import (
    RankParams,
    columns,
    fits,
    moved_count,
    objective_choices,
    option_cells,
    staleness,
    usable_params,
)

DEMO = read_layout(demo_path())
#: Six conductors, 90 distinct arrangements: ranked exactly in milliseconds.
SMALL = read_layout(Path(__file__).parents[2] / "layouts" / "two-sets-reversed.toml")


def test_rank_params_check_their_values() -> None:
    for bad in ({"top_k": 0}, {"top_k": 51}, {"budget_s": 0.0}, {"budget_s": math.inf},
                {"objective": "sideways"}, {"objective": "line:"}):
        with pytest.raises(ValueError):
            RankParams(**bad)
    assert RankParams(3, "contour").objective == "contour"  # explicit: the curve at d
    # the demo binds limits to places: the worst limit index comes first (the default)
    values = [v for _, v in objective_choices(DEMO)]
    assert values == ["limits", "contour", "line:QR-wall", "point:QR-desk"]
    assert [v for _, v in objective_choices(SMALL)] == ["contour"]
    gone = RankParams(3, "line:no-such-line", 2.0)
    assert usable_params(gone, DEMO) == RankParams(3, None, 2.0)
    assert usable_params(RankParams(3, "point:QR-desk"), DEMO).objective == "point:QR-desk"


def test_the_ranking_view_makes_the_call_the_rank_command_makes() -> None:
    # The same keyword arguments as `trayadvisor rank FILE --distance-mm 400 --top 3
    # --objective line:QR-wall --budget-s 2`; every option the view does not set is at the
    # value the command gives it when its flag is absent, i.e. rank_layout's default.
    import inspect

    from trayadvisor.cli import cmd_rank, parse_args

    view = RankParams(3, "line:QR-wall", 2.0).options(400.0)
    cli = cmd_rank.options(parse_args(["rank", "x.toml", "--distance-mm", "400", "--top", "3",
                                       "--objective", "line:QR-wall", "--budget-s", "2"]))
    defaults = {k: p.default for k, p in inspect.signature(rank_layout).parameters.items()}
    assert {k: cli[k] for k in view} == view
    assert {k: v for k, v in cli.items() if k not in view} == {
        k: defaults[k] for k in cli if k not in view}


def test_rows_carry_the_engine_figures_and_the_exporters_moves() -> None:
    r = rank_layout(SMALL, distance_mm=500.0, top_k=4)
    assert [c.label for c in columns(r)][:2] == ["#", "µT"]
    rows = list(csv.DictReader(io.StringIO(result_csv(r, SMALL))))   # reference: export
    for opt in r.options:
        cells = option_cells(r, opt)
        assert len(cells) == len(columns(r)) and cells[0] == str(opt.rank)
        # the engine's figure to one decimal; one that rounds to zero is "0", never "-0.0"
        assert float(cells[2]) == round(opt.reduction_pct, 1) and cells[2] != "-0.0"
        moved = sum(1 for row in rows if row["rank"] == str(opt.rank) and row["moved"] == "yes")
        assert moved_count(r, opt) == moved


def test_a_result_fits_while_only_positions_change() -> None:
    r = rank_layout(SMALL, distance_mm=500.0, top_k=2)
    opt = r.options[0]
    name = SMALL.conductors[0].name
    moved = move_conductor(SMALL, name, 5.0, 0.0)
    assert fits(opt, SMALL, SMALL) and fits(opt, SMALL, moved)
    assert staleness(r, SMALL, SMALL, None, 500.0) == ""
    assert "still apply" in staleness(r, SMALL, moved, None, 500.0)
    applied = apply_option(SMALL, r.options[1])
    assert staleness(r, SMALL, applied, None, 500.0) == "the open layout is option 2 (u undoes)"
    assert "d is now 300" in staleness(r, SMALL, SMALL, None, 300.0)
    assert staleness(r, SMALL, SMALL, "line:x", 300.0) == ""    # d does not enter a line
    c0 = SMALL.conductors[0]
    grown = SMALL.with_conductors([*SMALL.conductors,
                                   Conductor("extra", c0.circuit, c0.phase, 1e4, 0.0, 10.0)])
    assert not fits(opt, SMALL, grown)
    assert "r ranks again" in staleness(r, SMALL, grown, None, 500.0)
    heavier = replace(SMALL, circuits=tuple(replace(c, current_a=c.current_a * 2)
                                            for c in SMALL.circuits))
    assert not fits(opt, SMALL, heavier)                        # currents changed


def test_worst_values_are_marked_in_words() -> None:
    lines = coupling_lines(coupling_summary(DEMO))
    worst = [ln.text for ln in lines if ln.kind == "worst"]
    marked = [t for t in worst if "◀" in t]
    assert len(marked) == 2 and len(worst) == 5     # two table rows, three summary lines
    data = coupling_summary(DEMO).to_json()                     # reference: couple --json
    g = max(data["groups"], key=lambda g: g["imbalance_pct"])
    imb = next(t for t in marked if WORST_IMBALANCE in t)
    assert imb.split()[:2] == [g["circuit"], g["phase"]]
    assert f" imbalance {g['circuit']} {g['phase']} {g['imbalance_pct']:.1f} %" in worst
    size = {(g["circuit"], g["phase"]): len(g["conductors"]) for g in data["groups"]}
    top = max(data["sharing"], key=lambda c: c["share_pct"] * size[(c["circuit"], c["phase"])])
    share = next(t for t in marked if WORST_SHARE in t)
    assert share.split()[0] == top["conductor"]
    assert any(t.split()[:2] == ["share", top["conductor"]] for t in worst)
    assert worst[0].split()[:2] == ["EMF", data["victims"][0]["circuit"]]
    # 59 % where 50 % is even: the rating caution names the conductor.
    caution = [ln.text for ln in lines if "no ampacity check" in ln.text]
    assert len(caution) == 1 and top["conductor"] in caution[0]
    # One victim: nothing to compare, no marker; two unequal victims: the larger marked.
    one = victim_lines(data)
    assert not any(WORST_EMF in ln.text for ln in one)
    v = data["victims"][0]
    two = dict(data, victims=[v, dict(v, circuit="C8", induced_mV_per_m=2 * v[
        "induced_mV_per_m"])])
    marked = [ln.text for ln in victim_lines(two) if WORST_EMF in ln.text]
    assert len(marked) == 1 and marked[0].split()[0] == "C8"


def test_coinciding_conductors_give_a_message_not_numbers() -> None:
    # Two parallel conductors at one place: no sharing solution, so no table at all but one
    # line naming them (the view shows it in place of the figures).
    c = DEMO.conductors
    on_top = move_conductor(DEMO, c[0].name, c[1].x_mm - c[0].x_mm, c[1].y_mm - c[0].y_mm)
    with pytest.raises(SharingError) as err:
        coupling_summary(on_top)
    assert f"'{c[0].name}'" in str(err.value) and f"'{c[1].name}'" in str(err.value)


def test_a_zero_total_group_shows_its_circulating_current_not_a_share() -> None:
    # Two parallel neutrals of a balanced circuit: no share of a zero total, no "most
    # loaded" flag on them; the group line gives the circulating current in amperes.
    from trayadvisor.model import Circuit, Conductor, Layout

    cons = [Conductor(f"F-{ph}", "F", ph, x, 20.0, 30.0, 240.0, "copper")
            for ph, x in (("L1", 20.0), ("L2", 50.0), ("L3", 80.0), ("N", 110.0),
                          ("N", 170.0))]
    cons[3] = replace(cons[3], name="F-Na")
    cons[4] = replace(cons[4], name="F-Nb")
    lay = Layout(circuits=(Circuit("F", "ac3", 400.0),), conductors=tuple(cons))
    lines = coupling_lines(coupling_summary(lay))
    text = "\n".join(ln.text for ln in lines)
    assert "circ" in text and " A" in text and "e+" not in text
    assert all(WORST_SHARE not in ln.text for ln in lines if "F-N" in ln.text)
    assert "%" not in next(ln.text for ln in lines if ln.text.split()[:2] == ["F", "N"])


def test_field_readouts_say_which_currents_the_figures_use() -> None:
    from trayadvisor.analysis import field_summary
    from trayadvisor.tui.widgets.panels import readout_lines

    demo = read_layout(demo_path())

    def texts(layout, **kw) -> list[str]:
        return [t for t, _ in readout_lines(field_summary(layout, **kw), None, None, False)]

    assert "Currents solved, R at 90 °C" in texts(demo)
    assert "Currents solved, R at 40 °C" in texts(demo, temperature_c=40.0)
    assert "Currents equal shares" in texts(demo, currents="equal")
    bare = demo.with_conductors([replace(c, area_mm2=None) for c in demo.conductors])
    assert "Currents solved, no area" in texts(bare)


def test_screens_and_passive_loops_appear_with_their_figures_and_the_caution() -> None:
    from tests.test_coupling_induced import LOOP, trefoil
    from trayadvisor.layoutfile.reader import parse_layout

    lay = parse_layout(trefoil("single-point"))
    data = coupling_summary(lay).to_json()
    text = "\n".join(line.text for line in coupling_lines(coupling_summary(lay)))
    assert "Cable screens (λ1 = screen loss / core loss)" in text
    # Reference: `couple --json`'s standing voltage, three significant figures
    assert f"{data['screens'][0]['standing_v_per_m']:.3g}" in text
    assert "touch voltage" in text and "licensed practice" in text
    loop = coupling_summary(parse_layout(LOOP))
    text = "\n".join(line.text for line in coupling_lines(loop))
    p = loop.to_json()["passive"][0]
    assert "Passive loops" in text and f"{p['loss_w_per_m']:.3g}" in text
