"""Property tests of layout format 1 (hypothesis).

- Random valid layouts (non-overlapping conductors inside trays) round-trip exactly through
  the writer and the reader, and the line map points every key at the line that holds it.
- A key injected into any table is reported on the line where it was injected.
- Random bytes, random TOML-ish text and mutated valid files never raise anything but
  LayoutError, and the reported line exists in the text.

Float round-trip relies on Python's ``repr`` being the shortest text that reads back to the
same IEEE 754 double (Source: Python docs, "Floating Point Arithmetic: Issues and
Limitations"), and TOML 1.0.0 reading such text as that double (Source: toml.io/en/v1.0.0).
"""

from __future__ import annotations

import math
import re

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from trayadvisor.layoutfile import dumps_layout
from trayadvisor.layoutfile.reader import (
    LayoutError,
    LineMap,
    parse_layout,
    read_layout,
    validate_layout,
)
from trayadvisor.limits import LIBRARY
from trayadvisor.model import (
    MATERIALS,
    PHASES,
    REQUIRED_PHASES,
    SYSTEMS,
    Circuit,
    Conductor,
    Layout,
    Limit,
    ObservationArea,
    ObservationLine,
    ObservationPoint,
    Tray,
)

SETTINGS = settings(max_examples=150, deadline=None, derandomize=True,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])

PITCH = 40.0  # slot pitch, mm: a circle of diameter <= PITCH inside its square slot
names = st.text(st.characters(codec="utf-8"), min_size=1, max_size=8).filter(str.strip)
coord = st.floats(-1e4, 1e4, allow_nan=False)
positive = st.floats(1e-3, 1e5, allow_nan=False)
non_negative = st.floats(0.0, 1e5, allow_nan=False)
angle = st.floats(-720.0, 720.0, allow_nan=False)


def unique_names(n: int) -> st.SearchStrategy[list[str]]:
    return st.lists(names, min_size=n, max_size=n, unique=True)


@st.composite
def circuits(draw: st.DrawFn, name: str) -> tuple[Circuit, list[str]]:
    system = draw(st.sampled_from(SYSTEMS))
    harmonics: tuple[tuple[int, float], ...] = ()
    if system != "dc":
        orders = draw(st.lists(st.integers(2, 50), max_size=4, unique=True))
        harmonics = tuple(sorted((h, draw(st.floats(0.0, 1.0))) for h in orders))
    current = 0.0 if system == "loop" else draw(non_negative)  # loops: induced current only
    bonding = (draw(st.sampled_from([None, "both-ends", "single-point"]))
               if system in ("ac3", "ac1", "dc") else None)
    circuit = Circuit(name, system, current, draw(angle), harmonics,
                      draw(st.none() | positive), bonding)
    extra = [p for p in PHASES[system] if p not in REQUIRED_PHASES[system]]
    phases = list(REQUIRED_PHASES[system]) + draw(st.lists(st.sampled_from(extra or ["a"]),
                                                           max_size=3))
    return circuit, draw(st.permutations(phases))


@st.composite
def valid_layouts(draw: st.DrawFn) -> Layout:
    cnames = draw(unique_names(draw(st.integers(1, 3))))
    circs = [draw(circuits(n)) for n in cnames]
    wanted = [(c.name, p) for c, phases in circs for p in phases]
    systems = {c.name: c.system for c, _ in circs}
    bonding = {c.name: c.screen_bonding for c, _ in circs}
    cols = draw(st.integers(1, 6))
    rows = -(-len(wanted) // cols)
    x0, y0 = draw(coord), draw(coord)
    tray = Tray(draw(names), x0, y0, cols * PITCH + draw(st.floats(0, 100)), rows * PITCH)
    trays = [tray]
    if draw(st.booleans()):
        trays.append(Tray(tray.name + "'", x0, y0 + rows * PITCH + 50.0, 80.0, 40.0))
    slots = draw(st.permutations(range(cols * rows)))
    conductors = []
    for (circuit, phase), name, slot in zip(wanted, draw(unique_names(len(wanted))), slots,
                                            strict=False):
        d = draw(st.floats(1.0, PITCH))
        free = (PITCH - d) / 2
        x = x0 + PITCH * (slot % cols + 0.5) + draw(st.floats(-free, free))
        y = y0 + PITCH * (slot // cols + 0.5) + draw(st.floats(-free, free))
        loop = systems[circuit] == "loop"
        screen = {}
        if bonding[circuit] is not None:  # a screened circuit: every cable has a screen,
            # its mean diameter between a small conductor's and the overall diameter
            screen = {"screen_area_mm2": draw(positive),
                      "screen_diameter_mm": draw(st.floats(0.5 * d, 0.95 * d)),
                      "screen_material": draw(st.none() | st.sampled_from(sorted(MATERIALS)))}
        area = draw(positive) if loop else draw(st.none() | positive)
        if screen and area is not None:  # the conductor fits inside the screen
            area = min(area, 0.7 * math.pi * (screen["screen_diameter_mm"] / 2) ** 2)
        conductors.append(Conductor(
            name, circuit, phase, x, y, d,
            area_mm2=area,
            material=draw(st.none() | st.sampled_from(sorted(MATERIALS))),
            current_a=None if loop else draw(st.none() | non_negative),
            angle_deg=draw(st.none() | angle),
            fixed=draw(st.booleans()), tray=draw(st.sampled_from([None, tray.name])),
            **screen))
    # points, lines and areas share one name space (a limit's places name them)
    place_names = draw(st.lists(names, max_size=6, unique=True))
    n_pt, n_ln = draw(st.integers(0, 2)), draw(st.integers(0, 2))
    points = [ObservationPoint(n, draw(coord), draw(coord)) for n in place_names[:n_pt]]
    lines = []
    for n in place_names[n_pt:n_pt + n_ln]:
        xa, ya = draw(coord), draw(coord)
        lines.append(ObservationLine(n, xa, ya, xa + draw(positive), ya + draw(coord),
                                     draw(st.integers(2, 1000))))
    areas = []  # below every tray, so that no conductor lies inside
    for n in place_names[n_pt + n_ln:]:
        xa, top = draw(coord), y0 - 1.0 - draw(non_negative)
        areas.append(ObservationArea(n, xa, top - draw(positive), xa + draw(positive), top))
    frequency = draw(positive)
    limits = []
    for n in draw(st.lists(names, max_size=3, unique=True)):
        places = tuple(draw(st.lists(st.sampled_from(place_names), max_size=3, unique=True))
                       if place_names else [])
        usable = [e for e in LIBRARY if e.valid_at(0.0 if e.band == "dc" else frequency)]
        if usable and draw(st.booleans()):
            e = draw(st.sampled_from(usable))
            limits.append(Limit(n, None, draw(st.just("layout file") | names), places,
                                draw(st.sampled_from([None, e.kind])),
                                draw(st.sampled_from([None, e.band])), e.id))
        else:
            limits.append(Limit(n, draw(positive), draw(st.just("layout file") | names),
                                places, draw(st.sampled_from([None, "exposure", "immunity",
                                                              "target"])),
                                draw(st.sampled_from([None, "ac", "dc"]))))
    return Layout(draw(st.text(st.characters(codec="utf-8"), max_size=20)), frequency,
                  tuple(trays), tuple(c for c, _ in circs), tuple(conductors), tuple(points),
                  tuple(lines), tuple(limits), areas=tuple(areas))


@SETTINGS
@given(valid_layouts())
def test_valid_layouts_round_trip_exactly(layout):
    validate_layout(layout)  # the generator only makes valid layouts
    text = dumps_layout(layout)
    back = parse_layout(text, "gen.toml")
    assert back == layout
    assert dumps_layout(back) == text
    for a, b in zip(back.conductors, layout.conductors, strict=True):
        # Source: IEEE 754 doubles; exact equality incl. the sign of zero.
        assert math.copysign(1.0, a.x_mm) == math.copysign(1.0, b.x_mm)


KEY_LINE = re.compile(r"^([a-z0-9_]+) = ")


@SETTINGS
@given(valid_layouts())
def test_line_map_points_every_key_at_its_line(layout):
    text = dumps_layout(layout)
    rows = text.split("\n")
    lm = LineMap.from_text(text)
    counts: dict[str, int] = {}
    kind: str | None = None
    for n, row in enumerate(rows, 1):
        if (m := re.fullmatch(r"\[\[([a-z]+)\]\]", row)) is not None:
            kind = m.group(1)
            counts[kind] = counts.get(kind, -1) + 1
            # Source: the written text itself, read line by line.
            assert lm.line(kind, counts[kind]) == n
        elif (m := KEY_LINE.match(row)) is not None:
            path = (m.group(1),) if kind is None else (kind, counts[kind], m.group(1))
            assert lm.line(*path) == n


@SETTINGS
@given(valid_layouts(), st.data())
def test_injected_key_is_reported_on_its_line(layout, data):
    rows = dumps_layout(layout).split("\n")
    headers = [n for n, row in enumerate(rows) if row.startswith("[[")]
    at = data.draw(st.sampled_from(headers)) + 1
    rows.insert(at, "no_such_key = 1")
    with pytest.raises(LayoutError) as info:
        parse_layout("\n".join(rows), "inj.toml")
    # Source: the line the test inserted (1-based).
    assert info.value.line == at + 1
    assert "unknown key 'no_such_key'" in info.value.message


def check_outcome(text: str, path: str = "fuzz.toml") -> None:
    try:
        parse_layout(text, path)
    except LayoutError as err:
        assert str(err).startswith(f"{path}:") and len(str(err).splitlines()) == 1
        assert 0 <= err.line <= text.count("\n") + 1


@pytest.fixture(scope="module")
def fuzz_dir(tmp_path_factory):
    return tmp_path_factory.mktemp("fuzz")


@SETTINGS
@given(st.binary(max_size=400))
def test_random_bytes_give_only_layout_errors(fuzz_dir, blob):
    path = fuzz_dir / "blob.toml"
    path.write_bytes(b'format = "trayadvisor/1"\n' + blob)
    try:
        read_layout(path)
    except LayoutError as err:
        assert str(err).startswith(f"{path}:")
        assert 0 <= err.line <= blob.count(b"\n") + 2


KEYS = ["name", "x_mm", "y_mm", "width_mm", "depth_mm", "system", "current_a", "circuit",
        "phase", "diameter_mm", "harmonics", "fixed", "tray", "samples", "ut", "format",
        "title", "frequency_hz", "x0_mm", "material", "bogus", '"quoted key"', "a.b",
        "places", "library", "kind", "band", "y1_mm"]
VALUES = st.one_of(
    st.sampled_from(['"F1"', '"L1"', '"ac3"', '"signal"', '"trayadvisor/1"', "true", "nan",
                     '["F1", "x"]', '"icnirp-2010-public"', '"dc"', '"exposure"',
                     "-inf", "0", "-1", "1e400", "[1, 2]", "{ 3 = 0.1 }", "{ x = 1 }",
                     "1979-05-27", '"""a\nb"""', "'''x'''", "[\n1,\n]", '"a\\"b"', "{}",
                     "1" + "0" * 400, "{ 3 = 1" + "0" * 400 + " }"]),
    st.floats(allow_nan=False).map(repr), st.integers().map(str),
    st.text(st.characters(exclude_categories=("Cc", "Cs")), max_size=6).map(
        lambda s: '"' + s.replace("\\", "").replace('"', "") + '"'),
)
HEADERS = ["[[tray]]", "[[circuit]]", "[[conductor]]", "[[point]]", "[[line]]", "[[limit]]",
           "[[area]]",
           "[circuit.harmonics]", "[settings]", "[[conductor.x]]", "[tray]"]
key_value = st.tuples(st.sampled_from(KEYS), VALUES).map(lambda kv: f"{kv[0]} = {kv[1]}")
toml_lines = st.one_of(st.sampled_from(HEADERS), key_value, key_value, key_value,
                       st.sampled_from(["", "# comment"]), st.text(max_size=12))
table_body = st.lists(st.sampled_from(KEYS), max_size=8, unique=True).flatmap(
    lambda keys: st.tuples(*[VALUES.map(lambda v, k=k: f"{k} = {v}") for k in keys]))
blocks = st.tuples(st.sampled_from(HEADERS[:7]) | st.sampled_from(HEADERS), table_body)


@SETTINGS
@given(st.booleans(), st.lists(toml_lines, max_size=25))
def test_toml_like_text_gives_only_layout_errors(with_format, rows):
    head = ['format = "trayadvisor/1"'] if with_format else []
    check_outcome("\n".join(head + rows))


@SETTINGS
@given(st.lists(blocks, max_size=8))
def test_table_shaped_text_gives_only_layout_errors(tables):
    rows = ['format = "trayadvisor/1"']
    for header, pairs in tables:
        rows += ["", header, *pairs]
    check_outcome("\n".join(rows))


@SETTINGS
@given(valid_layouts(), st.data())
def test_mutated_valid_files_give_only_layout_errors(layout, data):
    rows = dumps_layout(layout).split("\n")
    for _ in range(data.draw(st.integers(1, 3))):
        i = data.draw(st.integers(0, len(rows) - 1))
        action = data.draw(st.sampled_from(["delete", "duplicate", "swap", "value", "chop"]))
        if action == "delete":
            del rows[i]
        elif action == "duplicate":
            rows.insert(i, rows[i])
        elif action == "swap":
            j = data.draw(st.integers(0, len(rows) - 1))
            rows[i], rows[j] = rows[j], rows[i]
        elif action == "value" and " = " in rows[i]:
            rows[i] = rows[i].split(" = ")[0] + " = " + data.draw(VALUES)
        else:
            rows[i] = rows[i][: data.draw(st.integers(0, len(rows[i])))]
        if not rows:
            rows = [""]
    check_outcome("\n".join(rows))
