"""The cross-section as frozen dataclasses.

No I/O and no numeric work lives here: the file reader builds these objects, the engines read
them, and edits make new ones (``dataclasses.replace``) so that undo is a list of old models.

Units follow layout format 1: millimetres, amperes RMS, degrees, hertz.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

SYSTEMS: tuple[str, ...] = ("ac3", "ac1", "dc", "signal", "loop")

#: Phase labels allowed for each circuit system.
PHASES: dict[str, tuple[str, ...]] = {
    "ac3": ("L1", "L2", "L3", "N", "PE"),
    "ac1": ("L", "N", "PE"),
    "dc": ("+", "-", "PE"),
    "signal": ("a", "b"),
    "loop": ("a", "b"),
}

#: Systems that carry no current of their own: signal pairs (victims) and passive loops
#: (shorted conductors that carry only induced current).
PASSIVE_SYSTEMS: tuple[str, ...] = ("signal", "loop")
#: How the metallic screens of a circuit's cables are bonded.
SCREEN_BONDINGS: tuple[str, ...] = ("both-ends", "single-point")
#: Sheet thickness of a solid sheet tray when the file gives none, mm (typical, common
#: practice for tray bottoms 1.5–2.5 mm).
DEFAULT_SHEET_MM = 2.0

#: Phase labels that must each have at least one conductor for the circuit to carry current.
REQUIRED_PHASES: dict[str, tuple[str, ...]] = {
    "ac3": ("L1", "L2", "L3"),
    "ac1": ("L", "N"),
    "dc": ("+", "-"),
    "signal": ("a", "b"),
    "loop": ("a", "b"),
}

#: Fundamental angle of each phase label, degrees (docs/conventions.md).
PHASE_ANGLE_DEG: dict[str, float] = {
    "L1": 0.0,
    "L2": -120.0,
    "L3": 120.0,
    "L": 0.0,
    "+": 0.0,
    "-": 180.0,
}

#: Conductor materials with resistivity at 20 °C (Ω·m) and temperature coefficient (1/K).
#: Source: IEC 60228 / IEC 60287-1-1 Table 1 (copper 1.7241e-8, aluminium 2.8264e-8;
#: alpha 3.93e-3 and 4.03e-3), values from memory.
MATERIALS: dict[str, tuple[float, float]] = {
    "copper": (1.7241e-8, 3.93e-3),
    "aluminium": (2.8264e-8, 4.03e-3),
}


@dataclass(frozen=True)
class Tray:
    """Inner cross-section of one tray: lower-left corner, width and depth (mm).

    ``sheet`` names a plate material when the tray is a solid sheet tray (its bottom and
    sides are plates ``sheet_mm`` thick outside the inner section); ``cover`` adds a cover
    plate on top. Ladder and mesh trays have no ``sheet`` (their steel is not modelled).
    """

    name: str
    x_mm: float
    y_mm: float
    width_mm: float
    depth_mm: float
    sheet: str | None = None
    sheet_mm: float = DEFAULT_SHEET_MM
    cover: bool = False

    @property
    def bounds(self) -> tuple[float, float, float, float]:
        """(xmin, ymin, xmax, ymax) in mm."""
        return (self.x_mm, self.y_mm, self.x_mm + self.width_mm, self.y_mm + self.depth_mm)

    @property
    def outer_bounds(self) -> tuple[float, float, float, float]:
        """The bounds with a sheet tray's bottom, sides and cover, mm."""
        x0, y0, x1, y1 = self.bounds
        if not self.sheet:
            return (x0, y0, x1, y1)
        t = self.sheet_mm
        return (x0 - t, y0 - t, x1 + t, y1 + (t if self.cover else 0.0))

    def sheet_plates(self) -> tuple[Plate, ...]:
        """The bottom, the two sides and (with ``cover``) the cover of a sheet tray.

        The bottom and sides are one conducting body (named after the tray); the cover lies
        on the sides and is a body of its own (docs/file-format.md, "Plates").
        """
        if not self.sheet:
            return ()
        t = self.sheet_mm
        x0, y0, x1, y1 = self.bounds
        parts = [Plate(f"{self.name} bottom", x0 - t, y0 - t, x1 - x0 + 2 * t, t,
                       material=self.sheet, body=self.name, tray=self.name),
                 Plate(f"{self.name} left side", x0 - t, y0, t, y1 - y0,
                       material=self.sheet, body=self.name, tray=self.name),
                 Plate(f"{self.name} right side", x1, y0, t, y1 - y0,
                       material=self.sheet, body=self.name, tray=self.name)]
        if self.cover:
            parts.append(Plate(f"{self.name} cover", x0 - t, y1, x1 - x0 + 2 * t, t,
                               material=self.sheet, body=f"{self.name} cover",
                               tray=self.name))
        return tuple(parts)


@dataclass(frozen=True)
class Plate:
    """An axis-aligned rectangle of steel, aluminium or copper in the cross-section (mm).

    ``material`` names a typical material (``steel``, ``stainless``, ``aluminium``,
    ``copper``); ``mu_r`` and ``sigma_s_per_m`` give the data explicitly (they override the
    material's). Plates with the same ``body`` are one conductor (welded or bolted); every
    other plate is insulated from the rest, its eddy currents summing to zero. ``tray`` is
    set on the plates generated from a sheet tray.
    """

    name: str
    x_mm: float
    y_mm: float
    width_mm: float
    height_mm: float
    material: str | None = None
    mu_r: float | None = None
    sigma_s_per_m: float | None = None
    body: str | None = None
    tray: str | None = None

    @property
    def bounds(self) -> tuple[float, float, float, float]:
        """(xmin, ymin, xmax, ymax) in mm."""
        return (self.x_mm, self.y_mm, self.x_mm + self.width_mm, self.y_mm + self.height_mm)

    @property
    def body_name(self) -> str:
        return self.body or self.name


@dataclass(frozen=True)
class Circuit:
    """A circuit: system, fundamental RMS line current, optional harmonic spectrum.

    ``harmonics`` maps harmonic order (>= 2) to that harmonic's RMS current as a fraction of
    ``current_a``; it is stored as a sorted tuple of pairs so the dataclass stays hashable.
    """

    name: str
    system: str
    current_a: float = 0.0
    angle_deg: float = 0.0
    harmonics: tuple[tuple[int, float], ...] = ()
    length_m: float | None = None
    screen_bonding: str | None = None  # "both-ends" or "single-point" (screened cables)


@dataclass(frozen=True)
class Conductor:
    """One single-core conductor: centre (mm), overall diameter (mm) and what it carries."""

    name: str
    circuit: str
    phase: str
    x_mm: float
    y_mm: float
    diameter_mm: float
    area_mm2: float | None = None
    material: str | None = None
    current_a: float | None = None
    angle_deg: float | None = None
    fixed: bool = False
    tray: str | None = None
    screen_area_mm2: float | None = None  # metallic screen cross-section
    screen_diameter_mm: float | None = None  # mean diameter of the screen
    screen_material: str | None = None  # copper (default) or aluminium

    @property
    def screened(self) -> bool:
        return self.screen_area_mm2 is not None or self.screen_diameter_mm is not None

    @property
    def radius_mm(self) -> float:
        return 0.5 * self.diameter_mm

    def moved(self, x_mm: float, y_mm: float) -> Conductor:
        return replace(self, x_mm=float(x_mm), y_mm=float(y_mm))


@dataclass(frozen=True)
class ObservationPoint:
    """A named point where the field is reported (mm)."""

    name: str
    x_mm: float
    y_mm: float


@dataclass(frozen=True)
class ObservationLine:
    """A named straight line from (x0, y0) to (x1, y1) in mm, sampled at ``samples`` points."""

    name: str
    x0_mm: float
    y0_mm: float
    x1_mm: float
    y1_mm: float
    samples: int = 101


@dataclass(frozen=True)
class ObservationArea:
    """A named rectangle of the cross-section (a room, a cabinet, a work zone), mm.

    Its corners are (x0, y0) lower left and (x1, y1) upper right; it holds no conductor.
    """

    name: str
    x0_mm: float
    y0_mm: float
    x1_mm: float
    y1_mm: float


@dataclass(frozen=True)
class Limit:
    """A named field limit: a level in µT or a library entry, where and how it judges.

    The layout file writes the value as the key ``ut``. ``library`` names an entry of the
    limits library instead of a value. ``places`` names the points, lines and areas it
    applies at (empty: the curve at distance d). ``kind`` ("exposure", "immunity",
    "target") and ``band`` ("ac", "dc") are None when the file leaves them out: a library
    entry's own, else "target" and "ac" (:func:`trayadvisor.limits.resolve_limit`).
    """

    name: str
    value_uT: float | None = None
    source: str = "layout file"
    places: tuple[str, ...] = ()
    kind: str | None = None
    band: str | None = None
    library: str | None = None


@dataclass(frozen=True)
class Layout:
    """A whole cross-section: trays, circuits, conductors, observation places and limits."""

    title: str = ""
    frequency_hz: float = 50.0
    trays: tuple[Tray, ...] = ()
    circuits: tuple[Circuit, ...] = ()
    conductors: tuple[Conductor, ...] = ()
    points: tuple[ObservationPoint, ...] = ()
    lines: tuple[ObservationLine, ...] = ()
    limits: tuple[Limit, ...] = ()
    areas: tuple[ObservationArea, ...] = ()
    earth_y_mm: float | None = None  # height of an earth reference plane (coupling), mm
    plates: tuple[Plate, ...] = ()
    #: What-if switch, never saved: every figure as if no plate (nor sheet metal) were there,
    #: on the same envelope (the with / without comparison).
    without_metal: bool = False

    # -- look-ups -------------------------------------------------------------------------
    def circuit(self, name: str) -> Circuit:
        for c in self.circuits:
            if c.name == name:
                return c
        raise KeyError(name)

    def conductor_index(self, name: str) -> int:
        for i, c in enumerate(self.conductors):
            if c.name == name:
                return i
        raise KeyError(name)

    def conductors_of(self, circuit: str) -> tuple[Conductor, ...]:
        return tuple(c for c in self.conductors if c.circuit == circuit)

    def line(self, name: str) -> ObservationLine:
        for ln in self.lines:
            if ln.name == name:
                return ln
        raise KeyError(name)

    def point(self, name: str) -> ObservationPoint:
        for p in self.points:
            if p.name == name:
                return p
        raise KeyError(name)

    def area(self, name: str) -> ObservationArea:
        for a in self.areas:
            if a.name == name:
                return a
        raise KeyError(name)

    def place(self, name: str) -> ObservationPoint | ObservationLine | ObservationArea:
        """The point, line or area called ``name`` (KeyError if none)."""
        for group in (self.points, self.lines, self.areas):
            for p in group:
                if p.name == name:
                    return p
        raise KeyError(name)

    def all_plates(self) -> tuple[Plate, ...]:
        """The ``[[plate]]`` entries and the plates of every sheet tray (none when
        ``without_metal``)."""
        if self.without_metal:
            return ()
        return self.plates + tuple(p for t in self.trays for p in t.sheet_plates())

    def has_induced_paths(self) -> bool:
        """True when some current is only induced: cable screens or passive loops."""
        return any(c.screened for c in self.conductors) or any(
            c.system == "loop" for c in self.circuits)

    # -- geometry -------------------------------------------------------------------------
    def envelope_mm(self) -> tuple[float, float, float, float]:
        """Bounding rectangle (xmin, ymin, xmax, ymax) of all trays (with a sheet tray's
        metal), or of the conductors' outer circles when the layout has no tray (the tray
        envelope, docs/conventions.md)."""
        if self.trays:
            b = [t.outer_bounds for t in self.trays]
        elif self.conductors:
            b = [
                (c.x_mm - c.radius_mm, c.y_mm - c.radius_mm, c.x_mm + c.radius_mm,
                 c.y_mm + c.radius_mm)
                for c in self.conductors
            ]
        else:
            return (0.0, 0.0, 0.0, 0.0)
        return (
            min(v[0] for v in b),
            min(v[1] for v in b),
            max(v[2] for v in b),
            max(v[3] for v in b),
        )

    # -- edits (each returns a new Layout) ------------------------------------------------
    def with_conductor(self, index: int, conductor: Conductor) -> Layout:
        cs = list(self.conductors)
        cs[index] = conductor
        return replace(self, conductors=tuple(cs))

    def with_conductors(self, conductors: tuple[Conductor, ...] | list[Conductor]) -> Layout:
        return replace(self, conductors=tuple(conductors))

    def with_positions(self, positions_mm: dict[str, tuple[float, float]]) -> Layout:
        """A copy with the named conductors moved to new centres (mm)."""
        cs = tuple(
            c.moved(*positions_mm[c.name]) if c.name in positions_mm else c
            for c in self.conductors
        )
        return replace(self, conductors=cs)
