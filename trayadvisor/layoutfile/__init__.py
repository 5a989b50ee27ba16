"""Layout files, format 1 (TOML): reading with line numbers, checks, atomic writing.

- :mod:`~trayadvisor.layoutfile.schema` — the tables and keys of the format (one place).
- :mod:`~trayadvisor.layoutfile.reader` — ``read_layout`` / ``parse_layout``: bounded reads,
  TOML, every problem as one ``FILE:LINE: message``; the built-in demo layout.
- :mod:`~trayadvisor.layoutfile.checks` — ``layout_problems`` / ``validate_layout`` on a model
  (from a file or edited in the UI); the checks of places, screens and plates (with sheet
  trays) are in ``placechecks``, ``screenchecks`` and ``platechecks``.
- :mod:`~trayadvisor.layoutfile.linemap` — where each key was written (tomllib gives none).
- :mod:`~trayadvisor.layoutfile.writer` — ``dumps_layout`` / ``write_layout`` and
  ``atomic_write_text`` (a temp file in the same folder, then ``os.replace``).
- :mod:`~trayadvisor.layoutfile.errors` — ``LayoutError``, the one user-facing error.

The format is documented in ``docs/file-format.md``.
"""

from trayadvisor.layoutfile.checks import layout_problems, validate_layout
from trayadvisor.layoutfile.errors import LayoutError
from trayadvisor.layoutfile.linemap import LineMap
from trayadvisor.layoutfile.reader import demo_path, parse_layout, read_layout
from trayadvisor.layoutfile.schema import FORMAT
from trayadvisor.layoutfile.writer import atomic_write_text, dumps_layout, write_layout

__all__ = [
    "FORMAT",
    "LayoutError",
    "LineMap",
    "atomic_write_text",
    "demo_path",
    "dumps_layout",
    "layout_problems",
    "parse_layout",
    "read_layout",
    "validate_layout",
    "write_layout",
]
