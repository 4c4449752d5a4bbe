"""Quantities at the edges: one pint registry and :func:`parse`.

The core of sitesettle works in plain floats in these units (its "SI" contract):

=================  ===========  ==========================================
dimension          core unit    examples accepted on input
=================  ===========  ==========================================
``length``         m            ``1.2``, ``"1.2 m"``, ``"4 ft"``, ``"18 in"``
``area``           m²           ``"2.5 m^2"``, ``"30 ft^2"``
``force``          kN           ``850``, ``"850 kN"``, ``"56 kip"``
``pressure``       kPa          ``150``, ``"150 kPa"``, ``"1.5 ksf"``, ``"25 MPa"``, ``"2 tsf"``
``unit_weight``    kN/m³        ``19``, ``"19 kN/m^3"``, ``"120 pcf"``
``diffusivity``    m²/yr        ``2``, ``"0.8 m^2/yr"``, ``"10 ft^2/day"``
``time``           yr           ``50``, ``"50 yr"``, ``"6 months"``
``angle``          degrees      ``30``, ``"30 deg"``, ``"0.5 rad"``
``dimensionless``  1            ``0.3``, ``"30 %"``
=================  ===========  ==========================================

A bare number takes the core unit of its dimension. ``tsf`` is the short (US) ton
of 2000 lbf per square foot, ``pcf`` is lbf/ft³, ``ksf`` is kip/ft² (NIST SP 811).
"""

from __future__ import annotations

import math
import re
from functools import lru_cache
from pathlib import Path

from sitesettle.errors import InputError

#: core unit and a human example for each dimension
DIMENSIONS: dict[str, tuple[str, str]] = {
    "length": ("m", '"1.2 m" or "4 ft"'),
    "area": ("m**2", '"2.5 m^2" or "30 ft^2"'),
    "force": ("kN", '"850 kN" or "56 kip"'),
    "pressure": ("kPa", '"150 kPa", "1.5 ksf" or "25 MPa"'),
    "unit_weight": ("kN/m**3", '"19 kN/m^3" or "120 pcf"'),
    "diffusivity": ("m**2/year", '"0.8 m^2/yr" or "10 ft^2/day"'),
    "time": ("year", '"50 yr" or "6 months"'),
    "angle": ("degree", '"30 deg" or "0.5 rad"'),
    "dimensionless": ("dimensionless", '"0.3" or "30 %"'),
}

_NAMES = {
    "length": "a length",
    "area": "an area",
    "force": "a force",
    "pressure": "a pressure",
    "unit_weight": "a unit weight",
    "diffusivity": "a coefficient of consolidation (area per time)",
    "time": "a time",
    "angle": "an angle",
    "dimensionless": "a plain number",
}


@lru_cache(maxsize=1)
def registry():
    """The one pint UnitRegistry of sitesettle, with the trade's US units added.

    pint's parsed unit definitions are cached on disk in the user's cache folder
    (``sitesettle/pint`` there; pint's ``cache_folder``, keyed on the definition
    files' content), which makes the registry ten times quicker to build on every
    later run; where that folder cannot be used the registry is built without it.
    """
    import pint

    try:
        import platformdirs  # a dependency of pint ≥ 0.24

        folder = Path(platformdirs.user_cache_dir("sitesettle")) / "pint"
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=folder)
    except Exception:  # no cache folder (read-only home, an older pint): parse afresh
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    ureg.define("pcf = lbf / foot ** 3")
    ureg.define("ksf = kip / foot ** 2")
    ureg.define("psf = lbf / foot ** 2")
    ureg.define("tsf = 2000 * lbf / foot ** 2")
    return ureg


_NUMBER = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$")
#: a number followed by its unit; the unit may hold digits only as powers
_QUANTITY = re.compile(r"^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?\s*(?P<unit>.*)$", re.S)
_POWER = re.compile(r"(\*\*|\^)\s*\(?\s*[+-]?\d+(\.\d+)?\s*\)?")


#: names of common dimensions that are never valid input, for clearer messages
_OTHER = {
    "[mass]": "a mass",
    "[length] / [time]": "a speed",
    "[temperature]": "a temperature",
    "[mass] / [length] ** 3": "a density",
    "[length] ** 3": "a volume",
    "[mass] / [time] ** 2": "a force per length such as 15 kN/m (a line load)",
    "[mass] * [length] ** 2 / [time] ** 2": "an energy or a moment such as 20 kN·m",
    "[mass] * [length] / [time] ** 2 / [length] ** 3": "a unit weight",
    "[length] ** 2 / [time]": "a coefficient of consolidation",
    "[time]": "a time",
    "[current]": "an electric current",
    "[mass] * [length] ** 2 / [time] ** 3": "a power",
}
#: the base dimensions in words
_BASE_WORDS = {
    "[mass]": "mass",
    "[length]": "length",
    "[time]": "time",
    "[temperature]": "temperature",
    "[current]": "electric current",
    "[substance]": "amount of substance",
    "[luminosity]": "luminosity",
}
_POWER_WORDS = {2: "squared", 3: "cubed"}


def dimension_words(dims) -> str:
    """A pint dimensionality in words: ``[mass] / [time] ** 2`` → ``mass per time squared``."""
    up, down = [], []
    for base, power in sorted(dict(dims).items()):
        word = _BASE_WORDS.get(base, base.strip("[]"))
        p = abs(power)
        if p != 1:
            word += " " + _POWER_WORDS.get(p, f"to the power {p:g}")
        (up if power > 0 else down).append(word)
    text = " × ".join(up) or "one"
    if down:
        text += " per " + " per ".join(down)
    return text


def _describe(q) -> str:
    dims = q.dimensionality
    if dims == registry()("dimensionless").dimensionality:
        return "a plain number (or an angle)"  # angles are dimensionless in pint
    for name, (unit, _) in DIMENSIONS.items():
        if dims == registry()(unit).dimensionality:
            return _NAMES[name]
    return _OTHER.get(str(dims), f"of dimension {dimension_words(dims)}")


def parse(value: object, dimension: str, where: str) -> float:
    """Parse a value with an optional unit into a float in the core unit.

    Parameters
    ----------
    value : str, int or float
        ``"150 kPa"``, ``"4 ft"``, ``12.5`` (a bare number takes the core unit).
    dimension : str
        One of the keys of :data:`DIMENSIONS`.
    where : str
        The place of the value, used in the error message.

    Returns
    -------
    float
        The value in the core unit of ``dimension``. NaN and infinities are refused.

    Examples
    --------
    >>> round(parse("4 ft", "length", "x"), 6)
    1.2192
    >>> round(parse("1 ksf", "pressure", "x"), 4)
    47.8803
    >>> parse(12, "pressure", "x")
    12.0
    """
    unit, example = DIMENSIONS[dimension]
    if isinstance(value, bool):
        raise InputError(
            where, f"{value!r} is not a number", f"{_NAMES[dimension]} such as {example}"
        )
    if isinstance(value, (int, float)):
        out = float(value)
    else:
        text = str(value).strip()
        if not text:
            raise InputError(where, "the value is empty", f"{_NAMES[dimension]} such as {example}")
        if _NUMBER.match(text):
            out = float(text)
        elif text.lower() in ("nan", "inf", "-inf", "+inf", "infinity", "-infinity"):
            out = float(text)
        else:
            _check_one_number(text, value, where, dimension, example)
            text = (
                text.replace("^", "**")
                .replace("%", " percent")
                .replace("²", "**2")
                .replace("³", "**3")
            )
            ureg = registry()
            try:
                q = ureg.Quantity(text)
            except Exception:  # pint raises many kinds of errors on unparseable text
                raise _unreadable(value, where, dimension, example) from None
            if not isinstance(q, ureg.Quantity):
                out = float(q)
            else:
                try:
                    out = float(q.to(unit).magnitude)
                except Exception:
                    raise InputError(
                        where,
                        f'"{value}" is {_describe(q)}',
                        f"{_NAMES[dimension]} such as {example}",
                    ) from None
    if not math.isfinite(out):
        raise InputError(
            where, f'"{value}" is not a finite number', f"{_NAMES[dimension]} such as {example}"
        )
    return out


def _unreadable(value, where, dimension, example) -> InputError:
    return InputError(
        where,
        f'cannot read "{value}" as a number with a unit',
        f"{_NAMES[dimension]} such as {example}",
    )


def _check_one_number(text, value, where, dimension, example) -> None:
    """Refuse text that pint would read in a way nobody meant: it multiplies
    juxtaposed numbers ("1 250 kN" → 250 kN, "3 m 2" → 6 m) and drops commas
    ("1,5 m" → 15 m)."""
    if "," in text:
        raise InputError(
            where,
            f'"{value}" has a comma',
            f"{_NAMES[dimension]} with a point as the decimal mark and no thousands "
            f"separator, such as {example}",
        )
    m = _QUANTITY.match(text)
    if m is None:
        raise _unreadable(value, where, dimension, example)
    if re.search(r"\d", _POWER.sub("", m.group("unit"))):
        raise InputError(
            where,
            f'"{value}" is not one number followed by its unit',
            f'{_NAMES[dimension]} such as {example} (powers as "m^2", "m**2" or "m²"; '
            "no spaces or thousands separators inside the number)",
        )


def convert(value: float, dimension: str, unit: str) -> float:
    """Convert a core-unit float of ``dimension`` to ``unit`` (for output in other units)."""
    ureg = registry()
    return float(ureg.Quantity(value, DIMENSIONS[dimension][0]).to(unit).magnitude)
