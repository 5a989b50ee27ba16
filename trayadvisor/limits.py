"""Magnetic-field limits with their sources, the layout's own limits, and how each judges a field.

Every value here is an RMS magnetic flux density in µT. Levels published as a magnetic field
strength H (A/m) are converted with B = μ0·H (1 A/m = 1.2566 µT in air). A level that depends
on frequency is a piecewise power law ``k / f**p`` over the entry's frequency pieces.

Each entry has a stable ``id`` (what a layout's ``library = "..."`` names), a ``kind``
(``"exposure"``: people; ``"immunity"``: equipment) and a ``band`` (``"ac"``: power frequency
and its harmonics; ``"dc"``: static fields, judged only against the DC field).

Each frequency piece says whether it was compared with a copy of the cited document's table
while this library was written (``checked``); ``note`` names that copy, or says which pieces
were recalled.
Recalled values are shown as such wherever the library is listed (``trayadvisor limits``,
reports). Check them against your own copy of the document before relying on them.

How a limit judges a field (:class:`Rule`, the *index*; pass = index ≤ 1):

- library **exposure** levels in the AC band: the multi-frequency rule of ICNIRP 2010 and
  Directive 2013/35/EU, index = Σ_h B_h / RL(f_h), summed linearly over the fundamental and
  the harmonics inside the entry's frequency range (B_h the resultant RMS of component h);
- every other AC limit (targets, immunity levels, typed-in exposure values): index =
  B_AC / limit with B_AC the resultant RMS of the fundamental and harmonics (root-sum-square);
- DC-band limits: index = B_DC / limit with B_DC the static field.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from trayadvisor.engine.units import UT_PER_A_PER_M
from trayadvisor.model import Layout, Limit

__all__ = ["BANDS", "KINDS", "LIBRARY", "UT_PER_A_PER_M", "LibraryLimit", "Piece", "Rule",
           "all_limits", "by_id", "find", "library_at", "library_source", "resolve_limit"]

#: The kinds of limit: people, equipment, a project's own target.
KINDS: tuple[str, ...] = ("exposure", "immunity", "target")
#: The bands a limit judges: power frequency with harmonics, or the static field.
BANDS: tuple[str, ...] = ("ac", "dc")


@dataclass(frozen=True)
class Piece:
    """One frequency piece of a level: ``k_uT / f**power`` µT for ``f_lo <= f <= f_hi`` Hz.

    ``checked`` is True when this piece was compared with a copy of the cited table.
    """

    f_lo: float
    f_hi: float
    k_uT: float
    power: int = 0
    checked: bool = False

    def value(self, frequency_hz: float) -> float:
        return self.k_uT if self.power == 0 else self.k_uT / frequency_hz ** self.power

    def __str__(self) -> str:
        if self.power == 0:
            return f"{self.k_uT:.4g}"
        mant, exp = f"{self.k_uT:.1e}".split("e")
        return f"{mant}e{int(exp)}/f" + ("" if self.power == 1 else f"^{self.power}")


@dataclass(frozen=True)
class LibraryLimit:
    """One published level.

    Attributes
    ----------
    id : str
        Stable identifier, named by ``library = "..."`` in a layout.
    name : str
        Short unique name, shown in tables and plots.
    kind : {"exposure", "immunity"}
        Exposure of people, or immunity of equipment.
    band : {"ac", "dc"}
        Power-frequency (and harmonic) fields, or static fields.
    pieces : tuple of Piece
        The level over frequency, contiguous and increasing (DC: one piece at 0 Hz).
    source : str
        Document, edition and table.
    note : str
        What it applies to, and what was checked against what, or recalled.
    """

    id: str
    name: str
    kind: str
    band: str
    pieces: tuple[Piece, ...]
    source: str
    note: str

    @property
    def checked(self) -> bool:
        """True when every piece was compared with a copy of the cited table."""
        return all(p.checked for p in self.pieces)

    def checked_at(self, frequency_hz: float) -> bool:
        """True when the piece holding ``frequency_hz`` was checked (False outside)."""
        f = 0.0 if self.band == "dc" else frequency_hz
        return any(p.checked for p in self.pieces if p.f_lo <= f <= p.f_hi)

    @property
    def f_min_hz(self) -> float:
        return self.pieces[0].f_lo

    @property
    def f_max_hz(self) -> float:
        return self.pieces[-1].f_hi

    def valid_at(self, frequency_hz: float) -> bool:
        return self.f_min_hz <= frequency_hz <= self.f_max_hz

    def value_uT(self, frequency_hz: float) -> float:
        """The level at ``frequency_hz`` (µT); ValueError outside the entry's range."""
        for piece in self.pieces:
            if piece.f_lo <= frequency_hz <= piece.f_hi:
                return float(piece.value(frequency_hz))
        raise ValueError(f"{self.name}: {frequency_hz:g} Hz is outside "
                         f"{self.f_min_hz:g}-{self.f_max_hz:g} Hz")

    def formula(self, frequency_hz: float | None = None) -> str:
        """The level as written in the library: the piece at ``frequency_hz`` (default: the
        piece holding 50 Hz, or the only piece), e.g. '200' or '3.0e5/f'."""
        f = 0.0 if self.band == "dc" else (50.0 if frequency_hz is None else frequency_hz)
        for piece in self.pieces:
            if piece.f_lo <= f <= piece.f_hi:
                return str(piece)
        return str(self.pieces[0])

    def formulas(self) -> str:
        """Every piece with its range: '4.0e4/f^2 (1-8 Hz); ...'."""
        if self.band == "dc":
            return f"{self.pieces[0]} (static)"
        return "; ".join(f"{p} ({p.f_lo:g}-{p.f_hi:g} Hz)" for p in self.pieces)


def _pieces(*rows: tuple) -> tuple[Piece, ...]:
    """Pieces from (f_lo, f_hi, k_uT, power[, checked]) rows."""
    return tuple(Piece(*r) for r in rows)


_ICNIRP = "ICNIRP 2010, Health Phys. 99(6):818-836"
_ICNIRP_COPY = ("the 25 Hz plateau was checked against a reproduction of the reference-level "
                "tables of Health Phys. 99:818-836 ({plateau}); the pieces below 25 Hz and "
                "above {top:g} Hz are recalled (from memory) and agree with the plateau at the "
                "break frequencies")
_ICNIRP_STATIC = "ICNIRP 2009 static fields, Health Phys. 96(4):504-514"
_EU = "Directive 2013/35/EU, Annex II, Table B2"
_EU_STATIC = "Directive 2013/35/EU, Annex II, Table B4"
_IEEE = "IEEE Std C95.6-2002, Table 2 (MPE, head and torso)"
_IEEE_NOTE = ("recalled, not checked against C95.6 itself; the plateau is consistent with a copy "
              "of its successor IEEE C95.1-2019 Table 2 (719 A/m and 2160 A/m, i.e. 0.904 mT "
              "and 2.71 mT); the k/f piece above 759 Hz is recalled")
_IEC = "IEC 61000-4-8:2009, Table 1 (continuous field)"
_IEC_NOTE = ("{h:g} A/m = {b:.4g} µT; levels 1-5 = 1, 3, 10, 30, 100 A/m recalled, not "
             "checked against the standard (test-laboratory pages agree on 3, 10 and 30 A/m); "
             "a test level at the power frequency, applied here to the RMS resultant of the "
             "fundamental and its harmonics")


def _iec(level: int, a_per_m: float, use: str) -> LibraryLimit:
    b = a_per_m * UT_PER_A_PER_M
    return LibraryLimit(
        f"iec-61000-4-8-level-{level}", f"IEC 61000-4-8 level {level}", "immunity", "ac",
        _pieces((50.0, 60.0, b, 0)), _IEC,
        f"equipment immunity test level, {use}; " + _IEC_NOTE.format(h=a_per_m, b=b))


#: ICNIRP 2010 occupational reference levels, which Directive 2013/35/EU's low action levels
#: repeat (the 25-300 Hz plateau checked for both; the rest recalled).
_WORKERS = _pieces((1.0, 8.0, 2.0e5, 2), (8.0, 25.0, 2.5e4, 1), (25.0, 300.0, 1000.0, 0, True),
                   (300.0, 3000.0, 3.0e5, 1), (3000.0, 1.0e7, 100.0, 0))

#: The library: AC exposure levels, static exposure levels, then immunity levels.
LIBRARY: tuple[LibraryLimit, ...] = (
    LibraryLimit(
        "icnirp-2010-public", "ICNIRP 2010 general public", "exposure", "ac",
        _pieces((1.0, 8.0, 4.0e4, 2), (8.0, 25.0, 5.0e3, 1), (25.0, 400.0, 200.0, 0, True),
                (400.0, 3000.0, 8.0e4, 1), (3000.0, 1.0e7, 27.0, 0)),
        _ICNIRP + ", Table 4",
        "reference level, general public (160 A/m at 25-400 Hz); recalled in part: "
        + _ICNIRP_COPY.format(plateau="2e-4 T", top=400)),
    LibraryLimit(
        "icnirp-2010-occupational", "ICNIRP 2010 occupational", "exposure", "ac",
        _WORKERS,
        _ICNIRP + ", Table 3",
        "reference level, occupational exposure (800 A/m at 25-300 Hz); recalled in part: "
        + _ICNIRP_COPY.format(plateau="1e-3 T", top=300)),
    LibraryLimit(
        "eu-2013-35-low", "2013/35/EU low AL", "exposure", "ac",
        _WORKERS,
        _EU,
        "workers, low action level (sensory effects); the 1000 µT plateau (25 Hz to 300 Hz) "
        "was checked against the Norwegian transposition's table of lower action values; the "
        "other pieces are recalled (from memory)"),
    LibraryLimit(
        "eu-2013-35-high", "2013/35/EU high AL", "exposure", "ac",
        _pieces((1.0, 300.0, 3.0e5, 1)),
        _EU,
        "workers, high action level (health effects); 6000 µT at 50 Hz agrees with a "
        "published summary, the 3.0e5/f form is recalled; the entry stops at 300 Hz because "
        "the pieces above it were not recalled with confidence"),
    LibraryLimit(
        "eu-2013-35-limbs", "2013/35/EU limbs AL", "exposure", "ac",
        _pieces((25.0, 300.0, 9.0e5, 1, True), (300.0, 3000.0, 3000.0, 0)),
        _EU,
        "workers, action level for limbs in a localised field; 9.0e5/f (25 Hz to 300 Hz) "
        "checked against the Norwegian transposition's table (18 mT at 50 Hz); the 3000 µT "
        "piece above 300 Hz is recalled"),
    LibraryLimit(
        "ieee-c95.6-public", "IEEE C95.6 general public", "exposure", "ac",
        _pieces((20.0, 759.0, 904.0, 0), (759.0, 3000.0, 6.87e5, 1)),
        _IEEE, "maximum permissible exposure, general public; " + _IEEE_NOTE),
    LibraryLimit(
        "ieee-c95.6-controlled", "IEEE C95.6 controlled", "exposure", "ac",
        _pieces((20.0, 759.0, 2710.0, 0), (759.0, 3000.0, 2.06e6, 1)),
        _IEEE, "maximum permissible exposure, controlled environment; " + _IEEE_NOTE),
    LibraryLimit(
        "icnirp-2009-static-public", "ICNIRP 2009 static public", "exposure", "dc",
        _pieces((0.0, 0.0, 4.0e5, 0)), _ICNIRP_STATIC + ", Table 1",
        "static field, general public, 400 mT; recalled (from memory)"),
    LibraryLimit(
        "icnirp-2009-static-occupational", "ICNIRP 2009 static occupational", "exposure",
        "dc", _pieces((0.0, 0.0, 2.0e6, 0)), _ICNIRP_STATIC + ", Table 1",
        "static field, occupational, head and trunk, 2 T; recalled (from memory)"),
    LibraryLimit(
        "eu-2013-35-static-implants", "2013/35/EU static implants AL", "exposure", "dc",
        _pieces((0.0, 0.0, 500.0, 0)), _EU_STATIC,
        "workers, action level for interference with active implanted devices (e.g. "
        "pacemakers), 0.5 mT; recalled (from memory)"),
    _iec(1, 1.0, "sensitive equipment with electron beams"),
    _iec(2, 3.0, "well-protected environment"),
    _iec(3, 10.0, "protected environment"),
    _iec(4, 30.0, "typical industrial environment"),
    _iec(5, 100.0, "severe industrial environment"),
)


def library_at(frequency_hz: float, band: str = "ac") -> tuple[tuple[LibraryLimit, float], ...]:
    """Library entries of ``band`` valid at ``frequency_hz`` with their value there (µT).

    For ``band = "dc"`` the frequency is ignored: every static entry is returned.
    """
    if band == "dc":
        return tuple((lim, lim.value_uT(0.0)) for lim in LIBRARY if lim.band == "dc")
    return tuple((lim, lim.value_uT(frequency_hz)) for lim in LIBRARY
                 if lim.band == "ac" and lim.valid_at(frequency_hz))


def library_source(lim: LibraryLimit, frequency_hz: float | None = None) -> str:
    """Source text carried into results: the document, and a flag when recalled (at
    ``frequency_hz``, when given: the piece in use; else any piece)."""
    ok = lim.checked if frequency_hz is None else lim.checked_at(frequency_hz)
    return lim.source if ok else f"{lim.source} [recalled, not checked]"


def all_limits(layout: Layout, frequency_hz: float | None = None) -> tuple[Limit, ...]:
    """AC library levels valid at the layout's frequency, then the layout's own ``[[limit]]``s.

    The library levels come as :class:`~trayadvisor.model.Limit` objects that name their
    entry (``library``), so :func:`resolve_limit` judges them by their own rule.

    Parameters
    ----------
    layout : Layout
    frequency_hz : float, optional
        Frequency to select and evaluate library levels at (default: the layout's).
    """
    f = float(layout.frequency_hz if frequency_hz is None else frequency_hz)
    lib = tuple(Limit(lim.name, ut, library_source(lim, f), kind=lim.kind, band=lim.band,
                      library=lim.id) for lim, ut in library_at(f))
    return lib + tuple(layout.limits)


def find(name: str) -> LibraryLimit:
    """The library entry called ``name`` (KeyError if none)."""
    for lim in LIBRARY:
        if lim.name == name:
            return lim
    raise KeyError(name)


def by_id(entry_id: str) -> LibraryLimit:
    """The library entry with id ``entry_id`` (KeyError if none)."""
    for lim in LIBRARY:
        if lim.id == entry_id:
            return lim
    raise KeyError(entry_id)


@dataclass(frozen=True)
class Rule:
    """How one limit judges a field (see the module notes); the index is ≤ 1 to pass.

    ``weights(orders, f)`` gives the weight of each frequency component in the index and
    the rule that combines them: ``"rss"``, index = sqrt(Σ_h (w_h B_h)²), or ``"sum"``,
    index = Σ_h w_h B_h, with B_h the resultant RMS field of component h in µT.
    """

    name: str
    kind: str
    band: str
    limit_uT: float  # the level at the layout's frequency (AC) or the static level (DC)
    source: str
    places: tuple[str, ...]
    entry: LibraryLimit | None = None

    @property
    def multi_frequency(self) -> bool:
        """True when the index sums ratios over frequency (library exposure, AC)."""
        return self.entry is not None and self.kind == "exposure" and self.band == "ac"

    def weights(self, orders: np.ndarray, frequency_hz: float
                ) -> tuple[np.ndarray, str, tuple[float, ...]]:
        """(weights per component in 1/µT, "rss" or "sum", frequencies outside the range)."""
        orders = np.asarray(orders, dtype=int).reshape(-1)
        if self.band == "dc":
            return (orders == 0) / self.limit_uT, "rss", ()
        if not self.multi_frequency:
            return (orders > 0) / self.limit_uT, "rss", ()
        assert self.entry is not None
        w = np.zeros(orders.size)
        outside: list[float] = []
        for i, h in enumerate(orders):
            f = float(h) * frequency_hz
            if h == 0:
                continue
            if self.entry.valid_at(f):
                w[i] = 1.0 / self.entry.value_uT(f)
            else:
                outside.append(f)
        return w, "sum", tuple(outside)

    def describe(self) -> str:
        """'exposure, AC, multi-frequency rule' and the like, for tables and notes."""
        rule = ("multi-frequency sum" if self.multi_frequency
                else "static field" if self.band == "dc" else "resultant of AC components")
        return f"{self.kind}, {self.band.upper()}, {rule}"


def resolve_limit(limit: Limit, frequency_hz: float) -> Rule:
    """The :class:`Rule` of a layout's (or a typed) limit at the layout's frequency.

    Raises
    ------
    ValueError
        For an unknown library id, a kind or band that contradicts the library entry, a
        fundamental frequency outside the entry's range, or a limit with neither a value nor
        a library id (the message says what to change). A value beside a library id (as
        :func:`all_limits` gives them) is ignored: the entry decides; a layout file may not
        give both (:mod:`trayadvisor.layoutfile.placechecks`).
    """
    if limit.library is not None:
        try:
            entry = by_id(limit.library)
        except KeyError:
            raise ValueError(f"unknown library id {limit.library!r}; "
                             "`trayadvisor limits` lists every id") from None
        kind = limit.kind or entry.kind
        band = limit.band or entry.band
        if kind != entry.kind:
            what = ("an equipment-immunity level, not an exposure limit"
                    if entry.kind == "immunity" else f"a{'n' if entry.kind[0] in 'ae' else ''} "
                    f"{entry.kind} limit")
            raise ValueError(f"library entry {entry.id!r} is {what}; remove kind or write "
                             f'kind = "{entry.kind}"')
        if band != entry.band:
            raise ValueError(f"library entry {entry.id!r} judges the {entry.band.upper()} "
                             f'field; remove band or write band = "{entry.band}"')
        f = 0.0 if band == "dc" else float(frequency_hz)
        if not entry.valid_at(f):
            raise ValueError(f"library entry {entry.id!r} covers {entry.f_min_hz:g}-"
                             f"{entry.f_max_hz:g} Hz, not the layout's {f:g} Hz; choose "
                             "another entry")
        return Rule(limit.name, kind, band, entry.value_uT(f), library_source(entry, f),
                    tuple(limit.places), entry)
    if limit.value_uT is None:
        raise ValueError("give the level as ut = <µT> or name a library entry as "
                         "library = \"<id>\"")
    value = float(limit.value_uT)
    if not (math.isfinite(value) and value > 0):
        raise ValueError(f"ut must be a positive number of µT, got {value!r}")
    return Rule(limit.name, limit.kind or "target", limit.band or "ac", value, limit.source,
                tuple(limit.places))
