"""Burland & Burbidge (1985): settlement of footings on sand and gravel from SPT blow counts.

An empirical method fitted to over 200 case records. The immediate settlement
is q' B^0.7 Ic with the compressibility index Ic from the mean SPT N over the
depth of influence z1; factors for shape (fs), a thin compressible layer (fl)
and time (ft) multiply it:

.. math:: s_t = f_s f_l f_t \\, s_i

The method's equations are dimensional: settlement in mm, pressure in kPa,
width in m. The functions here take kPa and m and return metres.

Several constants (1.71, 1.4, 0.763, the fs and fl forms) are as recalled from
the paper and not re-read (METHODS.md §4, from memory); the structure of the
method, the time factor and the N corrections were checked against a
reproduction of the method (METHODS.md §4).

References
----------
.. [1] Burland, J.B. & Burbidge, M.C. (1985). Settlement of foundations on sand
   and gravel. Proc. Instn Civ. Engrs Part 1, 78, 1325–1381.
.. [2] Terzaghi, K. & Peck, R.B. (1948). Soil Mechanics in Engineering Practice.
   Wiley (the correction of N in very fine or silty sand below the water table).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

__all__ = [
    "FLUCTUATING_LOADS",
    "STATIC_LOADS",
    "compressibility_index",
    "corrected_n",
    "immediate_settlement",
    "influence_depth",
    "settlement",
    "shape_factor",
    "thickness_factor",
    "time_factor",
]

#: Ic = IC_COEFFICIENT / N̄ ** IC_EXPONENT (Burland & Burbidge 1985; constants from memory)
IC_COEFFICIENT = 1.71
IC_EXPONENT = 1.4
#: z1 = B ** INFLUENCE_EXPONENT [m] when N is constant or increases with depth
#: (Burland & Burbidge 1985; exponent from memory)
INFLUENCE_EXPONENT = 0.763
#: z1 = DECREASING_N_INFLUENCE_RATIO × B when N decreases with depth (Burland &
#: Burbidge 1985; the caller caps it at the base of the soft layer)
DECREASING_N_INFLUENCE_RATIO = 2.0
#: s_i [mm] = q' [kPa] × B [m] ** WIDTH_EXPONENT × Ic (Burland & Burbidge 1985)
WIDTH_EXPONENT = 0.7
#: overconsolidated sand: s_i ÷ 3 below σ'p, and q' − (2/3) σ'p above it
#: (Burland & Burbidge 1985)
RECOMPRESSION_DIVISOR = 3.0
PRECONSOLIDATION_FRACTION = 2.0 / 3.0
#: fs = [SHAPE_COEFFICIENT (L/B) / (L/B + SHAPE_OFFSET)]² (Burland & Burbidge 1985; from memory)
SHAPE_COEFFICIENT = 1.25
SHAPE_OFFSET = 0.25
#: ft = 1 + R3 + R log10(t / TIME_REFERENCE) for t ≥ 3 yr (Burland & Burbidge 1985)
TIME_REFERENCE = 3.0
#: conservative (R3, R) for static and for fluctuating loads (Burland & Burbidge 1985)
STATIC_LOADS = (0.3, 0.2)
FLUCTUATING_LOADS = (0.7, 0.8)
#: N' = N_CORRECTION_THRESHOLD + N_CORRECTION_SLOPE (N − threshold) for N above the
#: threshold, in very fine or silty sand below the water table (Terzaghi & Peck 1948)
N_CORRECTION_THRESHOLD = 15.0
N_CORRECTION_SLOPE = 0.5
#: N' = GRAVEL_FACTOR × N in gravel or sandy gravel (Burland & Burbidge 1985)
GRAVEL_FACTOR = 1.25
#: millimetres to metres
MM = 1e-3


def corrected_n(
    n: ArrayLike,
    *,
    gravel: ArrayLike = False,
    fine_or_silty_below_water: ArrayLike = False,
) -> np.ndarray:
    """SPT blow count corrected for gravel or for very fine or silty sand below the water table.

    Parameters
    ----------
    n : array_like
        Measured SPT N (blows per 300 mm; no overburden correction in this
        method). [-]
    gravel : array_like of bool, keyword-only
        Gravel or sandy gravel: N' = 1.25 N.
    fine_or_silty_below_water : array_like of bool, keyword-only
        Very fine or silty sand below the water table: N' = 15 + 0.5 (N − 15)
        for N > 15.

    Returns
    -------
    numpy.ndarray
        N'. [-]

    Raises
    ------
    ValueError
        If a soil is flagged both gravel and fine or silty sand.

    References
    ----------
    .. [1] Burland & Burbidge (1985); Terzaghi & Peck (1948), see the module
       references.

    Examples
    --------
    >>> float(corrected_n(25.0, fine_or_silty_below_water=True))
    20.0
    >>> float(corrected_n(20.0, gravel=True))
    25.0
    """
    value = np.asarray(n, dtype=float)
    g = np.asarray(gravel, dtype=bool)
    f = np.asarray(fine_or_silty_below_water, dtype=bool)
    if np.any(g & f):
        raise ValueError("a soil cannot be both gravel and very fine or silty sand")
    reduced = np.where(
        value > N_CORRECTION_THRESHOLD,
        N_CORRECTION_THRESHOLD + N_CORRECTION_SLOPE * (value - N_CORRECTION_THRESHOLD),
        value,
    )
    return np.where(g, GRAVEL_FACTOR * value, np.where(f, reduced, value))


def compressibility_index(n_mean: ArrayLike) -> np.ndarray:
    """Compressibility index Ic of normally consolidated sand and gravel.

    Parameters
    ----------
    n_mean : array_like
        N̄, arithmetic mean of the (corrected) SPT N over the depth of influence
        z1 below the base. [-] Must be > 0 (NaN otherwise).

    Returns
    -------
    numpy.ndarray
        Ic. [mm/(kPa · m^0.7)]

    Notes
    -----
    .. math:: I_c = 1.71 / \\bar{N}^{1.4}

    References
    ----------
    .. [1] Burland & Burbidge (1985), see the module references (constants from memory).

    Examples
    --------
    >>> round(float(compressibility_index(20.0)), 5)
    0.0258
    """
    n = np.asarray(n_mean, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ic = IC_COEFFICIENT / n**IC_EXPONENT
    return np.where(n > 0.0, ic, np.nan)


def influence_depth(width: ArrayLike, *, n_decreases: ArrayLike = False) -> np.ndarray:
    """Depth of influence z1 below the footing base.

    Parameters
    ----------
    width : array_like
        Footing width B. [m]
    n_decreases : array_like of bool, keyword-only
        True where N decreases consistently with depth: z1 = 2B (the caller then
        takes the smaller of this and the base of the soft layer).

    Returns
    -------
    numpy.ndarray
        z1. [m]

    Notes
    -----
    .. math:: z_1 = B^{0.763} \\quad (B \\text{ in m})

    References
    ----------
    .. [1] Burland & Burbidge (1985), see the module references (exponent from memory).

    Examples
    --------
    >>> round(float(influence_depth(3.0)), 3)
    2.312
    """
    b = np.asarray(width, dtype=float)
    with np.errstate(invalid="ignore"):
        usual = b**INFLUENCE_EXPONENT
    return np.where(np.asarray(n_decreases, dtype=bool), DECREASING_N_INFLUENCE_RATIO * b, usual)


# settlement() has a keyword of the same name
_influence_depth = influence_depth


def shape_factor(length_ratio: ArrayLike) -> np.ndarray:
    """Shape factor fs.

    Parameters
    ----------
    length_ratio : array_like
        L/B ≥ 1. [-] Values below 1 are taken as 1 (B is the short side).

    Returns
    -------
    numpy.ndarray
        fs: 1 for a square or circle, tending to 1.5625 for a strip. [-]

    Notes
    -----
    .. math:: f_s = \\left[\\frac{1.25\\,L/B}{L/B + 0.25}\\right]^2

    References
    ----------
    .. [1] Burland & Burbidge (1985), see the module references (form from memory).

    Examples
    --------
    >>> round(float(shape_factor(2.0)), 3)
    1.235
    """
    r = np.clip(np.asarray(length_ratio, dtype=float), 1.0, None)
    return (SHAPE_COEFFICIENT * r / (r + SHAPE_OFFSET)) ** 2


def thickness_factor(thickness: ArrayLike, influence_depth: ArrayLike) -> np.ndarray:
    """Correction fl for a compressible layer thinner than the depth of influence.

    Parameters
    ----------
    thickness : array_like
        Hs, thickness of sand or gravel below the base, over a much stiffer
        stratum (inf: none within reach). [m]
    influence_depth : array_like
        z1 from :func:`influence_depth`. [m]

    Returns
    -------
    numpy.ndarray
        fl, 0 to 1 (1 when Hs ≥ z1). [-]

    Notes
    -----
    .. math:: f_l = \\frac{H_s}{z_1}\\left(2 - \\frac{H_s}{z_1}\\right), \\quad H_s < z_1

    References
    ----------
    .. [1] Burland & Burbidge (1985), see the module references (form from memory).

    Examples
    --------
    >>> round(float(thickness_factor(1.5, influence_depth(3.0))), 4)
    0.8766
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.clip(
            np.asarray(thickness, dtype=float) / np.asarray(influence_depth, dtype=float), 0.0, 1.0
        )
    return ratio * (2.0 - ratio)


def time_factor(
    time: ArrayLike, r3: ArrayLike = STATIC_LOADS[0], r: ArrayLike = STATIC_LOADS[1]
) -> np.ndarray:
    """Time factor ft for creep of sand and gravel after loading.

    Parameters
    ----------
    time : array_like
        Time since loading t. [yr]
    r3 : array_like, optional
        R3, time-dependent settlement in the first 3 years as a fraction of s_i.
        [-] Default 0.3 (static loads); 0.7 for fluctuating loads.
    r : array_like, optional
        R, further fraction per log cycle of time after 3 years. [-] Default 0.2
        (static loads); 0.8 for fluctuating loads.

    Returns
    -------
    numpy.ndarray
        ft ≥ 1. [-]

    Notes
    -----
    For t ≥ 3 yr (Burland & Burbidge 1985):

    .. math:: f_t = 1 + R_3 + R \\log_{10}(t/3)

    Before 3 years the paper gives only the total R3. **Tool choice**: R3 is
    taken to develop linearly in time, f_t = 1 + R3 · t/3 for 0 ≤ t < 3 yr
    (f_t = 1 at t ≤ 0). This is continuous at 3 years, starts from the
    immediate settlement and never exceeds the paper's value at 3 years; a
    linear-in-log-time ramp would need an arbitrary start time.

    Examples
    --------
    >>> round(float(time_factor(30.0)), 2)
    1.5
    """
    t = np.asarray(time, dtype=float)
    within = np.clip(t, 0.0, TIME_REFERENCE) / TIME_REFERENCE
    after = np.log10(np.maximum(t, TIME_REFERENCE) / TIME_REFERENCE)
    return 1.0 + np.asarray(r3, dtype=float) * within + np.asarray(r, dtype=float) * after


def immediate_settlement(
    pressure: ArrayLike,
    width: ArrayLike,
    compressibility_index: ArrayLike,
    preconsolidation: ArrayLike | None = None,
) -> np.ndarray:
    """Immediate settlement s_i of a footing on sand or gravel.

    Parameters
    ----------
    pressure : array_like
        q', average effective bearing pressure on the base. [kPa] Our
        recollection of the paper is the *gross* effective pressure, with the
        excavation handled through σ'p (METHODS.md §4 flags gross vs net as to
        be confirmed); q' ≤ 0 gives 0.
    width : array_like
        Footing width B. [m]
    compressibility_index : array_like
        Ic from :func:`compressibility_index`. [mm/(kPa · m^0.7)]
    preconsolidation : array_like, optional
        σ'p, preconsolidation pressure of an overconsolidated (preloaded) sand,
        or for a footing at the base of an excavation the largest previous
        effective overburden at founding level. [kPa] None: normally consolidated.

    Returns
    -------
    numpy.ndarray
        s_i. [m]

    Notes
    -----
    In the paper's units (s_i in mm, q' and σ'p in kPa, B in m):

    .. math::

        s_i = q' B^{0.7} I_c \\quad \\text{(normally consolidated)}

        s_i = q' B^{0.7} I_c / 3 \\quad (q' \\le \\sigma'_p)

        s_i = (q' - \\tfrac{2}{3}\\sigma'_p) B^{0.7} I_c \\quad (q' > \\sigma'_p)

    The two overconsolidated cases are max(q'/3, q' − 2σ'p/3) B^0.7 Ic, which
    join at q' = σ'p.

    References
    ----------
    .. [1] Burland & Burbidge (1985), see the module references.

    Examples
    --------
    B = 3 m, N̄ = 20, q' = 150 kPa (METHODS.md §4, computed 8.35 mm):

    >>> round(float(immediate_settlement(150.0, 3.0, compressibility_index(20.0))) * 1000, 2)
    8.35
    """
    q = np.maximum(np.asarray(pressure, dtype=float), 0.0)
    if preconsolidation is not None:
        sp = np.asarray(preconsolidation, dtype=float)
        q = np.maximum(q / RECOMPRESSION_DIVISOR, q - PRECONSOLIDATION_FRACTION * sp)
    b = np.asarray(width, dtype=float)
    with np.errstate(invalid="ignore"):
        return MM * q * b**WIDTH_EXPONENT * np.asarray(compressibility_index, dtype=float)


def settlement(
    pressure: ArrayLike,
    width: ArrayLike,
    length: ArrayLike,
    compressibility_index: ArrayLike,
    time: ArrayLike,
    thickness: ArrayLike = np.inf,
    *,
    preconsolidation: ArrayLike | None = None,
    influence_depth: ArrayLike | None = None,
    r3: ArrayLike = STATIC_LOADS[0],
    r: ArrayLike = STATIC_LOADS[1],
) -> np.ndarray:
    """Settlement of a footing on sand or gravel by Burland & Burbidge (1985).

    Parameters
    ----------
    pressure : array_like
        q', average effective bearing pressure. [kPa] (see :func:`immediate_settlement`)
    width, length : array_like
        Footing sides (either order: B is the smaller; a circle has B = L = D). [m]
    compressibility_index : array_like
        Ic from :func:`compressibility_index` of the mean N over z1. [mm/(kPa · m^0.7)]
    time : array_like
        Time since loading. [yr]
    thickness : array_like, optional
        Hs, thickness of the granular layer below the base over a much stiffer
        stratum. [m] Default inf (fl = 1).
    preconsolidation : array_like, optional, keyword-only
        σ'p of an overconsolidated sand. [kPa] None: normally consolidated.
    influence_depth : array_like, optional, keyword-only
        z1. [m] Default B^0.763 (:func:`influence_depth`).
    r3, r : array_like, optional, keyword-only
        Time-factor ratios (:func:`time_factor`); defaults for static loads.

    Returns
    -------
    numpy.ndarray
        s_t. [m]

    Notes
    -----
    .. math:: s_t = f_s\\, f_l\\, f_t\\, s_i

    Examples
    --------
    >>> s = settlement(150.0, 3.0, 3.0, compressibility_index(20.0), 3.0)
    >>> round(float(s) * 1000, 2)
    10.85
    """
    w = np.asarray(width, dtype=float)
    l = np.asarray(length, dtype=float)
    b = np.minimum(w, l)
    with np.errstate(divide="ignore", invalid="ignore"):
        fs = shape_factor(np.maximum(w, l) / b)
    z1 = _influence_depth(b) if influence_depth is None else influence_depth
    fl = thickness_factor(thickness, z1)
    ft = time_factor(time, r3, r)
    return fs * fl * ft * immediate_settlement(pressure, b, compressibility_index, preconsolidation)
