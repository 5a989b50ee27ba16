"""Power-frequency magnetic-field limits with their sources, and the layout's own limits.

Every value here is an RMS magnetic flux density in µT. Levels published as a magnetic field
strength H (A/m) are converted with B = μ0·H (1 A/m = 1.2566 µT in air). Levels that depend
on frequency are given as a function of f, valid over the entry's frequency range.

``checked`` says whether the value was compared with a copy of the cited document's table
while this library was written; ``note`` names that copy, or says the value was recalled.
Recalled values are shown as such wherever the library is listed (``trayadvisor limits``,
reports). Check them against your own copy of the document before relying on them.

Comparing a computed field with these levels: the levels apply at one frequency. A field with
harmonics needs the multi-frequency summation or weighted-peak assessment the documents
describe; the resultant RMS field this tool reports combines all components, which is the
simple, usually conservative, comparison.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from trayadvisor.engine.units import UT_PER_A_PER_M
from trayadvisor.model import Layout, Limit

__all__ = ["LIBRARY", "UT_PER_A_PER_M", "LibraryLimit", "PerHz", "all_limits", "find",
           "library_at", "library_source"]


@dataclass(frozen=True)
class PerHz:
    """A level that falls as k / f (µT, f in Hz)."""

    k_ut_hz: float

    def __call__(self, frequency_hz: float) -> float:
        return self.k_ut_hz / frequency_hz

    def __str__(self) -> str:
        mant, exp = f"{self.k_ut_hz:.1e}".split("e")
        return f"{mant}e{int(exp)}/f"


@dataclass(frozen=True)
class LibraryLimit:
    """One published level.

    Attributes
    ----------
    name : str
        Short unique name, shown in tables and plots.
    level_uT : float or callable
        The level in µT, or a function of frequency (Hz) returning µT.
    f_min_hz, f_max_hz : float
        Frequency range over which ``ut`` is the document's level (inclusive).
    source : str
        Document, edition and table.
    checked : bool
        True when the value was compared with a copy of that table (see ``note``).
    note : str
        What it applies to, and what the value was checked against or that it was recalled.
    """

    name: str
    level_uT: float | Callable[[float], float]
    f_min_hz: float
    f_max_hz: float
    source: str
    checked: bool
    note: str

    def valid_at(self, frequency_hz: float) -> bool:
        return self.f_min_hz <= frequency_hz <= self.f_max_hz

    def value_uT(self, frequency_hz: float) -> float:
        """The level at ``frequency_hz`` (µT); ValueError outside the entry's range."""
        if not self.valid_at(frequency_hz):
            raise ValueError(f"{self.name}: {frequency_hz:g} Hz is outside "
                             f"{self.f_min_hz:g}-{self.f_max_hz:g} Hz")
        level = self.level_uT
        return float(level(frequency_hz)) if callable(level) else float(level)

    def formula(self) -> str:
        """The level as written in the library: '200' or '3.0e5/f'."""
        return str(self.level_uT) if callable(self.level_uT) else f"{self.level_uT:.4g}"


_ICNIRP = "ICNIRP 2010, Health Phys. 99(6):818-836"
_ICNIRP_COPY = ("checked against a reproduction of the reference-level tables of Health "
                "Phys. 99:818-836 (0.2e-3 T general public, 1e-3 T occupational)")
_EU = "Directive 2013/35/EU, Annex II, Table B2"
_IEEE = "IEEE Std C95.6-2002, Table 2 (MPE, head and torso)"
_IEEE_NOTE = ("recalled, not checked against C95.6 itself; consistent with a copy of "
              "its successor IEEE C95.1-2019 Table 2 (719 A/m and 2160 A/m, i.e. 0.904 mT and "
              "2.71 mT)")
_IEC = "IEC 61000-4-8:2009, Table 1 (continuous field)"
_IEC_NOTE = ("{h:g} A/m = {b:.4g} µT; levels 1-5 = 1, 3, 10, 30, 100 A/m recalled, not "
             "checked against the standard (test-laboratory pages agree on 3, 10 and 30 A/m)")


def _iec(level: int, a_per_m: float, use: str) -> LibraryLimit:
    b = a_per_m * UT_PER_A_PER_M
    return LibraryLimit(
        f"IEC 61000-4-8 level {level}", b, 50.0, 60.0, _IEC, False,
        f"equipment immunity test level, {use}; " + _IEC_NOTE.format(h=a_per_m, b=b))


#: The library, ordered from exposure levels to immunity levels.
LIBRARY: tuple[LibraryLimit, ...] = (
    LibraryLimit("ICNIRP 2010 general public", 200.0, 25.0, 400.0, _ICNIRP + ", Table 4", True,
                 "reference level, general public (160 A/m); " + _ICNIRP_COPY),
    LibraryLimit("ICNIRP 2010 occupational", 1000.0, 25.0, 300.0, _ICNIRP + ", Table 3", True,
                 "reference level, occupational exposure (800 A/m); " + _ICNIRP_COPY),
    LibraryLimit("2013/35/EU low AL", 1000.0, 25.0, 300.0, _EU, True,
                 "workers, low action level (sensory effects); checked against the Norwegian "
                 "transposition's table of lower action values (1000 µT, 25 Hz to 300 Hz)"),
    LibraryLimit("2013/35/EU high AL", PerHz(3.0e5), 25.0, 300.0, _EU, False,
                 "workers, high action level (health effects); 6000 µT at 50 Hz agrees with a "
                 "published summary, the 3.0e5/f form is recalled"),
    LibraryLimit("2013/35/EU limbs AL", PerHz(9.0e5), 25.0, 300.0, _EU, True,
                 "workers, action level for limbs in a localised field; 9.0e5/f checked "
                 "against the Norwegian transposition's table (18 mT at 50 Hz)"),
    LibraryLimit("IEEE C95.6 general public", 904.0, 20.0, 759.0, _IEEE, False,
                 "maximum permissible exposure, general public; " + _IEEE_NOTE),
    LibraryLimit("IEEE C95.6 controlled", 2710.0, 20.0, 759.0, _IEEE, False,
                 "maximum permissible exposure, controlled environment; " + _IEEE_NOTE),
    _iec(1, 1.0, "sensitive equipment with electron beams"),
    _iec(2, 3.0, "well-protected environment"),
    _iec(3, 10.0, "protected environment"),
    _iec(4, 30.0, "typical industrial environment"),
    _iec(5, 100.0, "severe industrial environment"),
)


def library_at(frequency_hz: float) -> tuple[tuple[LibraryLimit, float], ...]:
    """Library entries valid at ``frequency_hz`` with their value there (µT)."""
    return tuple((lim, lim.value_uT(frequency_hz)) for lim in LIBRARY
                 if lim.valid_at(frequency_hz))


def library_source(lim: LibraryLimit) -> str:
    """Source text carried into results: the document, and a flag when recalled."""
    return lim.source if lim.checked else f"{lim.source} [recalled, not checked]"


def all_limits(layout: Layout, frequency_hz: float | None = None) -> tuple[Limit, ...]:
    """Library levels valid at the layout's frequency, then the layout's own ``[[limit]]``s.

    Parameters
    ----------
    layout : Layout
    frequency_hz : float, optional
        Frequency to select and evaluate library levels at (default: the layout's).
    """
    f = float(layout.frequency_hz if frequency_hz is None else frequency_hz)
    lib = tuple(Limit(lim.name, ut, library_source(lim)) for lim, ut in library_at(f))
    return lib + tuple(layout.limits)


def find(name: str) -> LibraryLimit:
    """The library entry called ``name`` (KeyError if none)."""
    for lim in LIBRARY:
        if lim.name == name:
            return lim
    raise KeyError(name)
