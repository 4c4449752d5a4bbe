"""Units at the edge: conversion factors against their definitions, header units, warnings."""

import math

import pytest

from sitesettle import units
from sitesettle.errors import InputError, InputWarning
from sitesettle.io.project import parse_limit
from sitesettle.io.strata import parse_stratum
from sitesettle.io.tables import parse_csv

# Exact definitions, NIST SP 811 (2008), Appendix B: 1 ft = 0.3048 m exactly
# (international foot, 1959); 1 lbf = 4.4482216152605 N exactly (pound mass
# 0.45359237 kg times standard gravity 9.80665 m/s²).
FT = 0.3048
LBF = 4.4482216152605  # N
KIP = 1000 * LBF
# Floats carry ~16 digits; the derived factors go through a few products → rtol 1e-12.
EXACT = 1e-12


@pytest.mark.parametrize(
    "text, dimension, expected",
    [
        ("1 ft", "length", FT),
        ("12 in", "length", FT),  # 12 in = 1 ft, by definition
        ("1 lbf", "force", LBF / 1000),
        ("56 kip", "force", 56 * KIP / 1000),
        ("1 ksf", "pressure", KIP / FT**2 / 1000),  # kip per square foot
        ("1 psf", "pressure", LBF / FT**2 / 1000),
        ("1 tsf", "pressure", 2000 * LBF / FT**2 / 1000),  # short ton (2000 lbf) per ft²
        ("120 pcf", "unit_weight", 120 * LBF / FT**3 / 1000),  # lbf per cubic foot
        ("25 MPa", "pressure", 25_000.0),
        ("0.8 m^2/yr", "diffusivity", 0.8),
        ("1 ft^2/day", "diffusivity", FT**2 * 365.25),  # pint's year is the Julian year, 365.25 d
        ("6 months", "time", 0.5),
        ("30 %", "dimensionless", 0.3),
        ("1.2 m", "length", 1.2),
    ],
)
def test_unit_factors_match_their_definitions(text, dimension, expected):
    assert units.parse(text, dimension, "x") == pytest.approx(expected, rel=EXACT)


def test_ksf_in_kpa_to_the_printed_digits():
    # NIST SP 811 Appendix B.8 prints 1 kip/in² = 6.894 757 E+03 kPa → ksf = that / 144
    assert units.parse("1 ksf", "pressure", "x") == pytest.approx(6894.757 / 144, rel=1e-6)


def test_wrong_dimension_names_the_place_and_the_dimension():
    with pytest.raises(
        InputError, match=r'footings.csv row 2, column "width": "3 kg" is .*; expected a length'
    ):
        units.parse("3 kg", "length", 'footings.csv row 2, column "width"')


def test_header_unit_applies_to_bare_numbers_only():
    t = parse_csv("id,width [ft]\nA,4\nB,1.2 m\n", "f.csv")
    assert t.quantity(t.rows[0], "width", "length") == pytest.approx(4 * FT, rel=EXACT)
    assert t.quantity(t.rows[1], "width", "length") == pytest.approx(1.2, rel=EXACT)


def test_header_unit_of_the_wrong_dimension_is_an_error_naming_the_column():
    t = parse_csv("id,width [kPa]\nA,4\n", "f.csv")
    with pytest.raises(InputError, match=r'f.csv column "width \[kPa\]".*expected a length'):
        t.check_columns({"id": "text", "width": "length"}, strict=True)


# pint multiplies juxtaposed numbers and ignores commas; read as it would, each
# of these is silently wrong by a large factor (common practice: a European
# thousands separator "1 250 kN" or decimal comma "1,5 m" in a spreadsheet cell)
@pytest.mark.parametrize(
    ("value", "dimension", "would_be", "match"),
    [
        ("1 250 kN", "force", 250.0, "not one number followed by its unit"),
        ("8 50 kN", "force", 400.0, "not one number followed by its unit"),
        ("3 m 2", "length", 6.0, "not one number followed by its unit"),
        ("5 ft 6 in", "length", None, "not one number followed by its unit"),
        ("12 kN/m2", "pressure", None, "powers as"),
        ("1,5 m", "length", 15.0, "has a comma"),
        ("1,250 kN", "force", 1250.0, "decimal mark"),
    ],
)
def test_text_that_pint_would_misread_is_refused(value, dimension, would_be, match):
    with pytest.raises(InputError, match=match):
        units.parse(value, dimension, "footings.csv row 4")
    if would_be is not None:  # the reading refused: what pint makes of it
        q = units.registry().Quantity(value.replace(",", ""))
        assert q.to(units.DIMENSIONS[dimension][0]).magnitude == pytest.approx(would_be)


@pytest.mark.parametrize(
    ("value", "dimension", "expected"),
    [
        ("0.8 m^2/yr", "diffusivity", 0.8),
        ("12 kN/m²", "pressure", 12.0),
        ("12 kN/m**2", "pressure", 12.0),
        ("12 kN/m^(2)", "pressure", 12.0),
        ("2.5e3 kN", "force", 2500.0),
        ("-3.5 kPa", "pressure", -3.5),
        (".5 m", "length", 0.5),
        ("6 months", "time", 0.5),
        ("4 ft", "length", 4 * FT),  # NIST SP 811: 1 ft = 0.3048 m exactly
    ],
)
def test_one_number_and_its_unit_with_powers_is_read(value, dimension, expected):
    assert units.parse(value, dimension, "x") == pytest.approx(expected, rel=EXACT)


@pytest.mark.parametrize("value", ["nan", "inf", "-inf"])
def test_nan_and_infinity_are_refused(value):
    with pytest.raises(InputError, match="not a finite number"):
        units.parse(value, "length", "x")


@pytest.mark.parametrize(
    "text, unit, expected",
    [
        ("1/500", "-", 0.002),
        ("25 mm", "m", 0.025),
        ("1 in", "m", 0.0254),  # 1 in = 25.4 mm exactly (NIST SP 811)
        ("0.2 %", "-", 0.002),
        # an angle limit on a ratio becomes its slope: tan(1°) = 0.017455 (trigonometry)
        ("1 deg", "-", math.tan(math.radians(1.0))),
        # tilt is in radians: 1° = π/180 rad; a ratio is taken as radians (small angle)
        ("1 deg", "rad", math.pi / 180),
        ("1/250", "rad", 0.004),
    ],
)
def test_limits_in_the_unit_of_their_measure(text, unit, expected):
    assert parse_limit(text, "x", unit) == pytest.approx(expected, rel=EXACT)


@pytest.mark.parametrize(
    "text, unit, match",
    [
        ("1/500", "m", "expected a length"),
        ("25 mm", "-", "is a length"),
        ("-1/500", "-", "not positive"),
    ],
)
def test_limits_of_the_wrong_kind(text, unit, match):
    with pytest.raises(InputError, match=match):
        parse_limit(text, "x", unit)


@pytest.mark.parametrize(
    "value, unit, measure",
    [
        (75, "m", "total"),  # would be a 75 m limit: every footing passes
        ("75", "m", "total"),
        (0.002, "-", "angular_distortion"),
        ("0.002", "-", "angular_distortion"),
        (0.004, "rad", "tilt"),
    ],
)
def test_bare_number_limit_refused(value, unit, measure):
    with pytest.raises(InputError, match="has no unit; expected a limit with its unit or as a"):
        parse_limit(value, "x", unit, measure)


@pytest.mark.parametrize(
    "value, unit, measure",
    [
        ("75 m", "m", "total"),  # a 75 m settlement limit is a unit slip (mm meant)
        ("0.1 mm", "m", "differential"),
        ("1/2", "-", "angular_distortion"),  # a slope of 1 in 2 is a collapse, not a limit
        ("1/1000000", "-", "angular_distortion"),
    ],
)
def test_implausible_limit_refused(value, unit, measure):
    # plausible ranges of limits: common practice (the published limits lie well inside)
    with pytest.raises(InputError, match="outside the plausible range"):
        parse_limit(value, "x", unit, measure)


def test_suspicious_modulus_warns_but_loads():
    # 300 kPa: plausible (peat, very soft clay about 0.2–1 MPa) but outside the usual
    # 0.5 MPa–2 GPa (common practice): loads with a warning
    with pytest.warns(InputWarning, match="youngs_modulus.*300 kPa is outside the usual range"):
        s = parse_stratum(
            {"name": "sand", "behaviour": "granular", "youngs_modulus": "300 kPa"}, "site.toml"
        )
    assert s.youngs_modulus == 300.0


@pytest.mark.parametrize(
    "key, value, meant",
    [
        # 25 kPa is two orders below any soil modulus (common practice): MPa meant
        ("youngs_modulus", 25, '"25 MPa"'),
        # 1800 as a unit weight is a density in kg/m³ (1800 × 9.80665 / 1000 = 17.65 kN/m³)
        ("unit_weight", 1800, '"1800 kg/m³"'),
        # cv 3e-8 m²/yr is nothing; 3e-8 m²/s = 0.95 m²/yr (365.25 d/yr)
        ("consolidation_coefficient", 3e-8, '"3e-08 m²/s"'),
        # Cα = 2 is a percentage: 0.02
        ("secondary_index", 2, '"2 %"'),
        # qc 8 kPa: MPa meant (common practice, cone readings are MPa)
        ("cone_resistance", 8, '"8 MPa"'),
    ],
)
def test_implausible_soil_parameter_refused(key, value, meant):
    # plausible ranges: docs/input.md, the source beside each (common practice)
    with pytest.raises(InputError, match="outside the plausible range") as err:
        parse_stratum({"name": "s", "behaviour": "granular", key: value}, "site.toml")
    assert meant in str(err.value)
    assert f"key {key!r}" in str(err.value)


def test_recompression_index_above_compression_index_refused():
    # Cr is a fraction of Cc (about 1/10–1/5, common practice); Cr > Cc is a swapped pair
    with pytest.raises(InputError, match="Cr = 0.3 is larger than Cc = 0.05"):
        parse_stratum(
            {
                "name": "c",
                "behaviour": "cohesive",
                "compression_index": 0.05,
                "recompression_index": 0.3,
            },
            "site.toml",
        )


def test_suspicious_unit_weight_warns():
    # 11 kN/m³: plausible (peat, common practice) but outside the usual 12–25 kN/m³
    with pytest.warns(InputWarning, match="unit_weight.*outside the usual range"):
        parse_stratum(
            {
                "name": "sand",
                "behaviour": "granular",
                "unit_weight": 11,
                "saturated_unit_weight": 12,
                "youngs_modulus": "20 MPa",
            },
            "site.toml",
        )


def test_pcf_unit_weight_is_plausible():
    # 120 pcf = 18.85 kN/m³ (NIST factors above), a normal soil: no warning (warnings are errors)
    s = parse_stratum(
        {
            "name": "sand",
            "behaviour": "granular",
            "unit_weight": "120 pcf",
            "saturated_unit_weight": "125 pcf",
            "youngs_modulus": "20 MPa",
        },
        "site.toml",
    )
    assert s.unit_weight == pytest.approx(120 * LBF / FT**3 / 1000, rel=EXACT)
