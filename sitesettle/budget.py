"""The work a plan asks for, estimated before it starts: time and memory from counts.

:func:`analyse <sitesettle.analysis.analyse>` counts the evaluation columns of a
plan (footing points, query points, map grid), the sublayers they will have, the
report times and the load stages, and estimates the run's time and peak memory
from them (:func:`estimate`). Above :data:`REFUSE_MEMORY_RATIO` × the machine's
physical memory the plan is refused (:class:`PlanTooLarge`, an
:class:`~sitesettle.errors.InputError`: exit code 2, nothing computed, nothing
written); above :data:`WARN_MEMORY_RATIO` of the memory available now, or over
:data:`WARN_SECONDS`, it runs with a warning that names the estimate.

The coefficients are measured by ``benchmarks/scale_bench.py`` on a 2-core machine
(it prints the estimate beside the measured time and peak memory of every plan; on
its plans of 100, 1,000 and 3,000 footings the memory is within 20 % and the time
is overestimated up to 3 times for small plans, within 20 % at 3,000 footings:
benchmarks/README.md);
they are an order of magnitude, not a promise: another machine, another load on
it, or a plan very unlike the benchmark's (a raft of many vertices, deep clay)
moves them.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass

from sitesettle.errors import InputError

#: refuse a plan whose estimated peak memory exceeds this multiple of physical memory
REFUSE_MEMORY_RATIO = 2.0
#: warn when the estimated peak memory exceeds this share of the memory available
WARN_MEMORY_RATIO = 0.8
#: warn when the estimated time exceeds this [s]
WARN_SECONDS = 600.0

#: sublayers per column ≈ SUBLAYERS_PER_FRACTION / sublayer_fraction (the benchmark's
#: plans and the demo average 68–72 sublayers per column at the default 0.1)
SUBLAYERS_PER_FRACTION = 7.0
#: fixed cost of a run: start-up, reading, figures, report [s] and its memory [bytes]
BASE_SECONDS = 4.0
BASE_BYTES = 350e6
#: seconds per sublayer per stress evaluation (stresses and strains of one load state)
SECONDS_PER_SUBLAYER_STATE = 3.0e-5
#: seconds per sublayer per time of the histories
SECONDS_PER_SUBLAYER_TIME = 1.0e-6
#: seconds per footing (checks, traces, tables, the report, the GIS layers)
SECONDS_PER_FOOTING = 2.0e-3
#: bytes per sublayer (its arrays) and per sublayer and time of a history
BYTES_PER_SUBLAYER = 500.0
BYTES_PER_SUBLAYER_TIME = 90.0


class PlanTooLarge(InputError):
    """A plan whose estimated memory is beyond what this machine has (exit code 2)."""


@dataclass(frozen=True)
class Counts:
    """What sets the work of a run."""

    footings: int
    columns: int  # evaluation columns: footing points, query points, map grid
    map_points: int
    sublayers: int  # estimated
    times: int  # report times (with the design life and the stage marks)
    stages: int  # load states evaluated (1 + the stages before the last)


@dataclass(frozen=True)
class Estimate:
    """Estimated wall time [s] and peak resident memory [bytes] of a run."""

    counts: Counts
    seconds: float
    bytes: float

    def describe(self) -> str:
        """The estimate in words."""
        c = self.counts
        return (
            f"about {_duration(self.seconds)} and {self.bytes / 1e9:.1f} GB of memory "
            f"({c.footings:,} footings, {c.columns:,} evaluation columns of which "
            f"{c.map_points:,} map points, about {c.sublayers:,} sublayers, {c.times} times, "
            f"{c.stages} load state(s))"
        )


def _duration(seconds: float) -> str:
    if seconds < 90:
        return f"{seconds:.0f} s"
    if seconds < 5400:
        return f"{seconds / 60:.0f} min"
    return f"{seconds / 3600:.1f} h"


def counts(
    footings: int,
    columns: int,
    map_points: int,
    times: int,
    stages: int,
    sublayer_fraction: float,
) -> Counts:
    """The counts of a run, with its sublayers estimated from the sublayer fraction.

    >>> counts(300, 5530, 4234, 5, 2, 0.1).sublayers
    387100
    """
    per_column = SUBLAYERS_PER_FRACTION / max(float(sublayer_fraction), 1e-6)
    return Counts(
        int(footings),
        int(columns),
        int(map_points),
        int(math.ceil(columns * per_column)),
        int(times),
        max(1, int(stages)),
    )


def estimate(c: Counts) -> Estimate:
    """Time and peak memory of a run from its counts (monotone in every count).

    The stresses and strains are evaluated once per load state; the histories hold,
    per state, every sublayer at the report times and at the times that state's
    increments need (twice the report times at most).

    >>> e = estimate(counts(300, 5530, 4234, 5, 2, 0.1))
    >>> 5 < e.seconds < 60, 0.3e9 < e.bytes < 3e9
    (True, True)
    """
    grid = c.times * (2 if c.stages > 1 else 1)
    seconds = (
        BASE_SECONDS
        + SECONDS_PER_SUBLAYER_STATE * c.sublayers * c.stages
        + SECONDS_PER_SUBLAYER_TIME * c.sublayers * grid * c.stages
        + SECONDS_PER_FOOTING * c.footings
    )
    memory = BASE_BYTES + c.sublayers * (BYTES_PER_SUBLAYER + BYTES_PER_SUBLAYER_TIME * grid)
    return Estimate(c, float(seconds), float(memory))


def physical_memory() -> float:
    """The machine's physical memory [bytes] (inf where it cannot be read)."""
    try:
        return float(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    except (ValueError, OSError, AttributeError):
        return math.inf


def available_memory() -> float:
    """The memory available now [bytes] (``MemAvailable`` on Linux; else physical memory)."""
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return float(line.split()[1]) * 1024.0
    except (OSError, ValueError, IndexError):
        pass
    return physical_memory()


def assess(
    est: Estimate,
    *,
    physical: float | None = None,
    available: float | None = None,
    refuse: bool = True,
) -> str | None:
    """Refuse a plan too large for the machine; the warning for a large one, or None.

    With ``refuse=False`` (``[analysis] large_plan = "run"``, e.g. on a machine
    with swap) a plan beyond :data:`REFUSE_MEMORY_RATIO` × the physical memory is
    not refused: the warning then says so, with the estimate.

    Raises
    ------
    PlanTooLarge
        When the estimated peak memory exceeds :data:`REFUSE_MEMORY_RATIO` × the
        physical memory and ``refuse``: the message gives the estimate, what to
        change, and how to run it all the same.

    >>> small = estimate(counts(39, 3235, 3024, 7, 2, 0.1))
    >>> assess(small, physical=16e9, available=12e9) is None
    True
    >>> huge = estimate(counts(50_000, 3_000_000, 40_000, 7, 2, 0.01))
    >>> assess(huge, physical=16e9, available=12e9)
    Traceback (most recent call last):
    ...
    sitesettle.budget.PlanTooLarge: the plan: too large for this machine: ...
    """
    physical = physical_memory() if physical is None else float(physical)
    available = available_memory() if available is None else float(available)
    c = est.counts
    beyond = est.bytes > REFUSE_MEMORY_RATIO * physical
    if beyond and refuse:
        raise PlanTooLarge(
            "the plan",
            f"too large for this machine: the analysis would need {est.describe()}, more "
            f"than {REFUSE_MEMORY_RATIO:g} × its {physical / 1e9:.1f} GB of memory",
            _what_to_change(c) + '; or, to run it all the same (swap), [analysis] '
            'large_plan = "run"',
        )
    notes = []
    if beyond:
        notes.append(
            f"more than {REFUSE_MEMORY_RATIO:g} × the {physical / 1e9:.1f} GB of memory of this "
            'machine (run because [analysis] large_plan = "run"; it may swap or fail)'
        )
    elif est.bytes > WARN_MEMORY_RATIO * available:
        notes.append(
            f"more than {WARN_MEMORY_RATIO:.0%} of the {available / 1e9:.1f} GB of memory "
            "available now"
        )
    if est.seconds > WARN_SECONDS:
        notes.append(f"longer than {WARN_SECONDS / 60:.0f} minutes")
    if not notes:
        return None
    return (
        f"a large plan: the analysis is estimated at {est.describe()}, "
        + " and ".join(notes)
        + f"; to make it smaller: {_what_to_change(c)}"
    )


def _what_to_change(c: Counts) -> str:
    hints = []
    if c.map_points > 0.3 * c.columns:
        hints.append("fewer map points ([analysis] map_spacing larger, or map_margin smaller)")
    hints.append("coarser sublayers ([analysis] sublayer_fraction larger)")
    if c.stages > 1:
        hints.append("fewer load stages ([[stages]])")
    hints.append("fewer report times ([analysis] report_times), or the plan split in parts")
    return "; ".join(hints)


__all__ = [
    "Counts",
    "Estimate",
    "PlanTooLarge",
    "assess",
    "available_memory",
    "counts",
    "estimate",
    "physical_memory",
]
