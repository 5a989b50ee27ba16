"""JSON for every output: inf and NaN become null (JSON has neither)."""

from __future__ import annotations

import json
import math
from typing import Any


def json_safe(obj: Any) -> Any:
    """A copy of ``obj`` with every non-finite float replaced by ``None``."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: json_safe(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [json_safe(v) for v in obj]
    return obj


def dumps(obj: Any, indent: int = 2) -> str:
    """JSON text of ``obj`` (UTF-8 characters kept, non-finite floats as null)."""
    return json.dumps(json_safe(obj), indent=indent, ensure_ascii=False)
