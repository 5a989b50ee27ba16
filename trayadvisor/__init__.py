"""trayadvisor: lay single-core conductors in cable trays for low stray magnetic field.

The core (model, layoutfile, sources, field, contour, analysis, ranking, coupling, limits,
export, report) never imports the terminal UI; ``trayadvisor.tui`` and ``trayadvisor.cli`` sit
on top of it.
"""

__version__ = "0.1.0"
