"""Small building blocks for tests that build a Site directly (no files)."""

from __future__ import annotations

import math

import numpy as np

from sitesettle.options import Behaviour
from sitesettle.site import Footing, Stratum

#: an incompressible base
ROCK = Stratum("rock", Behaviour.RIGID, unit_weight=22.0, saturated_unit_weight=22.0)


def rect(
    fid,
    x,
    y,
    width,
    length=None,
    *,
    depth,
    load,
    live=0.0,
    sustained=0.0,
    rigid=False,
    fill=20.0,
    rotation=0.0,
) -> Footing:
    """A rectangular footing centred on (x, y), its long side ``rotation`` degrees from east."""
    length = width if length is None else length
    a = math.radians(rotation)
    ax_l = np.array([math.cos(a), math.sin(a)])
    ax_b = np.array([-math.sin(a), math.cos(a)])
    c = np.array([x, y])
    outline = np.array(
        [
            c + sl * length / 2 * ax_l + sb * width / 2 * ax_b
            for sl, sb in ((-1, -1), (1, -1), (1, 1), (-1, 1))
        ]
    )
    return Footing(
        fid,
        outline,
        "rectangle",
        x,
        y,
        width,
        length,
        rotation,
        depth,
        load,
        live,
        sustained,
        rigid,
        fill,
    )


def clay(**kw) -> Stratum:
    """A cohesive stratum with plausible parameters; keywords override them."""
    base = dict(
        unit_weight=18.0,
        saturated_unit_weight=19.0,
        compression_index=0.3,
        recompression_index=0.05,
        void_ratio=1.0,
        consolidation_coefficient=2.0,
    )
    base.update(kw)
    return Stratum("clay", Behaviour.COHESIVE, **base)
