"""The key tables of layout format 1: which tables and keys exist, their types and defaults.

One place for the reader, the writer and the checks, so they cannot drift apart. Keys are
documented in ``docs/file-format.md``; keys may be added to the format, never renamed.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from trayadvisor.model import (
    Circuit,
    Conductor,
    Limit,
    ObservationArea,
    ObservationLine,
    ObservationPoint,
    Plate,
    Tray,
)

#: The value of the ``format`` key this version reads and writes.
FORMAT = "trayadvisor/1"

#: (type, required) of one key. Types: "str", "num" (int or float, stored as float), "int",
#: "bool", "harm" (an inline table of harmonic order = fraction), "strs" (an array of strings,
#: stored as a tuple).
KeySpec = tuple[str, bool]


@dataclass(frozen=True)
class Table:
    """One kind of ``[[table]]``: the model class it builds and its keys in writing order."""

    model: type
    attr: str  # the Layout attribute holding these objects
    keys: dict[str, KeySpec]
    fields: dict[str, str] = field(default_factory=dict)  # file key -> model field, if other

    def field_of(self, key: str) -> str:
        """The model field a file key is stored in."""
        return self.fields.get(key, key)


TABLES: dict[str, Table] = {
    "tray": Table(Tray, "trays", {
        "name": ("str", True), "x_mm": ("num", True), "y_mm": ("num", True),
        "width_mm": ("num", True), "depth_mm": ("num", True), "sheet": ("str", False),
        "sheet_mm": ("num", False), "cover": ("bool", False)}),
    # A plate's ``tray`` is set only on the plates generated from a sheet tray: no file key.
    "plate": Table(Plate, "plates", {
        "name": ("str", True), "x_mm": ("num", True), "y_mm": ("num", True),
        "width_mm": ("num", True), "height_mm": ("num", True), "material": ("str", False),
        "mu_r": ("num", False), "sigma_s_per_m": ("num", False), "body": ("str", False)}),
    "circuit": Table(Circuit, "circuits", {
        "name": ("str", True), "system": ("str", True), "current_a": ("num", False),
        "angle_deg": ("num", False), "harmonics": ("harm", False),
        "length_m": ("num", False), "screen_bonding": ("str", False)}),
    "conductor": Table(Conductor, "conductors", {
        "name": ("str", True), "circuit": ("str", True), "phase": ("str", True),
        "x_mm": ("num", True), "y_mm": ("num", True), "diameter_mm": ("num", True),
        "area_mm2": ("num", False), "material": ("str", False), "current_a": ("num", False),
        "angle_deg": ("num", False), "fixed": ("bool", False), "tray": ("str", False),
        "screen_area_mm2": ("num", False), "screen_diameter_mm": ("num", False),
        "screen_material": ("str", False)}),
    "point": Table(ObservationPoint, "points", {
        "name": ("str", True), "x_mm": ("num", True), "y_mm": ("num", True)}),
    "line": Table(ObservationLine, "lines", {
        "name": ("str", True), "x0_mm": ("num", True), "y0_mm": ("num", True),
        "x1_mm": ("num", True), "y1_mm": ("num", True), "samples": ("int", False)}),
    "area": Table(ObservationArea, "areas", {
        "name": ("str", True), "x0_mm": ("num", True), "y0_mm": ("num", True),
        "x1_mm": ("num", True), "y1_mm": ("num", True)}),
    "limit": Table(Limit, "limits", {
        "name": ("str", True), "ut": ("num", False), "library": ("str", False),
        "source": ("str", False), "kind": ("str", False), "band": ("str", False),
        "places": ("strs", False)},
        fields={"ut": "value_uT"}),
}

#: Keys before the first table.
TOP: dict[str, KeySpec] = {"format": ("str", True), "title": ("str", False),
                           "frequency_hz": ("num", False), "earth_y_mm": ("num", False)}
#: Every name allowed at the top level: the keys, then the table kinds.
TOP_LEVEL_NAMES: tuple[str, ...] = (*TOP, *TABLES)
#: An example value of each type, for the hints in error messages.
EXAMPLES: dict[str, str] = {"str": '"text"', "num": "1.0", "int": "101", "bool": "true",
                            "harm": "{ 3 = 0.05, 5 = 0.20 }", "strs": '["QR-desk", "QR-wall"]'}
