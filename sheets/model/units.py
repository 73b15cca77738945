"""Units at the edges: parse user values into SI, format SI values for display.

Inside the package everything is SI (N, m, Pa, kg). A project states display
units per kind of quantity; a bare number in the file is read in those units,
a string such as ``"12.5 kN"`` carries its own unit and is parsed with pint.

pint is imported, and its registry built (about half a second), only for a unit
outside ``COMMON_FACTORS``: the SI units a project names most often are read
from that table, whose every factor a test compares with pint's.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from functools import lru_cache
from types import MappingProxyType
from typing import TYPE_CHECKING, Mapping

if TYPE_CHECKING:
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


# Largest magnitude accepted for any value, in SI. Beyond it a value is surely a slip of unit or
# exponent, and squares and sums of such values (lengths, load norms) would overflow a float.
MAX_MAGNITUDE = 1e20


def _powers(factors: dict[str, float], power: int) -> dict[str, float]:
    """{"mm": 1e-3} -> {"mm**2": 1e-6, "mm^2": 1e-6}: the two ways a file writes a power."""
    return {f"{u}{sep}{power}": f**power for u, f in factors.items() for sep in ("**", "^")}


_METRES = {"m": 1.0, "mm": 0.001, "cm": 0.01}
# kind -> {unit as written: how many SI units it is}, computed as pint computes them (prefix ** power)
COMMON_FACTORS: Mapping[str, Mapping[str, float]] = MappingProxyType({
    "force": {"N": 1.0, "kN": 1000.0, "MN": 1000000.0},
    "length": {**_METRES, "km": 1000.0},
    "displacement": dict(_METRES),
    "stress": {"Pa": 1.0, "kPa": 1000.0, "MPa": 1000000.0, "GPa": 1000000000.0, "N/mm**2": 1000000.0, "N/mm^2": 1000000.0},
    "area": _powers(_METRES, 2),
    "second_moment": _powers(_METRES, 4),
    "density": {"kg/m**3": 1.0, "kg/m^3": 1.0},
    "mass": {"kg": 1.0},
    "volume": _powers({"m": 1.0}, 3),
    "load_path": {"N*m": 1.0, "kN*m": 1000.0},
})
_NUMBER_AND_UNIT = re.compile(r"^([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(\S+)$")


@lru_cache(maxsize=1)
def registry() -> "pint.UnitRegistry":
    import pint

    return pint.UnitRegistry(cache_folder=None)


class UnitProblem(ValueError):
    """A value or unit that cannot be read; the message says why."""


@lru_cache(maxsize=256)
def si_factor(unit: str, kind: str) -> float:
    """How many SI units of ``kind`` one ``unit`` is (e.g. kN -> 1000)."""
    common = COMMON_FACTORS[kind].get(unit)
    if common is not None:
        return common
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
    if isinstance(value, int) and abs(value) > MAX_MAGNITUDE:  # float() of a huge int overflows
        raise UnitProblem(f"an integer of {int(math.log10(abs(value))) + 1} digits is beyond the ±{MAX_MAGNITUDE:.0e} (SI) "
                          "this tool accepts (a slip of unit or exponent?)")
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
    if math.isnan(result) or (math.isinf(result) and "inf" in str(value).lower()):
        raise UnitProblem(f"value {value!r} is not a finite number")
    if not abs(result) <= MAX_MAGNITUDE:  # an overflow to infinity included
        size = f"{result:.3g} {KINDS[kind][0]}, " if math.isfinite(result) else ""
        raise UnitProblem(f"value {value!r} is {size}beyond the ±{MAX_MAGNITUDE:.0e} (SI) this tool accepts "
                          "(a slip of unit or exponent?)")
    return result


def _parse_quantity(text: str, kind: str) -> float:
    found = _NUMBER_AND_UNIT.match(text)
    if found and found.group(2) in COMMON_FACTORS[kind]:
        return float(found.group(1)) * COMMON_FACTORS[kind][found.group(2)]
    import pint

    ureg = registry()
    try:
        q = ureg.Quantity(text)
    except Exception as exc:
        raise UnitProblem(f"cannot read {text!r} as a {kind.replace('_', ' ')} (write it like \"12.5 {KINDS[kind][1]}\")") from exc
    si_unit = KINDS[kind][0]
    if not isinstance(q, pint.Quantity) or q.dimensionality != ureg.Quantity(1.0, si_unit).dimensionality:
        raise UnitProblem(f"{text!r} is not a {kind.replace('_', ' ')} (expected a unit like {KINDS[kind][1]})")
    try:
        return float(q.to(si_unit).magnitude)
    except OverflowError:  # pint keeps a long integer as it is: "1000...0 furlong"
        return math.inf  # parse_value refuses it as beyond the accepted magnitude


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
