"""Footing sizes that meet the limits: a bracketing search run with the full engine.

Every footing's settlement depends on all of its neighbours, so a footing cannot
be sized alone: :func:`size_footings` re-analyses the whole plan after every
change of sizes and stops at a plan whose sizes no longer change.

The search (docs/sizing.md)
---------------------------
Each sizable footing (a rectangle or circle that is not a raft) has one size
variable, its width B on a grid of ``step``: a pad or a circle keeps its L/B (the
length is B·L/B rounded up to the grid), a strip keeps its length (the wall) and
changes only its width. The width stays between a lower bound — the larger of
``min_width`` and the width at which the net pressure meets
``bearing_pressure`` — and ``max_width``.

1. Analyse the plan; from the checks, collect what each footing must give up: a
   total over its limit, a pair's differential or angular distortion, or a
   structure line's deflection over its limit is assigned to the footing of the
   pair or line that moves most (growing it reduces the differential; growing
   the other would raise it), as the excess settlement
   ``excess = value·(1 − 1/utilisation)`` scaled from the checked movement to
   the total.
2. Keep for each footing a bracket: the largest width found failing (``lo``) and
   the smallest found passing (``hi``). A footing that fails at a width at or
   above its ``hi`` loses its bracket (a neighbour changed): the coupling is
   followed, never assumed away.
3. Next width: a failing footing without a passing width grows by the estimate
   ``B·(own/(own − excess))^(1/k)``, where the footing's own-load settlement is
   taken as ∝ B^(−k) (k = 1 for a pad on an elastic layer: s ∝ q·B ∝ 1/B;
   k = 0.5 for a strip of fixed length; then the slope measured from its own
   last two widths), by at least one step and at most doubling; otherwise it
   bisects its bracket (a passing footing bisects down to its lower bound), on
   the grid.
4. Stop when no width changes: every footing then sits one step above a width
   that failed (or at its lower bound) and passes, or is at the end of its range
   and is reported as not fixable by sizing. A limit of ``max_rounds`` rounds
   ends a search that has not settled (it says so) with the best plan found:
   the one with the fewest failing checks, then the least footing area.

Because the bisection halves each bracket, the rounds grow as log2(range/step)
plus the rounds of coupling; the demo settles in about ten. The result is the
least width on the grid for an isolated footing (one step of the closed form);
with neighbours it is a fixed point of the search, not a proven global minimum
of concrete.

Not fixable by sizing, and said so per footing and check: consolidation of a
deep compressible stratum (the stress at depth depends on the load, hardly on
the pad's size), settlement caused by the neighbours' loads, a footing at its
largest size or blocked by a neighbour it would overlap, rafts and polygons
(not resized), a footing's own tilt and the building's tilt.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from sitesettle.checks import movement_after
from sitesettle.errors import InputError
from sitesettle.site import Site, foundation_kind

#: the usual remedies where sizing cannot pass a check (common practice)
ALTERNATIVES = (
    "a raft, ground improvement (preloading, vertical drains, stone columns), piles, "
    "or a frame detailed to accept the movement"
)
#: own-load settlement ∝ B^-k: first estimate of k (pad on an elastic layer: s ∝ q·B)
K_PAD, K_STRIP = 1.0, 0.5
#: at most this factor on a width in one round
MAX_GROWTH = 2.0


@dataclass(frozen=True)
class SizingLimits:
    """What the sizing may do.

    Attributes
    ----------
    step : float
        Grid of the widths [m] (default 0.1 m).
    min_width, max_width : float
        Range of the width B [m] (defaults 0.6 m, common practice for a hand-dug or
        machine-dug pad, from memory; and 6 m, where a pad becomes a raft).
    bearing_pressure : float or None
        Allowable net bearing pressure [kPa]: a footing is never sized so small
        that its net pressure (P/A + γ_f·D − σ_v0(D)) exceeds it. None: no cap.
    thickness : float
        Concrete thickness for the volume of the changes table [m] (default 0.5 m,
        an assumption stated in the table).
    max_rounds : int
        Analyses at most (default 40).
    grow_only : bool
        Never make a footing smaller than given (default False: the smallest
        passing size, which may shrink a footing that passes as given). A footing
        that passes as given then keeps its size exactly; one that grows goes to
        the grid; one given above ``max_width`` keeps its size.
    """

    step: float = 0.1
    min_width: float = 0.6
    max_width: float = 6.0
    bearing_pressure: float | None = None
    thickness: float = 0.5
    max_rounds: int = 40
    grow_only: bool = False

    def __post_init__(self) -> None:
        for name in ("step", "min_width", "max_width", "thickness"):
            v = getattr(self, name)
            if not (isinstance(v, int | float) and math.isfinite(v) and v > 0):
                raise InputError(f"sizing {name}", f"{v!r} is not a positive length", "> 0 m")
        if self.step > 1.0:
            raise InputError("sizing step", f"{self.step:g} m is coarser than 1 m", "≤ 1 m")
        if self.min_width < 0.2 or self.max_width > 200.0 or self.min_width > self.max_width:
            raise InputError(
                "sizing range",
                f"{self.min_width:g} m to {self.max_width:g} m",
                "0.2 m ≤ minimum ≤ maximum ≤ 200 m (the footing sizes read from files)",
            )
        if self.bearing_pressure is not None and not (
            math.isfinite(self.bearing_pressure) and self.bearing_pressure > 0
        ):
            raise InputError(
                "sizing bearing pressure",
                f"{self.bearing_pressure!r} is not a positive pressure",
                "an allowable net bearing pressure > 0 kPa",
            )
        if not (isinstance(self.max_rounds, int) and self.max_rounds >= 1):
            raise InputError("sizing rounds", f"{self.max_rounds!r}", "an integer ≥ 1")


@dataclass(frozen=True)
class Unresolved:
    """A check sizing could not pass.

    Attributes
    ----------
    check : str
        What fails (``"footing F4: total 61.2 mm > 50 mm"``).
    footings : tuple of str
        The footings concerned.
    reason : str
        Why sizing cannot pass it, and the usual alternatives.
    """

    check: str
    footings: tuple[str, ...]
    reason: str
    #: the footing sizing would have to change (the one that moves most), if any
    cause: str | None = None
    #: the check passed on the plan as given: resizing other footings made it fail
    new: bool = False


@dataclass(frozen=True)
class SizingOutcome:
    """The sized plan and how it was found.

    Attributes
    ----------
    site : Site
        The sized project (every other input unchanged).
    results : Results
        Its analysis (without the map; re-run :func:`sitesettle.analyse` for it).
    original : Results
        The analysis of the plan as given (without the map).
    changes : list of dict
        One row per footing: sizes [m], net pressure [kPa], plan area [m²],
        concrete [m³], total settlement [m] before and after, status, note.
    unresolved : tuple of Unresolved
        Checks still failing in the sized plan, with the reason.
    rounds : int
        Analyses made (the first one of the given plan included).
    converged : bool
        True when the search stopped because no width changed.
    history : list of tuple
        Per round: (failing checks, total plan area [m²]).
    sized : tuple of str
        Ids of the footings the search may resize.
    """

    site: Site
    results: object
    original: object
    changes: list[dict]
    unresolved: tuple[Unresolved, ...]
    rounds: int
    converged: bool
    history: list[tuple[int, float]] = field(default_factory=list)
    sized: tuple[str, ...] = ()

    @property
    def passed(self) -> bool:
        """True when every check of the sized plan passes."""
        chk = self.results.checks
        return chk is None or bool(chk.all_passed)


def ceil_to(x: float, step: float) -> float:
    """``x`` rounded up to the grid of ``step`` (a value on the grid stays) [m]."""
    return round(math.ceil(x / step - 1e-9) * step, 10)


def _kinds(site: Site) -> list[str]:
    return [f.kind or foundation_kind(f) for f in site.footings]


def _sizable(site: Site, kinds: list[str]) -> list[int]:
    return [
        i
        for i, f in enumerate(site.footings)
        if f.shape in ("rectangle", "circle") and kinds[i] in ("pad", "strip")
    ]


def _sides(f, kind: str, b: float, step: float) -> dict:
    """The sides of footing ``f`` (as given) at width ``b``: its own sides at its
    own width, else its L/B kept on the grid (a strip keeps its length)."""
    if math.isclose(b, f.width, abs_tol=1e-9):
        return {"width": f.width} if f.shape == "circle" else {"width": f.width, "length": f.length}
    if f.shape == "circle":
        return {"width": b}
    if kind == "strip":
        return {"width": b, "length": max(f.length, b)}
    return {"width": b, "length": ceil_to(b * f.length / f.width, step)}


def _checked(results) -> tuple[np.ndarray, np.ndarray]:
    """Total at the design life and checked movement of every member [m]."""
    k = results.design_life_index
    total = results.member_total
    after = results.checks.checked_after if results.checks is not None else 0.0
    moved = movement_after(results.times, total, after)[:, k] if after > 0 else total[:, k]
    return total[:, k], moved


def failing_checks(results) -> list[tuple[str, tuple[int, ...], float, str]]:
    """Every failing check: (description, member indices, excess [m] or NaN, kind).

    ``kind`` is ``"total"``, ``"range"``, ``"pair"``, ``"line"``, ``"tilt"`` or
    ``"building"``; the excess is of the checked value, in settlement [m] (NaN for
    the tilts, which sizing does not address).
    """
    chk = results.checks
    if chk is None:
        return []
    ids = results.member_ids
    nf = len(results.ids)
    k = results.design_life_index
    total = results.total[:, k]
    out = []
    limit = chk.footing_limit if chk.footing_limit is not None else np.full(nf, np.nan)
    for i in range(nf):
        if chk.footing_passed[i]:
            continue
        status = chk.footing_status[i] if chk.footing_status else "fail"
        reason = chk.footing_reasons[i] or status
        if status == "beyond_range":
            b = results.site.footings[i].width
            excess = max(float(results.immediate[i, k]) - 0.1 * b, 0.1 * float(total[i]))
            out.append((f"footing {ids[i]}: {reason}", (i,), excess, "range"))
        elif np.isfinite(limit[i]) and total[i] > limit[i]:
            out.append((f"footing {ids[i]}: {reason}", (i,), float(total[i] - limit[i]), "total"))
        else:
            out.append((f"footing {ids[i]}: {reason}", (i,), math.nan, "tilt"))
    pc = chk.pairs
    for n in np.flatnonzero(~np.asarray(pc.passed, bool)):
        a, b = int(pc.a[n]), int(pc.b[n])
        u = float(pc.utilisation[n])
        d = float(pc.differential[n])
        excess = d * (1.0 - 1.0 / u) if u > 1 and math.isfinite(u) else math.nan
        out.append(
            (f"pair {ids[a]}–{ids[b]}: {pc.limit[n]} (utilisation {u:.2f})", (a, b), excess, "pair")
        )
    lines = chk.lines
    if lines is not None:
        index = {fid: i for i, fid in enumerate(ids)}
        for n in np.flatnonzero(~np.asarray(lines.passed, bool)):
            members = tuple(index[fid] for fid in lines.ids[n] if fid in index)
            u = float(lines.utilisation[n])
            d = abs(float(lines.relative_deflection[n]))
            excess = d * (1.0 - 1.0 / u) if u > 1 and math.isfinite(u) else math.nan
            name = " → ".join(lines.ids[n]) if len(lines.ids[n]) > 1 else lines.ids[n][0]
            out.append(
                (f"line {name}: {lines.limit[n]} (utilisation {u:.2f})", members, excess, "line")
            )
    if not chk.building_tilt_passed:
        out.append(
            (f"building tilt 1/{1 / chk.building_tilt:.0f}", tuple(range(nf)), math.nan, "building")
        )
    return out


def demands(results, sizable: set[int]) -> tuple[dict[int, float], list[tuple[str, tuple, str]]]:
    """The excess settlement [m] each sizable footing must lose, and the rest.

    Returns
    -------
    dict
        footing index → largest excess over its failing checks, in total settlement [m].
    list
        (check, member indices, kind) of every failing check no footing can be
        grown for (tilts, a pair whose larger mover cannot be resized …).
    """
    total, moved = _checked(results)
    nf = len(results.ids)
    need: dict[int, float] = {}
    other = []
    for text, members, excess, kind in failing_checks(results):
        if not math.isfinite(excess):
            other.append((text, members, kind))
            continue
        footing_members = [m for m in members if m < nf]
        if not footing_members:
            other.append((text, members, kind))
            continue
        culprit = max(members, key=lambda m: moved[m])
        if culprit >= nf or culprit not in sizable:
            other.append((text, members, kind))
            continue
        if kind in ("pair", "line") and moved[culprit] > 0:
            excess *= total[culprit] / moved[culprit]  # checked movement → total
        need[culprit] = max(need.get(culprit, 0.0), excess)
    return need, other


def _resize(
    site: Site, widths: dict[int, float], kinds, step, originals
) -> tuple[Site, dict[int, str]]:
    """The site with the widths applied; a footing that would overlap keeps its size.

    ``originals`` are the footings as given (their L/B is kept). All changes are
    made at once and the plan is checked for overlaps once per pass (one spatial
    index, not one per footing); of an overlapping pair, the changed footing that
    grew more keeps its size in ``site``, and the check is repeated. The returned
    dict names, per footing held back, the footing it would overlap; ``site``
    itself is returned when nothing changes.
    """
    from sitesettle.site import find_overlaps

    new: dict[int, object] = {}
    for i, b in widths.items():
        f = site.footings[i]
        sides = _sides(originals[i], kinds[i], b, step)
        if all(math.isclose(v, getattr(f, key), abs_tol=1e-9) for key, v in sides.items()):
            continue
        new[i] = site._changed_footing(f.id, {"kind": kinds[i], **sides})[1]
    blocked: dict[int, str] = {}
    while new:
        footings = list(site.footings)
        for i, f in new.items():
            footings[i] = f
        clash = [
            (i, j)
            for i, j, _ in find_overlaps([f.outline for f in footings])
            if i in new or j in new
        ]
        if not clash:
            return dataclasses.replace(site, footings=tuple(footings)), blocked
        for i, j in clash:
            grew = [m for m in (i, j) if m in new]
            if not grew:
                continue
            m = max(grew, key=lambda m: new[m].area - site.footings[m].area)
            new.pop(m)
            blocked[m] = footings[j if m == i else i].id
    return site, blocked


def _why(results, original, i: int, at_max: bool, blocked: str | None, limits) -> str:
    """Why sizing cannot pass a check that involves footing ``i``."""
    k = results.design_life_index
    tot = float(results.total[i, k])
    parts = []
    a0, a1 = original.site.footings[i].area, results.site.footings[i].area
    t0 = float(original.total[i, k])
    if a1 > 1.2 * a0 and t0 > 0:
        parts.append(
            f"{a1 / a0:.1f} times the plan area reduced its settlement by only "
            f"{1 - tot / t0:.0%} ({1000 * t0:.1f} → {1000 * tot:.1f} mm)"
        )
    if blocked:
        parts.append(f"a larger {results.ids[i]} would overlap {blocked} (a combined footing)")
    elif at_max:
        parts.append(f"{results.ids[i]} is at the largest width allowed, {limits.max_width:g} m")
    if tot > 0:
        cons = float(results.consolidation[i, k] + results.secondary[i, k]) / tot
        neigh = float(results.neighbours[i, k]) / tot
        if cons >= 0.4:
            parts.append(
                f"{cons:.0%} of its settlement is consolidation and creep of clay, which a "
                "wider footing hardly reduces: the stress deep in the clay depends on the "
                "load, little on the footing's size"
            )
        if neigh >= 0.4:
            parts.append(f"{neigh:.0%} of its settlement comes from its neighbours' loads")
    return "; ".join(parts) + f". Alternatives: {ALTERNATIVES}"


def size_footings(
    site: Site,
    limits: SizingLimits | None = None,
    *,
    progress: Callable[[str, float], None] | None = None,
    analyse: Callable | None = None,
) -> SizingOutcome:
    """Propose the smallest footing widths on a grid that pass every check.

    Parameters
    ----------
    site : Site
        The project (its criteria and checked time decide what "pass" means).
    limits : SizingLimits, optional
        Step [m], width range [m], allowable net bearing pressure [kPa].
    progress : callable, optional
        ``progress(stage, fraction)`` after every analysis.
    analyse : callable, optional
        The engine, ``analyse(site) -> Results`` (default: the full analysis
        without the map).

    Returns
    -------
    SizingOutcome
        The sized site, its results, a table of changes and what sizing cannot fix.

    Notes
    -----
    The search is described in the module's docstring and docs/sizing.md: per
    footing a bracket [largest failing width, smallest passing width], grown by a
    settlement-ratio estimate until a passing width is found and then bisected
    on the grid, with every round a full analysis of the plan.
    """
    from sitesettle.analysis import analyse as _analyse

    limits = limits or SizingLimits()
    run = analyse or (lambda s: _analyse(s, with_map=False))
    say = progress or (lambda stage, frac: None)
    step = limits.step
    kinds = _kinds(site)
    sizable = _sizable(site, kinds)
    original = run(site)
    k = original.design_life_index
    loads = np.array([f.dead_load + f.live_load for f in site.footings])
    areas = np.array([f.area for f in site.footings])
    other_pressure = np.asarray(original.net_pressure) - loads / areas  # γ_f·D − σ_v0(D)

    lower: dict[int, float] = {}
    upper: dict[int, float] = {}
    bearing_note: dict[int, str] = {}
    for i in sizable:
        f = site.footings[i]
        lo = limits.min_width
        if limits.bearing_pressure is not None:
            room = limits.bearing_pressure - other_pressure[i]
            if room <= 0:
                bearing_note[i] = (
                    "the backfill over its base alone exceeds the allowable "
                    f"{limits.bearing_pressure:g} kPa"
                )
            else:
                need_area = loads[i] / room
                if f.shape == "circle":
                    lo = max(lo, math.sqrt(4 * need_area / math.pi))
                elif kinds[i] == "strip":
                    lo = max(lo, need_area / f.length)
                else:
                    lo = max(lo, math.sqrt(need_area * f.width / f.length))
        lower[i] = min(ceil_to(lo, step), ceil_to(limits.max_width, step))
        upper[i] = ceil_to(limits.max_width, step)
        if limits.grow_only:  # its given size is the least (kept exactly, off the grid too)
            upper[i] = max(upper[i], f.width)
            lower[i] = max(lower[i], f.width)
        if lo > limits.max_width:
            bearing_note[i] = (
                f"the allowable {limits.bearing_pressure:g} kPa needs a width over the "
                f"maximum {limits.max_width:g} m"
            )

    given = {i: site.footings[i].width for i in sizable}
    width = {
        i: min(max(given[i] if limits.grow_only else ceil_to(given[i], step), lower[i]), upper[i])
        for i in sizable
    }
    lo_b: dict[int, float | None] = dict.fromkeys(sizable)
    hi_b: dict[int, float | None] = dict.fromkeys(sizable)
    seen: dict[int, list[tuple[float, float]]] = {i: [] for i in sizable}
    blocked: dict[int, str] = {}
    best = None
    history: list[tuple[int, float]] = []
    current = site
    converged = False
    rounds = 1  # the analysis of the plan as given
    while True:
        current, newly = _resize(current, width, kinds, step, site.footings)
        for i, other in newly.items():  # held at its size before the step
            blocked[i] = other
            width[i] = current.footings[i].width
        if current is site:
            results = original
        else:
            results = run(current)
            rounds += 1
        need, rest = demands(results, set(sizable))
        fails = len(need) + len(rest)
        area = float(sum(f.area for f in current.footings))
        history.append((fails, area))
        if best is None or (fails, area) < (best[0], best[1]):
            best = (fails, area, current, results)
        say(f"sizing: analysis {rounds}, {fails} failing", min(rounds / limits.max_rounds, 0.99))
        nxt = dict(width)
        for i in sizable:
            b = width[i]
            own = float(results.own[i, k])
            seen[i].append((b, own))
            if i in need:
                lo_b[i] = b
                if hi_b[i] is not None and hi_b[i] <= b + 1e-9:
                    hi_b[i] = None  # passed there before: a neighbour has changed
                if i in blocked or b >= upper[i] - 1e-9:
                    continue
                if hi_b[i] is not None:
                    nxt[i] = _mid(b, hi_b[i], step)
                    continue
                kk = K_STRIP if kinds[i] == "strip" else K_PAD
                pts = [p for p in seen[i] if not math.isclose(p[0], b) and p[1] > 0]
                if pts and own > 0:
                    b0, own0 = pts[-1]
                    slope = -math.log(own / own0) / math.log(b / b0)
                    kk = min(max(slope, 0.1), 2.0)
                excess = need[i]
                factor = (own / (own - excess)) ** (1.0 / kk) if own > excess else MAX_GROWTH
                factor = min(max(factor, 1.0), MAX_GROWTH)
                nxt[i] = min(max(ceil_to(b * factor, step), above(b, step)), upper[i])
            else:
                hi_b[i] = b
                if lo_b[i] is not None and lo_b[i] >= b - 1e-9:
                    lo_b[i] = None  # failed there before: a neighbour has changed
                floor = lo_b[i] if lo_b[i] is not None else lower[i] - step
                if b - floor > step + 1e-9 and b > lower[i] + 1e-9 and i not in blocked:
                    nxt[i] = max(_mid(floor, b, step), lower[i])
        if all(math.isclose(nxt[i], width[i], abs_tol=1e-9) for i in sizable):
            converged = True
            break
        if rounds >= limits.max_rounds:
            break
        width = nxt
    if not converged or best[0] < history[-1][0]:
        current, results = best[2], best[3]
    return _outcome(
        site,
        original,
        current,
        results,
        limits,
        kinds,
        sizable,
        upper,
        blocked,
        bearing_note,
        rounds,
        converged,
        history,
    )


def _mid(lo: float, hi: float, step: float) -> float:
    """The grid width halfway between a failing ``lo`` and a passing ``hi`` (> lo, ≤ hi)."""
    m = ceil_to(0.5 * (lo + hi), step)
    if m <= lo + 1e-9:
        m = above(lo, step)
    return min(m, hi)


def above(b: float, step: float) -> float:
    """The first width of the grid above ``b`` (which may lie off the grid: a
    footing kept at its given size) [m].

    >>> above(1.2, 0.1), above(1.22, 0.1)
    (1.3, 1.3)
    """
    up = ceil_to(b, step)
    return up if up > b + 1e-9 else round(b + step, 10)


def _outcome(
    site,
    original,
    current,
    results,
    limits,
    kinds,
    sizable,
    upper,
    blocked,
    bearing_note,
    rounds,
    converged,
    history,
) -> SizingOutcome:
    k = results.design_life_index
    ids = results.ids
    chk0, chk = original.checks, results.checks
    unresolved = []
    before = {(kind, members) for _, members, _, kind in failing_checks(original)}
    for text, members, _excess, kind in failing_checks(results):
        fs = tuple(m for m in members if m < len(ids))
        cause = None
        if kind in ("tilt", "building"):
            why = (
                "a tilt comes from the settlement of the ground around the footings, which "
                f"sizing one footing hardly changes. Alternatives: {ALTERNATIVES}"
            )
        else:
            _, moved = _checked(results)
            culprit = max(members, key=lambda m: moved[m])
            if culprit >= len(ids):
                why = (
                    "the neighbouring point moves more than the footing; a larger footing "
                    f"would raise the differential. Alternatives: {ALTERNATIVES}"
                )
            elif culprit not in sizable:
                why = (
                    f"{ids[culprit]} is a {kinds[culprit]} or polygon, which is not resized. "
                    f"Alternatives: {ALTERNATIVES}"
                )
            else:
                cause = ids[culprit]
                at_max = current.footings[culprit].width >= upper[culprit] - 1e-9
                why = _why(results, original, culprit, at_max, blocked.get(culprit), limits)
        new = (kind, members) not in before
        if new:
            why = (
                "this check passed on the plan as given; the sizes chosen for other "
                f"footings made it fail. {why}"
            )
        unresolved.append(Unresolved(text, tuple(ids[m] for m in fs), why, cause, new))
    failing = {u.cause for u in unresolved}
    changes = []
    for i, (f0, f1) in enumerate(zip(site.footings, current.footings)):
        notes = []
        if f0.id in failing and i in sizable:
            notes.append(
                "still fails at this size, which is no recommendation (sizing.json says why)"
            )
        if i not in sizable:
            notes.append("not resized (" + ("polygon" if f0.shape == "polygon" else kinds[i]) + ")")
        if i in bearing_note:
            notes.append(bearing_note[i])
        if i in blocked:
            notes.append(f"held back: larger would overlap {blocked[i]}")
        status0 = chk0.footing_status[i] if chk0 is not None and chk0.footing_status else ""
        status1 = chk.footing_status[i] if chk is not None and chk.footing_status else ""
        t = limits.thickness
        changes.append(
            {
                "id": f0.id,
                "kind": kinds[i],
                "width_before_m": f0.width,
                "length_before_m": f0.length,
                "width_m": f1.width,
                "length_m": f1.length,
                "q_net_before_kPa": float(original.net_pressure[i]),
                "q_net_kPa": float(results.net_pressure[i]),
                "area_before_m2": f0.area,
                "area_m2": f1.area,
                "concrete_before_m3": f0.area * t,
                "concrete_m3": f1.area * t,
                "total_before_mm": 1000 * float(original.total[i, k]),
                "total_mm": 1000 * float(results.total[i, k]),
                "status_before": status0,
                "status": status1,
                "changed": not (
                    math.isclose(f0.width, f1.width) and math.isclose(f0.length, f1.length)
                ),
                "note": "; ".join(notes),
            }
        )
    return SizingOutcome(
        site=current,
        results=results,
        original=original,
        changes=changes,
        unresolved=tuple(unresolved),
        rounds=rounds,
        converged=converged,
        history=history,
        sized=tuple(ids[i] for i in sizable),
    )
