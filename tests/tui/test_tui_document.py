"""The editor's document and edits, without textual: undo/redo, dirty flag, selection."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from trayadvisor.layoutfile import layout_problems
from trayadvisor.layoutfile.reader import LayoutError, read_layout
from trayadvisor.model import Circuit, Conductor, Tray
from trayadvisor.tui.logic import edits
from trayadvisor.tui.logic.document import Document
from trayadvisor.tui.screens.itemforms import parse_harmonics


def _demo(demo_copy: Path) -> Document:
    return Document.open(demo_copy)


def test_apply_undo_redo_and_dirty(demo_copy: Path) -> None:
    doc = _demo(demo_copy)
    first = doc.layout
    name = doc.selected
    assert not doc.dirty and not doc.can_undo
    assert doc.apply(edits.move_conductor(first, name, 0.0, 5.0), f"move {name}")
    moved = doc.layout
    assert doc.dirty and doc.undo_label == f"move {name}"
    assert not doc.apply(moved, "nothing")                  # no change: no undo step
    assert doc.undo() == f"move {name}" and doc.layout is first and not doc.dirty
    assert doc.undo() is None
    assert doc.redo() == f"move {name}" and doc.layout is moved and doc.dirty
    doc.undo()
    doc.apply(edits.delete_conductor(first, name), "delete")
    assert not doc.can_redo                                 # a new edit drops the redo stack


def test_undo_restores_the_selection(demo_copy: Path) -> None:
    doc = _demo(demo_copy)
    name = doc.selected
    lay, new = edits.duplicate_conductor(doc.layout, name)
    doc.apply(lay, "copy", selected=new)
    assert doc.selected == new
    doc.undo()
    assert doc.selected == name
    doc.redo()
    assert doc.selected == new


def test_select_step_wraps(demo_copy: Path) -> None:
    doc = _demo(demo_copy)
    names = [c.name for c in doc.layout.conductors]
    doc.select(names[-1])
    assert doc.select_step(1) == names[0]
    assert doc.select_step(-1) == names[-1]
    doc.select("no such conductor")                          # ignored
    assert doc.selected == names[-1]


def test_new_file_is_valid_and_not_written(tmp_path: Path) -> None:
    doc = Document.open_or_new(tmp_path / "fresh.toml")
    assert doc.new and doc.layout.trays and not doc.layout.conductors
    assert doc.problems() == [] and not doc.dirty
    assert not (tmp_path / "fresh.toml").exists()
    with pytest.raises(LayoutError):
        Document.open_or_new(tmp_path / "missing-folder" / "x.toml")


def test_save_refuses_an_invalid_model_and_writes_a_valid_one(demo_copy: Path) -> None:
    doc = _demo(demo_copy)
    before = demo_copy.read_bytes()
    name = doc.selected
    doc.apply(edits.move_conductor(doc.layout, name, 0.0, -500.0), "out of the tray")
    with pytest.raises(LayoutError, match="outside every tray|not inside"):
        doc.save()
    assert demo_copy.read_bytes() == before and doc.dirty
    doc.undo()
    doc.apply(edits.move_conductor(doc.layout, name, 0.0, 5.0), "move")
    doc.save()
    assert read_layout(demo_copy) == doc.layout and not doc.dirty
    no_path = Document(doc.layout, None, label="built-in demo")
    with pytest.raises(ValueError):
        no_path.save()


def test_duplicate_lands_free_inside_a_tray_and_validates(demo_copy: Path) -> None:
    doc = _demo(demo_copy)
    lay = doc.layout
    for c in lay.conductors[:6]:
        lay, new = edits.duplicate_conductor(lay, c.name)
        assert new.startswith(f"{c.circuit}-")
    assert layout_problems(lay) == []                        # no overlap, inside trays
    assert len({c.name for c in lay.conductors}) == len(lay.conductors)


def test_new_conductor_proposes_the_missing_phase() -> None:
    lay = edits.new_layout("t")
    lay = edits.add_circuit(lay, Circuit("F9", "ac3", 100.0))
    phases = []
    for _ in range(3):
        c = edits.new_conductor(lay, lay.conductors[-1] if lay.conductors else None, "F9")
        phases.append(c.phase)
        lay = edits.add_conductor(lay, c)
    assert phases == ["L1", "L2", "L3"]
    assert layout_problems(lay) == []


def test_circuit_and_tray_renames_follow_their_conductors(demo_copy: Path) -> None:
    lay = _demo(demo_copy).layout
    old = lay.circuits[0]
    renamed = edits.replace_circuit(lay, old.name, Circuit("G1", old.system, old.current_a))
    assert not renamed.conductors_of(old.name) and renamed.conductors_of("G1")
    assert layout_problems(renamed) == []
    gone = edits.delete_circuit(lay, old.name)
    assert all(c.circuit != old.name for c in gone.conductors)
    t = lay.trays[0]
    named = lay.with_conductor(0, replace(lay.conductors[0], tray=t.name))
    moved = edits.replace_tray(named, t.name, Tray("Q1", t.x_mm, t.y_mm, t.width_mm,
                                                   t.depth_mm))
    assert moved.conductors[0].tray == "Q1" and layout_problems(moved) == []


def test_free_spot_avoids_overlap() -> None:
    lay = edits.new_layout()
    lay = edits.add_circuit(lay, Circuit("A", "ac1", 10.0))
    c = Conductor("A-La", "A", "L", 12.5, 12.5, 25.0)
    lay = edits.add_conductor(lay, c)
    x, y = edits.free_spot(lay, 12.5, 12.5, 25.0)
    assert ((x - 12.5) ** 2 + (y - 12.5) ** 2) ** 0.5 >= 25.0 - 1e-9


def test_unique_name() -> None:
    assert edits.unique_name("a", set()) == "a"
    assert edits.unique_name("a", {"a", "a-2"}) == "a-3"
    assert edits.unique_name("a-2", {"a-2"}) == "a-3"


def test_parse_harmonics() -> None:
    assert parse_harmonics("5=0.2, 7 = 0.1") == ((5, 0.2), (7, 0.1))
    assert parse_harmonics("") == ()
    for bad in ("5", "1=0.2", "5=-1", "5=0.1,5=0.2", "x=1"):
        with pytest.raises(ValueError):
            parse_harmonics(bad)


@settings(max_examples=30, deadline=None, derandomize=True)
@given(st.lists(st.tuples(st.integers(0, 15), st.sampled_from([(5, 0), (-5, 0), (0, 5)])),
                min_size=1, max_size=25))
def test_undo_all_then_redo_all_round_trips(steps) -> None:
    from trayadvisor.layoutfile import demo_path

    doc = Document(read_layout(demo_path()))
    first = doc.layout
    for i, (dx, dy) in steps:
        c = doc.layout.conductors[i]
        doc.apply(edits.move_conductor(doc.layout, c.name, dx, dy), f"move {c.name}")
    last = doc.layout
    while doc.undo() is not None:
        pass
    assert doc.layout == first and not doc.dirty
    while doc.redo() is not None:
        pass
    assert doc.layout == last
