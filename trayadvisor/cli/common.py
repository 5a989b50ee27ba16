"""Helpers shared by the sub-commands: loading layouts, printing, JSON."""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path
from typing import Any

from trayadvisor.coupling import DEFAULT_TEMPERATURE_C, check_temperature
from trayadvisor.layoutfile import LayoutError, read_layout
from trayadvisor.model import Layout
from trayadvisor.output import dumps


class UserError(Exception):
    """A clean one-line error for the user (exit status 2)."""


def load(path: str | Path) -> Layout:
    """Read and validate a layout, turning every problem into a :class:`UserError`."""
    try:
        return read_layout(path)
    except LayoutError as err:
        raise UserError(str(err)) from None


def parse_xy(text: str) -> tuple[float, float]:
    """Parse ``X,Y`` in mm for ``--at``."""
    try:
        x, y = (float(v) for v in text.split(","))
    except ValueError:
        raise UserError(f"--at {text!r}: expected X,Y in mm, e.g. --at 300,900") from None
    if not (math.isfinite(x) and math.isfinite(y)):
        raise UserError(f"--at {text!r}: coordinates must be finite numbers")
    return x, y


def positive(name: str, value: float) -> float:
    if not math.isfinite(value) or value <= 0:
        raise UserError(f"{name} {value}: must be a positive number")
    return value


def non_negative(name: str, value: float) -> float:
    if not math.isfinite(value) or value < 0:
        raise UserError(f"{name} {value}: must be zero or a positive number")
    return value


def current_model(args: Any) -> str:
    """The current model the flags ask for: ``"equal"`` with ``--equal-shares``, else the
    solved sharing (``--sharing``, the default, says the same)."""
    if getattr(args, "equal_shares", False) and getattr(args, "sharing", False):
        raise UserError("--equal-shares and --sharing contradict each other; give one")
    return "equal" if getattr(args, "equal_shares", False) else "solved"


def add_temperature(p: argparse.ArgumentParser) -> None:
    """``--temperature-c``: the conductor temperature of the resistance (solved sharing)."""
    p.add_argument("--temperature-c", type=float, default=DEFAULT_TEMPERATURE_C, metavar="T",
                   help="conductor temperature for the resistance in the solved sharing "
                   f"(default {DEFAULT_TEMPERATURE_C:g} °C)")


def temperature(args: Any) -> float:
    """The validated ``--temperature-c``."""
    try:
        return check_temperature(args.temperature_c)
    except ValueError as exc:
        raise UserError(f"--temperature-c {args.temperature_c}: {exc}, "
                        "e.g. --temperature-c 70") from None


def print_json(obj: Any) -> None:
    """Print ``obj`` as JSON (the one JSON writer; non-finite floats as null)."""
    sys.stdout.write(dumps(obj) + "\n")
