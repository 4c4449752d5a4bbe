"""Quantities inside sentences (reasons, limits, warnings) in the output units.

The engine writes its messages in SI ("total 81.7 mm > 50 mm", "pressure 210 kPa").
With ``--units us`` every output line says the same in US customary units:
:func:`in_units` rewrites each number followed by an SI unit, with the exact
factors of NIST SP 811 (2008), Appendix B (1 in = 25.4 mm, 1 ft = 0.3048 m,
1 kip = 4.4482216152605 kN, 1 ksf = 47.880259 kPa). Settlements are written in
inches to 2 decimals (docs/outputs.md, precision rules).
"""

from __future__ import annotations

import re

#: exact factors, NIST SP 811 (2008) Appendix B.8 / B.9
_FT = 0.3048  # m
_KIP = 4.4482216152605  # kN
_KSF = _KIP / _FT**2  # kPa
_KSI = _KSF * 144 / 1000  # MPa (kip per square inch)

_NUM = r"(?<![\w.])(-?\d+(?:,\d{3})*(?:\.\d+)?)"
#: 1 lbf/ft³ in kN/m³
_PCF = _KIP / _FT**3 / 1000.0
#: SI unit → (US unit, factor from the SI unit, decimals); longest first
_RULES: tuple[tuple[str, str, float, int], ...] = (
    ("kN/m³", "pcf", 1.0 / _PCF, 1),
    ("kN/m^3", "pcf", 1.0 / _PCF, 1),
    ("kN/m", "kip/ft", _FT / _KIP, 2),
    ("m²/yr", "ft²/yr", 1.0 / _FT**2, 2),
    ("MPa", "ksi", 1.0 / _KSI, 2),
    ("kPa", "ksf", 1.0 / _KSF, 3),
    ("kN", "kip", 1.0 / _KIP, 1),
    ("mm", "in", 1.0 / 25.4, 2),
    ("m", "ft", 1.0 / _FT, 2),
)
_COMPILED = [
    (re.compile(_NUM + r"(\s?)" + re.escape(si) + r"(?![\w²³/^])"), us, f, d)
    for si, us, f, d in _RULES
]


def to_us(text: str) -> str:
    """``text`` with every SI quantity written in US customary units.

    >>> to_us("total 81.7 mm > 50 mm (EN 1997-1:2004 Annex H)")
    'total 3.22 in > 1.97 in (EN 1997-1:2004 Annex H)'
    >>> to_us("footing A9 is 412 m from the nearest footing; q = 150 kPa, 60 kN/m")
    'footing A9 is 1351.71 ft from the nearest footing; q = 3.133 ksf, 4.11 kip/ft'
    >>> to_us("EN 1997-1:2004, 1/500, 12 months")
    'EN 1997-1:2004, 1/500, 12 months'
    """
    out = str(text)
    for rx, us, factor, dec in _COMPILED:

        def repl(m, us=us, factor=factor, dec=dec):
            raw = m.group(1).replace(",", "")
            try:
                v = float(raw)
            except ValueError:
                return m.group(0)
            return f"{v * factor:.{dec}f}{m.group(2)}{us}"

        out = rx.sub(repl, out)
    return out


def in_units(text: str, units: str) -> str:
    """``text`` as is for ``"si"``, through :func:`to_us` for ``"us"``."""
    return to_us(text) if str(units).lower() == "us" else str(text)
