"""Built-in tolerable-movement criteria, every limit with its source.

A :class:`CriteriaSet` is a named group of :class:`Limit` values; :data:`CRITERIA`
holds the built-in sets and :func:`get_criteria` returns one, with the project's
overrides applied. The Bjerrum (1963) angular-distortion scale is kept whole in
:data:`BJERRUM_SCALE` so that a report can say which level each β reaches
(:func:`bjerrum_level`).

Measures and their core units (see docs/criteria.md):

======================== ===== ==========================================================
measure                  unit  meaning
======================== ===== ==========================================================
total                    m     settlement of one footing
differential             m     |s_a − s_b| of a pair of neighbouring footings
angular_distortion       \\-    β = |s_a − s_b| / span of a pair (relative rotation)
angular_distortion_hog   \\-    β limit for pairs on a structure line that hogs
tilt                     rad   rigid-body rotation of one footing
building_tilt            rad   rigid-body rotation of the whole building (plane fit)
deflection_ratio         \\-    Δ/L of a structure line (sagging; hogging too unless
                               deflection_ratio_hog is given)
deflection_ratio_hog     \\-    Δ/L limit of a hogging structure line
======================== ===== ==========================================================

A limit may apply to some kinds of foundation only (:attr:`Limit.applies_to`:
``"pad"``, ``"strip"``, ``"raft"``; see :func:`sitesettle.site.foundation_kind`):
Annex H's 50 mm total is worded for isolated foundations, not rafts.

Provenance follows the project's methods sheet: Eurocode 7 Annex H was checked
against the text [verified]; Bjerrum's scale is very widely reproduced; the
Skempton & MacDonald, Polshin & Tokar and Burland & Wroth figures are from memory
of the papers as reproduced in textbooks, and their notes say so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from sitesettle.errors import InputError

#: measure name → core unit
MEASURES: dict[str, str] = {
    "total": "m",
    "differential": "m",
    "angular_distortion": "-",
    "angular_distortion_hog": "-",
    "tilt": "rad",
    "building_tilt": "rad",
    "deflection_ratio": "-",
    "deflection_ratio_hog": "-",
}

_LABELS = {
    "total": "total settlement",
    "differential": "differential settlement",
    "angular_distortion": "angular distortion",
    "angular_distortion_hog": "angular distortion (hogging)",
    "tilt": "tilt",
    "building_tilt": "tilt of the building",
    "deflection_ratio": "deflection ratio",
    "deflection_ratio_hog": "deflection ratio (hogging)",
}

# --- sources (one string per publication, cited by every limit taken from it) ---------
EC7 = "EN 1997-1:2004 Annex H"
BJERRUM = "Bjerrum (1963)"
SKEMPTON_MACDONALD = "Skempton & MacDonald (1956)"
POLSHIN_TOKAR = "Polshin & Tokar (1957)"
TERZAGHI_PECK = "Terzaghi & Peck (1948), common practice"
BURLAND_WROTH = "Burland & Wroth (1974)"
OVERRIDE = "project override"

FROM_MEMORY = (
    "value from memory of the paper as reproduced in textbooks; confirm before relying on it"
)


@dataclass(frozen=True)
class Limit:
    """One tolerable-movement limit.

    Attributes
    ----------
    measure : str
        One of :data:`MEASURES`.
    value : float
        The limit in core units (m, rad or a ratio); a movement passes when it is ≤ value.
    unit : str
        Core unit of ``value`` (``"m"``, ``"rad"`` or ``"-"``).
    source : str
        Who says so (author, year, table or clause).
    note : str
        Context: the structure type it applies to, how sure we are of the figure.
    applies_to : tuple of str
        The kinds of foundation the limit is for (``"pad"``, ``"strip"``,
        ``"raft"``); empty: every kind. Only the ``total`` and ``tilt`` limits of
        single footings use it.
    """

    measure: str
    value: float
    unit: str
    source: str
    note: str = ""
    applies_to: tuple[str, ...] = ()

    def applies(self, kind: str) -> bool:
        """True when the limit is for foundations of ``kind``."""
        return not self.applies_to or kind in self.applies_to

    def describe(self) -> str:
        """Readable statement of the limit.

        >>> Limit("angular_distortion", 1 / 500, "-", EC7).describe()
        'angular distortion ≤ 1/500'
        >>> Limit("total", 0.05, "m", EC7).describe()
        'total settlement ≤ 50 mm'
        """
        return f"{_LABELS[self.measure]} ≤ {format_value(self.measure, self.value, exact=True)}"


#: below this ratio a movement is written "< 1/10,000" (docs/outputs.md, precision rules)
SMALLEST_RATIO = 1e-4


def one_in(value: float, *, exact: bool = False) -> str:
    """A small ratio as engineers write it: ``1/N``.

    A computed value (``exact=False``) gives N to 3 significant figures and
    ``"< 1/10,000"`` below :data:`SMALLEST_RATIO` (more digits would be spurious
    precision); a limit (``exact=True``) keeps its N as given.

    >>> one_in(1 / 388.6), one_in(1 / 142657), one_in(1 / 1678), one_in(1 / 2500, exact=True)
    ('1/389', '< 1/10,000', '1/1680', '1/2500')
    >>> one_in(0.0), one_in(-1 / 431)
    ('0', '-1/431')
    """
    if not math.isfinite(value):
        return "n/a"
    if value == 0:
        return "0"
    sign = "-" if value < 0 else ""
    v = abs(value)
    if exact:
        return f"{sign}1/{1 / v:.0f}"
    if v < SMALLEST_RATIO:
        return f"{sign}< 1/10,000"
    n = float(f"{1 / v:.3g}")
    return f"{sign}1/{n:.0f}"


def format_value(measure: str, value: float, *, exact: bool = False) -> str:
    """Format a movement or limit of ``measure`` for messages.

    A computed movement (``exact=False``) is written to 0.1 mm, a ratio as 1/N
    with N to 3 significant figures (:func:`one_in`); a limit (``exact=True``) as
    given (``50 mm``, ``1/500``).

    >>> format_value("total", 0.0612)
    '61.2 mm'
    >>> format_value("total", 0.05, exact=True)
    '50 mm'
    >>> format_value("tilt", 0.004)
    '1/250'
    >>> format_value("angular_distortion", 0.0)
    '0'
    """
    if not math.isfinite(value):
        return "n/a"
    if MEASURES[measure] == "m":
        return f"{value * 1000:.4g} mm" if exact else f"{value * 1000:.1f} mm"
    return one_in(value, exact=exact)


@dataclass(frozen=True)
class CriteriaSet:
    """A named set of limits; a movement without a limit in the set is reported, not judged."""

    name: str
    title: str
    limits: tuple[Limit, ...]
    description: str = ""

    def limit(self, measure: str, kind: str | None = None) -> Limit | None:
        """The limit on ``measure`` (for foundations of ``kind`` when given), or None."""
        for lim in self.limits:
            if lim.measure == measure and (kind is None or lim.applies(kind)):
                return lim
        return None

    @property
    def sources(self) -> tuple[str, ...]:
        """Every source cited by the set's limits, in order, without repeats."""
        return tuple(dict.fromkeys(lim.source for lim in self.limits))


# --- Bjerrum (1963) angular-distortion scale (METHODS.md §6.3) -------------------------


@dataclass(frozen=True)
class BjerrumLevel:
    """One level of Bjerrum's scale: β at which ``description`` applies."""

    key: str
    value: float
    description: str


#: Bjerrum (1963), limiting angular distortions, mildest first (widely reproduced,
#: e.g. in Das, Principles of Foundation Engineering; METHODS.md §6.3).
BJERRUM_SCALE: tuple[BjerrumLevel, ...] = (
    BjerrumLevel("machinery", 1 / 750, "difficulties with machinery sensitive to settlement"),
    BjerrumLevel("diagonal_frames", 1 / 600, "danger to frames with diagonals"),
    BjerrumLevel(
        "no_cracking", 1 / 500, "safe limit for buildings where cracking is not acceptable"
    ),
    BjerrumLevel(
        "first_cracking",
        1 / 300,
        "first cracking of panel walls expected; difficulties with overhead cranes",
    ),
    BjerrumLevel("tall_buildings", 1 / 250, "tilting of tall rigid buildings may become visible"),
    BjerrumLevel(
        "structural_damage",
        1 / 150,
        "considerable cracking of panel and brick walls; safe limit for flexible brick walls "
        "with h/L < 1/4; structural damage of general buildings feared",
    ),
)


def bjerrum_level(beta: float) -> str:
    """Say which level of Bjerrum's (1963) scale an angular distortion reaches.

    Parameters
    ----------
    beta : float
        Angular distortion |s_a − s_b| / span [-].

    Returns
    -------
    str
        The most severe level reached, or that none is reached.

    References
    ----------
    .. [1] Bjerrum, L. (1963). Allowable settlement of structures. Proc. European
       Conf. SMFE, Wiesbaden, 3, 135–137.

    Examples
    --------
    >>> bjerrum_level(1 / 400)
    'reaches 1/500: safe limit for buildings where cracking is not acceptable (Bjerrum 1963)'
    >>> bjerrum_level(1 / 1000)
    'below 1/750: no level of the scale reached (Bjerrum 1963)'
    """
    beta = abs(float(beta))
    if not math.isfinite(beta):
        return "not computed"
    reached = [lvl for lvl in BJERRUM_SCALE if beta >= lvl.value]
    if not reached:
        mildest = 1 / BJERRUM_SCALE[0].value
        return f"below 1/{mildest:.0f}: no level of the scale reached (Bjerrum 1963)"
    top = reached[-1]
    return f"reaches 1/{1 / top.value:.0f}: {top.description} (Bjerrum 1963)"


# --- the built-in sets ------------------------------------------------------------------


def _lim(
    measure: str, value: float, source: str, note: str = "", applies_to: tuple[str, ...] = ()
) -> Limit:
    return Limit(measure, value, MEASURES[measure], source, note, applies_to)


#: isolated (spread) foundations in the sense of EN 1997-1 Annex H: pads and strips
ISOLATED = ("pad", "strip")


def _bjerrum_set(level: BjerrumLevel) -> CriteriaSet:
    if level.key == "tall_buildings":
        # Bjerrum's 1/250 is the tilt at which a tall rigid building's lean becomes
        # visible: a limit on rigid-body tilt, not on distortion.
        return CriteriaSet(
            name=f"bjerrum_{level.key}",
            title=f"Bjerrum (1963): tilt ≤ 1/{1 / level.value:.0f}",
            limits=(
                _lim("building_tilt", level.value, BJERRUM, level.description),
                _lim("tilt", level.value, BJERRUM, level.description + " (a tower on one raft)"),
            ),
            description=(
                "Tilt only (the building's plane and each footing), at the level: "
                f"{level.description}."
            ),
        )
    return CriteriaSet(
        name=f"bjerrum_{level.key}",
        title=f"Bjerrum (1963): β ≤ 1/{1 / level.value:.0f}",
        limits=(_lim("angular_distortion", level.value, BJERRUM, level.description),),
        description=f"Angular distortion only, at the level: {level.description}.",
    )


def _skempton_macdonald(soil: str, foundation: str) -> CriteriaSet:
    # METHODS.md §6.2 [M]: maximum settlement clay 75 mm (rafts 75–125), sand 50 mm
    # (rafts 50–75); greatest differential clay 45 mm, sand 32 mm; β 1/300 (damage limit).
    total = {"clay": 0.075, "sand": 0.050}[soil]
    differential = {"clay": 0.045, "sand": 0.032}[soil]
    raft_range = {"clay": "75–125 mm", "sand": "50–75 mm"}[soil]
    total_note = f"maximum settlement, {soil}, {foundation}; {FROM_MEMORY}"
    if foundation == "rafts":
        total_note = (
            f"maximum settlement, {soil}, rafts: the paper gives a range of {raft_range}; "
            f"the lower end is used; {FROM_MEMORY}"
        )
    return CriteriaSet(
        name=f"skempton_macdonald_{soil}_{foundation}",
        title=f"Skempton & MacDonald (1956), {soil}, {foundation.replace('_', ' ')}",
        limits=(
            _lim("total", total, SKEMPTON_MACDONALD, total_note),
            _lim(
                "differential",
                differential,
                SKEMPTON_MACDONALD,
                f"greatest differential settlement, {soil}; {FROM_MEMORY}",
            ),
            _lim(
                "angular_distortion",
                1 / 300,
                SKEMPTON_MACDONALD,
                "limit for cracking of panel and load-bearing walls observed in 98 buildings "
                f"(no margin; 1/500 is the usual design value); {FROM_MEMORY}",
            ),
        ),
        description=(
            "Limits from the damage observed in 98 buildings: they carry no margin of "
            "safety. Total and differential limits are the paper's less reliable "
            "correlations with β = 1/300."
        ),
    )


def _polshin_tokar() -> tuple[CriteriaSet, ...]:
    # METHODS.md §6.4 [M]: slope δρ/L and Δ/L tolerances; average settlement limits.
    sets = []
    pt = POLSHIN_TOKAR
    sets.append(
        CriteriaSet(
            "polshin_tokar_frames",
            "Polshin & Tokar (1957), steel and reinforced-concrete frames",
            (
                _lim(
                    "angular_distortion", 0.002, pt, f"steel and RC frames, any soil; {FROM_MEMORY}"
                ),
                _lim("total", 0.100, pt, f"average settlement, framed buildings; {FROM_MEMORY}"),
            ),
            "From the 1955 USSR code as reported by Polshin & Tokar.",
        )
    )
    for soil, beta in (("sand", 0.0007), ("clay", 0.001)):
        soil_text = "sand or hard clay" if soil == "sand" else "plastic clay"
        sets.append(
            CriteriaSet(
                f"polshin_tokar_brick_clad_frames_{soil}",
                f"Polshin & Tokar (1957), end rows of brick-clad frames, {soil_text}",
                (
                    _lim(
                        "angular_distortion",
                        beta,
                        pt,
                        f"end rows of brick-clad frames, {soil_text}; {FROM_MEMORY}",
                    ),
                    _lim(
                        "total", 0.100, pt, f"average settlement, framed buildings; {FROM_MEMORY}"
                    ),
                ),
                "From the 1955 USSR code as reported by Polshin & Tokar.",
            )
        )
    for soil, dl3 in (("sand", 0.0003), ("clay", 0.0004)):
        soil_text = "sand or hard clay" if soil == "sand" else "plastic clay"
        sets.append(
            CriteriaSet(
                f"polshin_tokar_brick_walls_{soil}",
                f"Polshin & Tokar (1957), load-bearing brick walls, L/H ≤ 3, {soil_text}",
                (
                    _lim(
                        "deflection_ratio",
                        dl3,
                        pt,
                        f"load-bearing brick walls, L/H ≤ 3, {soil_text} (L/H ≥ 5 allows "
                        f"{'0.0005' if soil == 'sand' else '0.0007'}); {FROM_MEMORY}",
                    ),
                    _lim(
                        "total",
                        0.080,
                        pt,
                        f"average settlement, plain brick walls, L/H ≥ 2.5; {FROM_MEMORY}",
                    ),
                ),
                "Deflection ratio along structure lines: give the walls as structure lines.",
            )
        )
    sets.append(
        CriteriaSet(
            "polshin_tokar_tall_rigid",
            "Polshin & Tokar (1957), tall rigid structures (chimneys, silos, towers)",
            (
                _lim("tilt", 0.004, pt, f"tilt of tall rigid structures; {FROM_MEMORY}"),
                _lim(
                    "total",
                    0.300,
                    pt,
                    "average settlement, massive RC foundations of chimneys, silos, towers; "
                    + FROM_MEMORY,
                ),
            ),
            "Tilt of each footing (a tower on one footing) and its settlement.",
        )
    )
    return tuple(sets)


_SETS: list[CriteriaSet] = [
    CriteriaSet(
        "eurocode7",
        "EN 1997-1:2004 Annex H, serviceability (normal structures on isolated foundations)",
        (
            _lim(
                "total",
                0.050,
                EC7,
                "total settlement often acceptable for normal structures with isolated "
                "foundations; more may be acceptable if relative rotations, services and "
                "tilt allow (Annex H gives no figure for rafts: they are judged by their "
                "relative rotation)",
                ISOLATED,
            ),
            _lim(
                "angular_distortion",
                1 / 500,
                EC7,
                "maximum relative rotation acceptable for many structures (SLS, sagging); "
                "the Annex gives about 1/2000 to 1/300 by structure type",
            ),
            _lim(
                "angular_distortion_hog",
                1 / 1000,
                EC7,
                "the sagging values are halved for hogging",
            ),
        ),
        "Guidance of the informative Annex H for normal, routine structures; not for "
        "unusual structures or markedly non-uniform loading.",
    ),
    CriteriaSet(
        "eurocode7_uls",
        "EN 1997-1:2004 Annex H, relative rotation likely to cause an ultimate limit state",
        (
            _lim(
                "angular_distortion",
                1 / 150,
                EC7,
                "relative rotation of about 1/150 likely to cause an ultimate limit state "
                "(sagging)",
            ),
            _lim("angular_distortion_hog", 1 / 300, EC7, "the sagging value halved for hogging"),
        ),
        "Relative rotation only; use beside a serviceability set, not instead of it.",
    ),
    CriteriaSet(
        "sand_common_practice",
        "Footings on sand, common practice: 25 mm total, 19 mm differential",
        (
            _lim(
                "total",
                0.025,
                TERZAGHI_PECK,
                "design the largest footing for 1 in (25 mm); keeps differential within 3/4 in",
                ISOLATED,
            ),
            _lim(
                "differential",
                0.019,
                TERZAGHI_PECK,
                "3/4 in (19 mm) between footings when the largest settles 1 in",
            ),
        ),
        "Isolated footings on sand (also Peck, Hanson & Thornburn 1974); common practice, "
        "not a code limit.",
    ),
    CriteriaSet(
        "sand_rafts_common_practice",
        "Rafts on sand, common practice: 50 mm total",
        (
            _lim(
                "total",
                0.050,
                TERZAGHI_PECK,
                f"rafts on sand, twice the 25 mm for footings; {FROM_MEMORY}",
                ("raft",),
            ),
        ),
        "Rafts on sand; common practice (from memory), not a code limit.",
    ),
    CriteriaSet(
        "burland_wroth_masonry",
        "Burland & Wroth (1974), onset of visible cracking in masonry walls, L/H = 1",
        (
            _lim(
                "deflection_ratio",
                0.4e-3,
                BURLAND_WROTH,
                f"sagging, L/H = 1 (about 0.8e-3 at L/H = 5); {FROM_MEMORY}",
            ),
            _lim(
                "deflection_ratio_hog",
                0.2e-3,
                BURLAND_WROTH,
                f"hogging, L/H = 1 (about 0.4e-3 at L/H = 5); {FROM_MEMORY}",
            ),
        ),
        "Deflection ratio along structure lines (masonry walls, limiting tensile strain "
        "0.075 %); give the walls as structure lines.",
    ),
]
_SETS += [_bjerrum_set(level) for level in BJERRUM_SCALE]
_SETS += [
    _skempton_macdonald(s, f) for s in ("sand", "clay") for f in ("isolated_footings", "rafts")
]
_SETS += list(_polshin_tokar())

#: every built-in criteria set by name
CRITERIA: dict[str, CriteriaSet] = {s.name: s for s in _SETS}

#: the set used when the project names none (docs/criteria.md says why)
DEFAULT_CRITERIA = "eurocode7"


class UnknownCriteriaError(InputError, KeyError):
    """The project names a criteria set that does not exist (the message lists the valid ones)."""

    __str__ = InputError.__str__  # KeyError would print the message as a repr


def get_criteria(name: str, overrides: dict[str, float] | None = None) -> CriteriaSet:
    """The built-in criteria set ``name`` with the project's ``overrides`` applied.

    Parameters
    ----------
    name : str
        A key of :data:`CRITERIA` (case, spaces and hyphens are forgiven).
    overrides : dict, optional
        measure → limit in core units (m, rad or ratio); replaces the set's limit on
        that measure, or adds one. The source of an overridden limit is
        ``"project override"`` and its note names the value it replaces.

    Returns
    -------
    CriteriaSet

    Raises
    ------
    UnknownCriteriaError
        (an InputError and a KeyError) for an unknown name, listing the valid names.
    InputError
        For an unknown measure (listing the valid ones) or a value that is not a
        positive number.

    Examples
    --------
    >>> get_criteria("eurocode7").limit("angular_distortion").describe()
    'angular distortion ≤ 1/500'
    >>> get_criteria("eurocode7", {"total": 0.04}).limit("total").source
    'project override'
    """
    key = str(name).strip().lower().replace("-", "_").replace(" ", "_")
    if key not in CRITERIA:
        valid = ", ".join(f'"{k}"' for k in CRITERIA)
        raise UnknownCriteriaError(
            "[checks] criteria", f'unknown criteria set "{name}"', f"one of {valid}"
        )
    cset = CRITERIA[key]
    if not overrides:
        return cset
    limits = list(cset.limits)
    for measure, value in overrides.items():
        where = f"[checks.overrides] {measure}"
        if measure not in MEASURES:
            valid = ", ".join(f'"{m}"' for m in MEASURES)
            raise InputError(where, f'unknown measure "{measure}"', f"one of {valid}")
        try:
            v = float(value)
        except (TypeError, ValueError):
            raise InputError(where, f'"{value}" is not a number', "a positive number") from None
        if not (math.isfinite(v) and v > 0):
            raise InputError(where, f"limit {value} is not a positive number", "a positive number")
        old = cset.limit(measure)
        note = f"replaces {old.describe()} ({old.source})" if old else "added by the project"
        new = Limit(measure, v, MEASURES[measure], OVERRIDE, note)
        limits = [lim for lim in limits if lim.measure != measure] + [new]
    return replace(
        cset, limits=tuple(limits), description=cset.description + " (with project overrides)"
    )


__all__ = [
    "BJERRUM_SCALE",
    "CRITERIA",
    "DEFAULT_CRITERIA",
    "MEASURES",
    "BjerrumLevel",
    "CriteriaSet",
    "Limit",
    "UnknownCriteriaError",
    "bjerrum_level",
    "format_value",
    "one_in",
    "get_criteria",
]
