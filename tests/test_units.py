"""Unit parsing against published conversion factors.

Source: NIST Special Publication 811 (2008 edition), "Guide for the Use of the
International System of Units (SI)", Appendix B.8/B.9 conversion factors.
"""

import pytest

from planshear.units import (
    AREA_LOAD,
    FORCE,
    LENGTH,
    LINE_LOAD,
    PRESSURE,
    STIFFNESS,
    OutputUnits,
    QuantityError,
    parse_quantity,
)


@pytest.mark.parametrize(
    ("text", "dimension", "si", "source"),
    [
        ("1 psf", AREA_LOAD, 4.788026e1, "SP 811 B.9: pound-force per square foot → Pa 4.788026 E+01"),
        ("1 kip", FORCE, 4.448222e3, "SP 811 B.9: kip (1 kip = 1000 lbf) → N 4.448222 E+03"),
        ("1 ksi", PRESSURE, 6.894757e6, "SP 811 B.9: kip per square inch → Pa 6.894757 E+06"),
        ("1 psi", PRESSURE, 6.894757e3, "SP 811 B.9: pound-force per square inch → Pa 6.894757 E+03"),
        ("1 plf", LINE_LOAD, 1.459390e1, "SP 811 B.9: pound-force per foot → N/m 1.459390 E+01"),
        ("1 lbf/in", STIFFNESS, 1.751268e2, "SP 811 B.9: pound-force per inch → N/m 1.751268 E+02"),
        ("1 in", LENGTH, 2.54e-2, "SP 811 B.9: inch → m 2.54 E-02 (exact)"),
        ("1 ft", LENGTH, 3.048e-1, "SP 811 B.9: foot → m 3.048 E-01 (exact)"),
        ("2.5 kPa", AREA_LOAD, 2500.0, "SI prefix"),
        ("14 kip/in", STIFFNESS, 14 * 1.751268e5, "SP 811 B.9 via lbf/in"),
    ],
)
def test_published_factors(text, dimension, si, source):
    assert parse_quantity(text, dimension, "ft") == pytest.approx(si, rel=1e-6), source


def test_bare_number_suggests_unit():
    with pytest.raises(QuantityError, match='"14 kip/in"'):
        parse_quantity(14, STIFFNESS, "ft")
    with pytest.raises(QuantityError, match='"22 kPa"'):
        parse_quantity(22, AREA_LOAD, "m")


def test_wrong_dimension_is_named():
    with pytest.raises(QuantityError, match="is not a stiffness.*kip/in"):
        parse_quantity("14 ft", STIFFNESS, "ft")


@pytest.mark.parametrize("text", ["14 furlongs/in", "abc", "", "1 kip +", "nan kip", "inf kip"])
def test_unreadable_text_is_a_quantity_error(text):
    with pytest.raises(QuantityError):
        parse_quantity(text, FORCE, "ft")


def test_output_units_round_trip():
    units = OutputUnits.for_plan("ft")
    assert units.force_out(4448.2216152605) == pytest.approx(1.0)
    assert units.line_force_out(1.459390e1) == pytest.approx(1e-3, rel=1e-6)  # 1 plf = 0.001 kip/ft
    assert units.displacement_out(0.0254) == pytest.approx(1.0)
    assert units.stiffness_out(1.751268e5) == pytest.approx(1.0, rel=1e-6)  # 1 kip/in (SP 811 B.9 via lbf/in)
    si = OutputUnits.for_plan("m")
    assert si.force_out(1000.0) == 1.0 and si.displacement_out(0.001) == pytest.approx(1.0)


@pytest.mark.parametrize(
    ("text", "dimension", "kips"),
    [
        ("40 k", FORCE, 40.0),
        ("40 kips", FORCE, 40.0),
        ("40k", FORCE, 40.0),
        ("14 k/in", STIFFNESS, 14.0),
        ("14 kips/in", STIFFNESS, 14.0),
        ("0.3 k/ft", LINE_LOAD, 0.3),
        ("1e8 k", FORCE, 1e8),
    ],
)
def test_k_and_kips_are_kip(text, dimension, kips):
    """A lone "k" and "kips" are the trade's abbreviations of kip (common practice); 1 kip =
    4.448222 E+03 N (SP 811 B.9). pint alone read "k" as Boltzmann's constant."""
    per = {FORCE: 4.448222e3, STIFFNESS: 4.448222e3 / 0.0254, LINE_LOAD: 4.448222e3 / 0.3048}[dimension]
    assert parse_quantity(text, dimension, "ft") == pytest.approx(kips * per, rel=1e-6)


@pytest.mark.parametrize(
    ("text", "dimension", "message"),
    [
        ("40 K", FORCE, '"K" is kelvin'),  # kelvin, not kips: ambiguous, refused with a hint
        ("14 K/in", STIFFNESS, '"K" is kelvin'),
        ("40 kft", FORCE, "is not a force"),  # kilofoot to pint; not a force
        ("40 kN", STIFFNESS, "is not a stiffness"),  # the prefix k is untouched
    ],
)
def test_ambiguous_k_spellings_are_refused(text, dimension, message):
    with pytest.raises(QuantityError, match=message):
        parse_quantity(text, dimension, "ft")
