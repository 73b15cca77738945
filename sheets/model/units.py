"""Units at the edges: parse user values into SI, format SI values for display.

Inside the package everything is SI (N, m, Pa, kg). A project states display
units per kind of quantity; a bare number in the file is read in those units,
a string such as ``"12.5 kN"`` carries its own unit and is parsed with pint.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache
from types import MappingProxyType
from typing import Mapping

import pint

# kind -> (SI unit, default display unit)
KINDS: Mapping[str, tuple[str, str]] = MappingProxyType(
    {
        "force": ("N", "kN"),
        "length": ("m", "m"),
        "displacement": ("m", "mm"),
        "stress": ("Pa", "MPa"),
        "area": ("m**2", "mm**2"),
        "second_moment": ("m**4", "mm**4"),
        "density": ("kg/m**3", "kg/m**3"),
        "mass": ("kg", "kg"),
        "volume": ("m**3", "m**3"),
        "load_path": ("N*m", "kN*m"),
    }
)


@lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    return pint.UnitRegistry(cache_folder=None)


class UnitProblem(ValueError):
    """A value or unit that cannot be read; the message says why."""


@lru_cache(maxsize=256)
def si_factor(unit: str, kind: str) -> float:
    """How many SI units of ``kind`` one ``unit`` is (e.g. kN -> 1000)."""
    ureg = registry()
    si_unit = KINDS[kind][0]
    try:
        q = ureg.Quantity(1.0, unit)
    except Exception as exc:  # pint raises several error types
        raise UnitProblem(f"unknown unit '{unit}'") from exc
    if q.dimensionality != ureg.Quantity(1.0, si_unit).dimensionality:
        raise UnitProblem(f"'{unit}' is not a unit of {kind.replace('_', ' ')} (expected something like {KINDS[kind][1]})")
    return float(q.to(si_unit).magnitude)


def parse_value(value: object, kind: str, display_unit: str) -> float:
    """A number (in ``display_unit``) or a string with a unit -> SI float."""
    if isinstance(value, bool):
        raise UnitProblem(f"expected a {kind.replace('_', ' ')}, got {value!r}")
    if isinstance(value, (int, float)):
        result = float(value) * si_factor(display_unit, kind)
    elif isinstance(value, str):
        text = value.strip()
        try:
            number = float(text)
        except ValueError:
            result = _parse_quantity(text, kind)
        else:
            result = number * si_factor(display_unit, kind)
    else:
        raise UnitProblem(f"expected a number or a string with a unit for a {kind.replace('_', ' ')}, got {value!r}")
    if not math.isfinite(result):
        raise UnitProblem(f"value {value!r} is not a finite number")
    return result


def _parse_quantity(text: str, kind: str) -> float:
    ureg = registry()
    try:
        q = ureg.Quantity(text)
    except Exception as exc:
        raise UnitProblem(f"cannot read {text!r} as a {kind.replace('_', ' ')} (write it like \"12.5 {KINDS[kind][1]}\")") from exc
    si_unit = KINDS[kind][0]
    if not isinstance(q, pint.Quantity) or q.dimensionality != ureg.Quantity(1.0, si_unit).dimensionality:
        raise UnitProblem(f"{text!r} is not a {kind.replace('_', ' ')} (expected a unit like {KINDS[kind][1]})")
    return float(q.to(si_unit).magnitude)


@dataclass(frozen=True)
class DisplayUnits:
    """Display unit per kind of quantity; SI values are divided by ``factor``."""

    units: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({k: v[1] for k, v in KINDS.items()}))

    def unit(self, kind: str) -> str:
        return self.units[kind]

    def factor(self, kind: str) -> float:
        return si_factor(self.units[kind], kind)

    def to_display(self, value_si, kind: str):
        return value_si / self.factor(kind)

    def label(self, kind: str) -> str:
        """Unit as printed on sheets and tables: 'mm**2' -> 'mm^2', 'kN*m' -> 'kN m'."""
        return self.units[kind].replace("**", "^").replace("*", " ")
