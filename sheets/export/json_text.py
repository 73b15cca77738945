"""JSON documents laid out for a reader and written at the speed of the C encoder.

Python's json module uses its fast C encoder only for compact output; with
``indent`` every value goes through the pure-Python encoder (0.6 s for the
results of a 1,000-member frame). Here only the outer levels are laid out, one
entry a line, and every entry below is encoded compactly in one call.
"""

from __future__ import annotations

import json
from typing import Any


def compact(value: Any) -> str:
    return json.dumps(value, ensure_ascii=False, allow_nan=False, separators=(", ", ": "))


def _records(value: Any) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, dict) for v in value)


def json_text(doc: Any, levels: int = 1) -> str:
    """``doc`` with its mappings opened (one key a line) down to ``levels`` deep, and lists of records
    one level further (one record a line); everything deeper on one line."""
    return _laid_out(doc, 0, levels) + "\n"


def _laid_out(value: Any, depth: int, levels: int) -> str:
    pad = " " * (depth + 1)
    if isinstance(value, dict) and value and depth < levels:
        entries = [f"{pad}{json.dumps(k, ensure_ascii=False)}: {_laid_out(v, depth + 1, levels)}" for k, v in value.items()]
        return "{\n" + ",\n".join(entries) + "\n" + " " * depth + "}"
    if _records(value) and depth <= levels:
        return "[\n" + ",\n".join(f"{pad}{compact(v)}" for v in value) + "\n" + " " * depth + "]"
    return compact(value)
