"""The ``[[strata]]`` tables of site.toml: keys, units, limits and required parameters.

Each key of a stratum maps to a :class:`sitesettle.site.Stratum` field with a
dimension; the same numeric keys may be given per interval in the boreholes
file (measured values that override the stratum's).
"""

from __future__ import annotations

import math
import warnings

from sitesettle import units
from sitesettle.errors import InputError, InputWarning
from sitesettle.io.tables import parse_flag, suggest
from sitesettle.io.text import identifier
from sitesettle.options import Behaviour, Drainage, EndOfPrimary, GranularMethod
from sitesettle.site import Stratum

#: numeric keys of a stratum: key → (Stratum field, dimension)
QUANTITY_KEYS: dict[str, tuple[str, str]] = {
    "unit_weight": ("unit_weight", "unit_weight"),
    "saturated_unit_weight": ("saturated_unit_weight", "unit_weight"),
    "poisson_ratio": ("poisson", "dimensionless"),
    "youngs_modulus": ("youngs_modulus", "pressure"),
    "cone_resistance": ("cone_resistance", "pressure"),
    "spt_n": ("spt_n", "dimensionless"),
    "compression_index": ("compression_index", "dimensionless"),
    "recompression_index": ("recompression_index", "dimensionless"),
    "void_ratio": ("void_ratio", "dimensionless"),
    "preconsolidation": ("preconsolidation", "pressure"),
    "ocr": ("ocr", "dimensionless"),
    "consolidation_coefficient": ("consolidation_coefficient", "diffusivity"),
    "secondary_index": ("secondary_index", "dimensionless"),
    "undrained_modulus": ("undrained_modulus", "pressure"),
    "end_of_primary": ("end_of_primary", "time"),
    "pore_pressure_coefficient": ("pore_pressure_coefficient", "dimensionless"),
}
#: other keys: key → kind
OTHER_KEYS: dict[str, str] = {
    "name": "text",
    "behaviour": "choice",
    "method": "choice",
    "drainage": "choice",
    "gravel": "flag",
    "fine_or_silty": "flag",
    "description": "text",
}
ALL_KEYS = [
    "name",
    "behaviour",
    "description",
    *QUANTITY_KEYS,
    "method",
    "drainage",
    "gravel",
    "fine_or_silty",
]

#: the value of ``cone_resistance`` that takes qc from the cone soundings
FROM_SOUNDINGS = "from soundings"

#: hard limits (errors): field → (lowest, lowest allowed?, highest, highest allowed?)
VALID: dict[str, tuple[float, bool, float, bool]] = {
    "unit_weight": (0.0, False, math.inf, False),
    "saturated_unit_weight": (0.0, False, math.inf, False),
    "poisson": (0.0, True, 0.5, False),
    "youngs_modulus": (0.0, False, math.inf, False),
    "cone_resistance": (0.0, False, math.inf, False),
    "spt_n": (0.0, False, math.inf, False),
    "compression_index": (0.0, False, math.inf, False),
    "recompression_index": (0.0, True, math.inf, False),
    "void_ratio": (0.0, False, math.inf, False),
    "preconsolidation": (0.0, False, math.inf, False),
    "ocr": (1.0, True, math.inf, False),
    "consolidation_coefficient": (0.0, False, math.inf, False),
    "secondary_index": (0.0, True, math.inf, False),
    "undrained_modulus": (0.0, False, math.inf, False),
    "end_of_primary": (0.0, False, math.inf, False),
    # Skempton's A: about 0–1.5 from heavily overconsolidated to sensitive clays
    # (Skempton 1954; Skempton & Bjerrum 1957)
    "pore_pressure_coefficient": (-0.5, True, 1.5, True),
}
#: plausible ranges (bad input outside), core units: a value outside is almost
#: certainly a typing or unit error, not a soil. Wide on purpose; the source of each
#: bound is beside it. field → (lowest, highest, source)
PLAUSIBLE: dict[str, tuple[float, float, str]] = {
    # peat about 10 kN/m³, dense gravel and weak rock about 23 (common practice)
    "unit_weight": (8.0, 28.0, "common practice: peat about 10, dense gravel about 23 kN/m³"),
    "saturated_unit_weight": (9.0, 28.0, "common practice: peat about 10.5, dense gravel 23"),
    # very soft clay and peat about 0.2–1 MPa; very dense gravel about 200 MPa; weak
    # rock a few GPa (common practice; Bowles 1996, Table 5-6, from memory)
    "youngs_modulus": (100.0, 5.0e6, "common practice: peat about 0.2 MPa, weak rock a few GPa"),
    # a standard cone's capacity is about 50–100 MPa; very soft clay about 0.1 MPa
    "cone_resistance": (50.0, 100.0e3, "common practice: very soft clay 0.1 MPa, cone capacity"),
    # refusal is 50 blows per test drive; extrapolated values seldom beyond 200
    "spt_n": (0.0, 300.0, "common practice: refusal at 50 blows, extrapolated N rarely > 200"),
    # sands about 0.005, clays 0.1–1, peats up to about 10 (common practice)
    "compression_index": (0.002, 10.0, "common practice: sand 0.005, clay 0.1–1, peat up to 10"),
    "recompression_index": (0.0, 2.0, "common practice: Cr about 1/5–1/10 of Cc"),
    "void_ratio": (0.1, 15.0, "common practice: dense gravel 0.3, clay 0.5–3, peat up to 12"),
    "preconsolidation": (1.0, 20.0e3, "common practice: 1 kPa to 20 MPa"),
    "ocr": (1.0, 100.0, "common practice: heavily overconsolidated clays reach 20–50"),
    # clays 0.1–100 m²/yr, silts up to about 1000 (common practice; Holtz & Kovacs 1981)
    "consolidation_coefficient": (1.0e-3, 1.0e4, "common practice: clay 0.1–100, silt 1000 m²/yr"),
    # Cα about 0.001–0.05 for clays, up to about 0.1–0.3 for peats (Mesri 1973)
    "secondary_index": (0.0, 0.5, "Mesri (1973): clays 0.001–0.05, peats up to about 0.3"),
    "undrained_modulus": (100.0, 2.0e6, "common practice: Eu about 150–1500 × su"),
    "end_of_primary": (1.0e-3, 1000.0, "a time between about 9 hours and 1000 years"),
}
#: usual ranges (warnings outside, inside the plausible range), core units; common
#: practice for soils
USUAL: dict[str, tuple[float, float]] = {
    "unit_weight": (12.0, 25.0),
    "saturated_unit_weight": (14.0, 25.0),
    "youngs_modulus": (500.0, 2.0e6),
    "cone_resistance": (200.0, 60.0e3),
    "spt_n": (1.0, 100.0),
    "compression_index": (0.01, 3.0),
    "void_ratio": (0.2, 5.0),
    "consolidation_coefficient": (0.01, 300.0),
    "secondary_index": (0.0, 0.1),
    "undrained_modulus": (500.0, 5.0e5),
}
_UNITS = {
    "unit_weight": "kN/m³",
    "pressure": "kPa",
    "diffusivity": "m²/yr",
    "time": "yr",
    "dimensionless": "",
}
#: units a number written without one may have been meant in: dimension →
#: [(unit as the user would write it, core value of one such unit)]
_MEANT: dict[str, tuple[tuple[str, float], ...]] = {
    "pressure": (
        ("MPa", 1e3),
        ("GPa", 1e6),
        ("Pa", 1e-3),
        ("bar", 100.0),
        ("psi", 6.894757),
        ("ksf", 47.88026),
        ("psf", 0.04788026),
        ("tsf", 95.76052),
    ),
    # a density in kg/m³ written as a unit weight: ρ·g
    "unit_weight": (("kg/m³ (a density)", 9.80665e-3), ("pcf", 0.1570875), ("N/m³", 1e-3)),
    "diffusivity": (
        ("m²/s", 3.15576e7),
        ("cm²/s", 3.15576e3),
        ("m²/day", 365.25),
        ("m²/month", 12.0),
        ("ft²/day", 33.93),
    ),
    "time": (("days", 1 / 365.25), ("months", 1 / 12), ("hours", 1 / 8766.0)),
    "dimensionless": (("%", 0.01),),
}


def _num(x: float) -> str:
    """A number for messages: no exponent for the sizes soil parameters have.

    >>> _num(5e6), _num(0.002), _num(25.0)
    ('5,000,000', '0.002', '25')
    >>> _num(25000.0)
    '25,000'
    """
    return f"{x:,.0f}" if abs(x) >= 1e4 else f"{x:.4g}"


def _probably_meant(value: float, lo: float, hi: float, dimension: str) -> str:
    """Name a unit in which the number, read again, falls inside [lo, hi]."""
    for unit, factor in _MEANT.get(dimension, ()):
        if lo <= value * factor <= hi:
            core = _UNITS.get(dimension, "")
            shown = f"{_num(value * factor)}{' ' + core if core else ''}"
            written = f"{value:g} {unit.split(' (')[0]}"
            return f'; if the number is in {unit} it is {shown}: write the unit, e.g. "{written}"'
    return "; check the value and write its unit"


def check_value(field: str, value: float, where: str, dimension: str) -> float:
    """Check a soil parameter in core units against its limits and ranges.

    Raises InputError outside the hard limits of ``field`` (:data:`VALID`) or its
    plausible range (:data:`PLAUSIBLE`, naming the unit the number was probably
    meant in); warns outside its usual range (:data:`USUAL`).
    """
    unit = _UNITS.get(dimension, "")
    shown = f"{value:g}{' ' + unit if unit else ''}"
    lo, lo_ok, hi, hi_ok = VALID.get(field, (-math.inf, True, math.inf, True))
    if value < lo or (value == lo and not lo_ok) or value > hi or (value == hi and not hi_ok):
        low = f"{'≥' if lo_ok else '>'} {lo:g}"
        high = f" and {'≤' if hi_ok else '<'} {hi:g}" if math.isfinite(hi) else ""
        raise InputError(where, f"{shown} is out of range", f"a value {low}{high}")
    if field in PLAUSIBLE:
        a, b, source = PLAUSIBLE[field]
        if not a <= value <= b:
            raise InputError(
                where,
                f"{shown} is outside the plausible range {_num(a)}–{_num(b)}"
                f"{' ' + unit if unit else ''}" + _probably_meant(value, a, b, dimension),
                f"a value in {_num(a)}–{_num(b)}{' ' + unit if unit else ''} ({source})",
            )
    if field in USUAL:
        a, b = USUAL[field]
        if not a <= value <= b:
            warnings.warn(
                f"{where}: {shown} is outside the usual range {a:g}–{b:g}"
                f"{' ' + unit if unit else ''}; check the value and its unit",
                InputWarning,
                stacklevel=3,
            )
    return value


def parse_stratum(table: dict, where: str) -> Stratum:
    """One ``[[strata]]`` table as a :class:`Stratum` (units converted, limits checked).

    Parameters
    ----------
    table : dict
        The keys of the stratum as read from TOML.
    where : str
        Place for messages (``'site.toml [[strata]] 2 ("clay")'``).
    """
    if "behavior" in table:  # the US spelling is accepted
        if "behaviour" in table:
            raise InputError(
                f"{where}, key 'behavior'",
                'both "behaviour" and "behavior" are given',
                "one of the two spellings",
            )
        table = {("behaviour" if k == "behavior" else k): v for k, v in table.items()}
    for key in table:
        if key not in QUANTITY_KEYS and key not in OTHER_KEYS:
            raise InputError(
                f"{where}, key {key!r}",
                "unknown key" + suggest(key, ALL_KEYS),
                f"one of {', '.join(ALL_KEYS)}",
            )
    if "name" not in table or not str(table["name"]).strip():
        raise InputError(where, 'the key "name" is missing', 'a name such as name = "dense sand"')
    name = identifier(str(table["name"]).strip(), f"{where}, key 'name'", "stratum name")
    if "behaviour" not in table:
        raise InputError(
            f"{where}, key 'behaviour'",
            "the key is missing",
            'behaviour = "granular", "cohesive" or "rigid"',
        )
    kw: dict = {
        "name": name,
        "behaviour": Behaviour.parse(table["behaviour"], f"{where}, key 'behaviour'"),
    }
    for key, (field, dim) in QUANTITY_KEYS.items():
        if key not in table:
            continue
        value = table[key]
        kwhere = f"{where}, key {key!r}"
        if (
            key == "cone_resistance"
            and isinstance(value, str)
            and " ".join(value.lower().replace("_", " ").split()) == FROM_SOUNDINGS
        ):
            kw["use_soundings"] = True
            continue
        kw[field] = check_value(field, units.parse(value, dim, kwhere), kwhere, dim)
    if "method" in table:
        kw["method"] = GranularMethod.parse(table["method"], f"{where}, key 'method'")
    if "drainage" in table:
        kw["drainage"] = Drainage.parse(table["drainage"], f"{where}, key 'drainage'")
    for key in ("gravel", "fine_or_silty"):
        if key in table:
            kw[key] = parse_flag(table[key], f"{where}, key {key!r}")
    s = Stratum(**kw)
    if s.saturated_unit_weight < s.unit_weight:
        warnings.warn(
            f"{where}: the saturated unit weight {s.saturated_unit_weight:g} kN/m³ is below "
            f"the unit weight above water {s.unit_weight:g} kN/m³",
            InputWarning,
            stacklevel=2,
        )
    if s.behaviour != Behaviour.GRANULAR and "method" in table:
        raise InputError(
            f"{where}, key 'method'",
            f"a granular method on a {s.behaviour} stratum",
            "no method key (it applies to granular strata)",
        )
    if (
        s.recompression_index is not None
        and s.compression_index is not None
        and s.recompression_index > s.compression_index
    ):
        raise InputError(
            f"{where}, key 'recompression_index'",
            f"Cr = {s.recompression_index:g} is larger than Cc = {s.compression_index:g}",
            "a recompression index below the compression index (Cr is usually Cc/10 to Cc/5, "
            "common practice)",
        )
    if s.ocr is not None and s.preconsolidation is not None:
        raise InputError(
            f"{where}, key 'ocr'", "both ocr and preconsolidation are given", "one of them"
        )
    return s


def parse_strata(tables, where: str = "site.toml") -> tuple[Stratum, ...]:
    """The ordered ``[[strata]]`` list (top-down): unique names, a rigid stratum only last."""
    if not isinstance(tables, list) or not tables:
        raise InputError(
            where, "no [[strata]] tables", "one [[strata]] table per stratum, top-down"
        )
    strata = []
    for i, t in enumerate(tables, start=1):
        if not isinstance(t, dict):
            raise InputError(
                f"{where} strata", "strata must be [[strata]] tables", "[[strata]] tables"
            )
        label = f"{where} [[strata]] {i}" + (f" ({t['name']!r})" if "name" in t else "")
        strata.append(parse_stratum(t, label))
    names = [s.name for s in strata]
    for i, s in enumerate(strata):
        if names.index(s.name) != i:
            raise InputError(
                f"{where} [[strata]] {i + 1}",
                f'the stratum name "{s.name}" is used twice',
                "a unique name per stratum",
            )
        if s.behaviour == Behaviour.RIGID and i != len(strata) - 1:
            raise InputError(
                f"{where} [[strata]] {i + 1} ({s.name!r})",
                "a rigid stratum is not the last one",
                "the rigid base as the last [[strata]] table (the integration stops at it)",
            )
    return tuple(strata)


def check_requirements(
    strata,
    *,
    granular_method: GranularMethod,
    end_of_primary: EndOfPrimary,
    measured: dict[str, set[str]],
    has_soundings: bool,
    where: str = "site.toml",
    clay_settlement: str = "oedometer",
) -> None:
    """Raise InputError naming the stratum and key when a method lacks a parameter.

    ``measured`` maps a stratum name to the Stratum fields that some borehole
    interval gives (they count as given).
    """

    def given(s: Stratum, f: str) -> bool:
        return getattr(s, f) is not None or f in measured.get(s.name, set())

    for i, s in enumerate(strata, start=1):
        place = f"{where} [[strata]] {i} ({s.name!r})"
        if s.behaviour == Behaviour.GRANULAR:
            method = s.method or granular_method
            if s.use_soundings and not has_soundings:
                raise InputError(
                    f"{place}, key 'cone_resistance'",
                    '"from soundings" but the project has no soundings file',
                    "a [soundings] file, or a cone resistance value",
                )
            if method == GranularMethod.BURLAND_BURBIDGE:
                if not given(s, "spt_n"):
                    raise InputError(
                        f"{place}, key 'spt_n'",
                        "Burland & Burbidge needs the SPT blow count, which is missing",
                        "spt_n on the stratum or per interval in the boreholes file",
                    )
            elif not (given(s, "youngs_modulus") or given(s, "cone_resistance") or s.use_soundings):
                raise InputError(
                    f"{place}, key 'youngs_modulus'",
                    f"the {method} method needs a modulus or a cone resistance; neither is given",
                    'youngs_modulus, or cone_resistance (a value or "from soundings")',
                )
        elif s.behaviour == Behaviour.COHESIVE:
            for f in ("compression_index", "void_ratio", "consolidation_coefficient"):
                if not given(s, f):
                    raise InputError(
                        f"{place}, key {f!r}",
                        "consolidation needs this parameter, which is missing",
                        f"{f} on the stratum or per interval in the boreholes file",
                    )
            if not (given(s, "preconsolidation") or given(s, "ocr")):
                raise InputError(
                    f"{place}, key 'ocr'",
                    "neither preconsolidation nor ocr is given",
                    "ocr = 1 for a normally consolidated clay, or the preconsolidation pressure",
                )
            normally = (
                s.ocr == 1.0
                and "ocr" not in measured.get(s.name, set())
                and "preconsolidation" not in measured.get(s.name, set())
            )
            if not normally and not given(s, "recompression_index"):
                raise InputError(
                    f"{place}, key 'recompression_index'",
                    "an overconsolidated clay needs the recompression index, which is missing",
                    "recompression_index (Cr), or ocr = 1",
                )
            if str(clay_settlement) == "skempton_bjerrum" and not given(
                s, "pore_pressure_coefficient"
            ):
                raise InputError(
                    f"{place}, key 'pore_pressure_coefficient'",
                    '[analysis] clay_settlement = "skempton_bjerrum" needs Skempton\'s A',
                    "pore_pressure_coefficient = 0.6 (about 0.2–0.5 overconsolidated, "
                    "0.7–1 normally consolidated clay)",
                )
            if (
                end_of_primary == EndOfPrimary.GIVEN
                and s.secondary_index > 0
                and not given(s, "end_of_primary")
            ):
                raise InputError(
                    f"{place}, key 'end_of_primary'",
                    '[analysis] end_of_primary = "given" but this stratum gives no time',
                    'end_of_primary = "2 yr" (a time) on the stratum',
                )
