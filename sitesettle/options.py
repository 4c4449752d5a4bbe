"""String options, each a :class:`Choice` that lists its valid values in errors."""

from __future__ import annotations

import enum


class Choice(enum.StrEnum):
    """A string option whose unknown values raise an error listing the valid ones."""

    @classmethod
    def parse(cls, value: object, where: str) -> Choice:
        """Return the member named by ``value``; raise InputError naming ``where`` otherwise."""
        from sitesettle.errors import InputError

        text = str(value).strip().lower().replace("-", "_").replace(" ", "_")
        for member in cls:
            if member.value == text:
                return member
        valid = ", ".join(f'"{m.value}"' for m in cls)
        raise InputError(where, f'unknown value "{value}"', f"one of {valid}")


class Behaviour(Choice):
    """How a stratum deforms."""

    GRANULAR = "granular"  #: drained, immediate settlement (sand, gravel)
    COHESIVE = "cohesive"  #: consolidates with time (clay, silt)
    RIGID = "rigid"  #: incompressible base: the integration stops at its top


class GranularMethod(Choice):
    """Settlement method for a footing's own load on granular strata."""

    SCHMERTMANN = "schmertmann"  #: Schmertmann, Hartman & Brown (1978)
    SCHMERTMANN_1970 = "schmertmann_1970"  #: Schmertmann (1970) 2B-0.6 diagram, E = 2 qc
    ELASTIC = "elastic"  #: elastic strain integration of the Boussinesq stresses
    BURLAND_BURBIDGE = "burland_burbidge"  #: Burland & Burbidge (1985), SPT N


class Drainage(Choice):
    """Drainage boundaries of a cohesive stratum."""

    #: drained at the top, and at the bottom into a granular stratum but not into a
    #: rigid one; strata in contact consolidate as one layer (the default)
    AUTO = "auto"
    BOTH = "both"  #: drained at top and bottom: H_dr = H/2
    TOP = "top"  #: drained at the top only (impermeable below): H_dr = H
    BOTTOM = "bottom"  #: drained at the bottom only (impermeable above): H_dr = H


class ClaySettlement(Choice):
    """How the undrained and the consolidation settlement of clay are combined."""

    #: the one-dimensional oedometer settlement is the total; the undrained part
    #: (E_u, ν = 0.5) is the share of it that happens on loading (Burland, Broms &
    #: de Mello 1977)
    OEDOMETER = "oedometer"
    #: s = s_u + μ·s_oed, μ = A + α(1 − A) (Skempton & Bjerrum 1957)
    SKEMPTON_BJERRUM = "skempton_bjerrum"


class DepthRule(Choice):
    """How deep each evaluation column is integrated."""

    #: to the top of the first rigid stratum, or to where the bounded remaining
    #: settlement is under the truncation tolerance (the default: nothing dropped)
    COMPLETE = "complete"
    #: stop below the deepest sublayer where Δσz ≥ influence_fraction·σ'v0 (an explicit
    #: option for a code that requires it; what it leaves out is warned about)
    STRESS_RATIO = "stress_ratio"


class EndOfPrimary(Choice):
    """Convention for the time at which secondary compression starts."""

    U95 = "u95"  #: the time at which the average degree of consolidation reaches 95 % (Tv = 1.129)
    U90 = "u90"  #: 90 % (Tv = 0.848)
    TV1 = "tv1"  #: Tv = 1 (U = 93 %)
    GIVEN = "given"  #: a time given in the stratum (key end_of_primary)


class ShapeInterpolation(Choice):
    """How Schmertmann (1978) parameters vary for 1 < L/B < 10."""

    LINEAR = "linear"  #: linear in L/B between the two published diagrams (common practice)
    LOG = (
        "log"  #: modulus factor 2.5 [1 + 0.4 log10(L/B)] (from memory, Terzaghi, Peck & Mesri 1996)
    )


class RigidTilt(Choice):
    """How the building's rigid-body tilt enters the angular distortion β of a pair."""

    BOTH = "both"  #: β with the tilt kept and with it removed; the larger governs
    KEPT = "kept"  #: β of the line joining the two footings (tilt kept)
    REMOVED = "removed"  #: β after the least-squares plane is removed (Burland et al. 1977)


class FoundationKind(Choice):
    """The kind of a foundation, for limits worded for some kinds only."""

    PAD = "pad"  #: an isolated column pad
    STRIP = "strip"  #: a wall strip (an isolated foundation in EN 1997-1 Annex H's sense)
    RAFT = "raft"  #: a raft or mat under several columns or a core


class LargePlan(Choice):
    """What a run does with a plan estimated to need more memory than the machine has."""

    REFUSE = "refuse"  #: stop before any stress is computed, exit code 2 (default)
    RUN = "run"  #: run it all the same, with a warning naming the estimate (e.g. with swap)


class LiveLoadStart(Choice):
    """When the live load arrives, for the movement the structure feels."""

    CHECKED_AFTER = "checked_after"  #: just after [checks] checked_after (default)
    START = "start"  #: at time 0 with the dead load
