"""Find the line of a dotted key path in TOML text, for error messages.

tomllib gives line numbers only for syntax errors, so after parsing we scan the
text once: table headers set the current prefix, ``key = value`` lines add
``prefix.key``; the i-th ``[[name]]`` block of an array of tables is ``name.i``
(0-based, the index the loader puts in its key paths). A path not found falls
back to its longest known prefix.
"""

from __future__ import annotations

import re

_HEADER = re.compile(r"^\s*\[\[?\s*([^\]]+?)\s*\]\]?\s*(#.*)?$")
_ASSIGN = re.compile(r"^\s*((?:\"[^\"]*\"|'[^']*'|[A-Za-z0-9_\-]+)(?:\s*\.\s*(?:\"[^\"]*\"|'[^']*'|[A-Za-z0-9_\-]+))*)\s*=")
_PART = re.compile(r"\"([^\"]*)\"|'([^']*)'|([A-Za-z0-9_\-]+)")


def _split(dotted: str) -> tuple[str, ...]:
    return tuple(next(g for g in m.groups() if g is not None) for m in _PART.finditer(dotted))


class KeyLines:
    """Maps key paths (tuples of strings) to 1-based line numbers."""

    def __init__(self, text: str):
        self._lines: dict[tuple[str, ...], int] = {}
        prefix: tuple[str, ...] = ()
        blocks: dict[tuple[str, ...], int] = {}  # array-of-tables name -> blocks seen
        for number, line in enumerate(text.splitlines(), start=1):
            header = _HEADER.match(line)
            if header and not _ASSIGN.match(line):
                prefix = _split(header.group(1))
                self._lines.setdefault(prefix, number)
                if line.lstrip().startswith("[["):
                    blocks[prefix] = blocks.get(prefix, -1) + 1
                    prefix = prefix + (str(blocks[prefix]),)
                    self._lines.setdefault(prefix, number)
                continue
            assign = _ASSIGN.match(line)
            if assign:
                self._lines.setdefault(prefix + _split(assign.group(1)), number)

    def line(self, path: tuple[str, ...]) -> int | None:
        for cut in range(len(path), 0, -1):
            found = self._lines.get(tuple(path[:cut]))
            if found is not None:
                return found
        return None
