"""Plain JSON values of records: the one conversion used by every JSON the project writes."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any


def json_safe(value: Any) -> Any:
    """A JSON-safe copy: NaN and infinities become None, tuples lists, numpy scalars Python
    numbers, mapping keys text."""
    if isinstance(value, Mapping):
        return {str(k): json_safe(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [json_safe(v) for v in value]
    if value is None or isinstance(value, str | bool):
        return value
    if hasattr(value, "item"):  # a numpy scalar
        value = value.item()
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    return value
