"""Units: parsing of quantity strings and the internal unit system.

Internally every quantity is a float in SI base units: newton, metre, pascal
(N/m for stiffness and line loads, N/m² for area weights). Plan coordinates are
converted from the plan's ``length_unit`` to metres when the plan is loaded.
Output units are chosen per plan (kip/ft/in for foot plans, kN/m/mm for metre
plans) by :class:`OutputUnits`.

Quantity strings are parsed by pint; this module only adds the trade's
abbreviations that pint lacks (psf, plf, klf, ksf, pcf) and reads a lone "k" as kip
("40 k", "14 k/in"; pint alone would take it for Boltzmann's constant). "kips" is
pint's own plural of kip. "K" stays kelvin and is refused with a hint.
"""

from __future__ import annotations

import math
import re
import sys
from dataclasses import dataclass

# pint imports dask when it is installed (about 0.3 s, for dask arrays, which planshear never
# hands it); dask is there for `planshear batch` only. Hide it from pint's check so that
# `planshear run` starts without it; a process that already imported dask is left alone.
_HIDE_DASK = "dask" not in sys.modules
if _HIDE_DASK:
    sys.modules["dask"] = None  # type: ignore[assignment]  # find_spec("dask") is None then
try:
    import pint
finally:
    if _HIDE_DASK:
        del sys.modules["dask"]

__all__ = [
    "UNITS",
    "Dimension",
    "QuantityError",
    "parse_quantity",
    "OutputUnits",
    "LENGTH_UNITS",
]

UNITS = pint.UnitRegistry()
# Trade abbreviations (US customary). lbf is the pound-force (NIST SP 811, B.8).
UNITS.define("psf = pound_force / foot ** 2")
UNITS.define("ksf = kip / foot ** 2")
UNITS.define("plf = pound_force / foot")
UNITS.define("klf = kip / foot")
UNITS.define("pcf = pound_force / foot ** 3")

#: A lone "k" (not part of a longer name such as kN or klf): the trade's abbreviation of
#: kip. Unambiguous here: no plan quantity involves Boltzmann's constant.
_LONE_K = re.compile(r"(?<![A-Za-z_])k(?![A-Za-z_0-9])")

#: Largest magnitude accepted for any quantity in SI units (beyond it a value is a typo or
#: would overflow later; a "rigid" wall of 1e6 kip/in is about 1.8e11 N/m).
PLAUSIBLE_LIMIT = 1e20

#: Plan length units allowed for bare coordinates, with their size in metres.
LENGTH_UNITS = {"ft": 0.3048, "m": 1.0}


@dataclass(frozen=True)
class Dimension:
    """A physical dimension expected for a plan field, with units to suggest."""

    name: str
    pint_dimensionality: str
    suggest_ft: str
    suggest_m: str

    def suggestion(self, length_unit: str) -> str:
        return self.suggest_ft if length_unit == "ft" else self.suggest_m


FORCE = Dimension("force", "[force]", "kip", "kN")
STIFFNESS = Dimension("stiffness (force per length)", "[force] / [length]", "kip/in", "kN/mm")
LINE_LOAD = Dimension("force per length", "[force] / [length]", "kip/ft", "kN/m")
AREA_LOAD = Dimension("force per area", "[force] / [length] ** 2", "psf", "kPa")
PRESSURE = Dimension("modulus (force per area)", "[force] / [length] ** 2", "ksi", "MPa")
LENGTH = Dimension("length", "[length]", "in", "mm")


class QuantityError(ValueError):
    """A quantity string could not be read; the message says what to write instead."""


def parse_quantity(value: object, dimension: Dimension, length_unit: str) -> float:
    """Parse ``value`` (a string such as ``"14 kip/in"``) to a float in SI base units.

    Raises :class:`QuantityError` with a message that suggests a unit when the value is a
    bare number, the unit is unknown or of the wrong dimension, or the number is not finite.
    """
    unit_hint = dimension.suggestion(length_unit)
    if isinstance(value, bool) or value is None:
        raise QuantityError(f'expected a {dimension.name} such as "1 {unit_hint}", got {value!r}')
    if isinstance(value, (int, float)):
        raise QuantityError(
            f'a bare number ({value}) needs a unit; write it as "{value} {unit_hint}"'
        )
    if not isinstance(value, str):
        raise QuantityError(
            f'expected a {dimension.name} as a string such as "1 {unit_hint}", got {type(value).__name__}'
        )
    text = value.strip()
    try:
        quantity = UNITS.Quantity(_LONE_K.sub("kip", text))
    except (pint.UndefinedUnitError, pint.errors.DefinitionSyntaxError) as exc:
        raise QuantityError(
            f'unknown unit in "{text}" ({exc}); use a unit such as "{unit_hint}"'
        ) from None
    except Exception:  # pint raises several parser errors for malformed text
        raise QuantityError(f'cannot read "{text}"; write a number and a unit such as "1 {unit_hint}"') from None
    if not isinstance(quantity, pint.Quantity) or quantity.dimensionless:
        raise QuantityError(
            f'"{text}" has no unit; write it as "{text} {unit_hint}"'
        )
    if not quantity.check(dimension.pint_dimensionality):
        kelvin = "[temperature]" in quantity.dimensionality
        raise QuantityError(
            f'"{text}" is not a {dimension.name} (its unit is {quantity.units:~}'
            + ('; "K" is kelvin, write "kip" or "k" for kips' if kelvin else "")
            + f'); use a unit such as "{unit_hint}"'
        )
    magnitude = float(quantity.to_base_units().magnitude)
    if not math.isfinite(magnitude):
        raise QuantityError(f'"{text}" is not a finite number')
    if abs(magnitude) > PLAUSIBLE_LIMIT:
        raise QuantityError(f'"{text}" is implausibly large for a {dimension.name}; check the number and the unit')
    return magnitude


@dataclass(frozen=True)
class OutputUnits:
    """Units used to report results: forces, plan positions, displacements."""

    force: str
    length: str
    displacement: str
    force_factor: float  # N per output force unit
    length_factor: float  # m per output length unit
    displacement_factor: float  # m per output displacement unit

    @property
    def line_force(self) -> str:
        return f"{self.force}/{self.length}"

    @classmethod
    def for_plan(cls, length_unit: str) -> OutputUnits:
        if length_unit == "ft":
            return cls(
                "kip", "ft", "in",
                float(UNITS.Quantity(1, "kip").to("N").magnitude), 0.3048, 0.0254,
            )
        return cls("kN", "m", "mm", 1000.0, 1.0, 0.001)

    def force_out(self, newtons):
        return newtons / self.force_factor

    def length_out(self, metres):
        return metres / self.length_factor

    def displacement_out(self, metres):
        return metres / self.displacement_factor

    def line_force_out(self, newtons_per_metre):
        """N/m → force per plan length (kip/ft or kN/m), e.g. unit shear."""
        return newtons_per_metre * self.length_factor / self.force_factor

    def stiffness_out(self, newtons_per_metre):
        """N/m → force per displacement unit (kip/in or kN/mm), e.g. wall stiffness, Gt."""
        return newtons_per_metre * self.displacement_factor / self.force_factor
