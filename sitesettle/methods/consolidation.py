"""One-dimensional consolidation of clay: primary strain, time factor, secondary compression.

Per sublayer of a cohesive stratum, with mid-depth stresses:

* primary strain from the e–log σ' line (Cc, Cr, σ'p, e0), under the superposed
  Δσz of every footing;
* the average degree of consolidation U(Tv) of Terzaghi's theory for a uniform
  initial excess pore pressure, Tv = cv t / H_dr²;
* secondary compression with Cα after the end of primary consolidation.

References
----------
.. [1] Terzaghi, K. (1925). Erdbaumechanik auf bodenphysikalischer Grundlage.
   Deuticke, Vienna.
.. [2] Terzaghi, K. (1943). Theoretical Soil Mechanics. Wiley.
.. [3] Terzaghi, K. & Peck, R.B. (1967). Soil Mechanics in Engineering Practice,
   2nd ed. Wiley (the e–log σ' settlement cases; from memory).
.. [4] Mesri, G. & Godlewski, P.M. (1977). Time- and stress-compressibility
   interrelationship. J. Geotech. Eng. Div. ASCE 103(GT5), 417–430 (secondary
   compression; from memory).
"""

from __future__ import annotations

import functools
import math

import numpy as np
from numpy.typing import ArrayLike
from scipy.special import erf

from sitesettle.options import Drainage, EndOfPrimary

__all__ = [
    "DRAINAGE_PATH_FRACTION",
    "END_OF_PRIMARY_DEGREE",
    "degree_of_consolidation",
    "drainage_path",
    "end_of_primary_time",
    "end_of_primary_time_factor",
    "primary_strain",
    "secondary_strain",
    "sublayer_degree_of_consolidation",
    "time_factor",
    "time_factor_at",
    "void_ratio_after",
]

#: H_dr / H for each drainage condition: half the thickness when both faces drain,
#: the whole thickness when one does (Terzaghi 1943; every text).
#: ("auto" is resolved by the engine from the neighbouring strata; alone it is "both")
DRAINAGE_PATH_FRACTION = {
    Drainage.AUTO: 0.5,
    Drainage.BOTH: 0.5,
    Drainage.TOP: 1.0,
    Drainage.BOTTOM: 1.0,
}

#: Average degree of consolidation that ends primary consolidation, per convention
#: (common practice, METHODS.md §5.3); Tv = 1 is the third convention.
END_OF_PRIMARY_DEGREE = {EndOfPrimary.U95: 0.95, EndOfPrimary.U90: 0.90}
TV1_TIME_FACTOR = 1.0

#: Below this Tv the series is replaced by its short-time form U = √(4 Tv/π),
#: which is then exact to 1e-15 (the neglected terms are of order exp(−1/Tv);
#: checked against a 200 000-term series).
SHORT_TIME_FACTOR = 0.02
SHORT_TIME_DEGREE = float(np.sqrt(4.0 * SHORT_TIME_FACTOR / np.pi))
#: Series terms: at Tv ≥ 0.02 the neglected tail after 30 terms is below 1e-40.
SERIES_TERMS = 30
NEWTON_ITERATIONS = 30


#: unloading keeps at least this fraction of the initial effective stress (a clay
#: unloaded to zero effective stress would swell without bound in the e–log model)
MIN_UNLOADED_STRESS = 0.05


def primary_strain(
    sigma_v0: ArrayLike,
    stress_increase: ArrayLike,
    preconsolidation: ArrayLike,
    compression_index: ArrayLike,
    recompression_index: ArrayLike,
    void_ratio: ArrayLike,
) -> np.ndarray:
    """Final one-dimensional primary consolidation strain from the e–log σ' line.

    Parameters
    ----------
    sigma_v0 : array_like
        Initial vertical effective stress σ'0 at mid-sublayer. [kPa] Must be > 0
        (NaN otherwise).
    stress_increase : array_like
        Increase of vertical stress Δσ (superposed Boussinesq Δσz). [kPa]
        Δσ < 0 (unloading: an excavation, a footing lighter than the soil it
        replaces) swells the clay on the recompression (swelling) line, Cr; the
        final effective stress is kept at least :data:`MIN_UNLOADED_STRESS` × σ'0.
    preconsolidation : array_like
        Preconsolidation pressure σ'p. [kPa] Values below σ'0 are taken as σ'0
        (normally consolidated): a clay cannot be under-consolidated in this model.
    compression_index : array_like
        Cc. [-]
    recompression_index : array_like
        Cr (recompression/swelling index). [-]
    void_ratio : array_like
        Initial void ratio e0. [-]

    Returns
    -------
    numpy.ndarray
        Vertical strain ε = Δe/(1 + e0); sublayer settlement = ε H; negative for
        swelling. [-]

    Notes
    -----
    With σ'f = σ'0 + Δσ and σ'p ≥ σ'0 this one expression covers the three
    textbook cases (NC: σ'p = σ'0; OC with σ'f ≤ σ'p; OC crossing σ'p), and
    unloading (σ'f < σ'0: the first term is negative, the second 0), swelling on Cr
    (e.g. Craig's Soil Mechanics §7; Terzaghi & Peck 1967):

    .. math::

        \\varepsilon = \\frac{1}{1 + e_0}\\left[C_r \\log_{10}
        \\frac{\\min(\\sigma'_f, \\sigma'_p)}{\\sigma'_0}
        + C_c \\log_{10}\\frac{\\max(\\sigma'_f, \\sigma'_p)}{\\sigma'_p}\\right]

    References
    ----------
    .. [1] Terzaghi (1925); Terzaghi & Peck (1967), see the module references.

    Examples
    --------
    H = 4 m, e0 = 1, Cc = 0.3, σ'0 = 60 kPa, Δσ = 40 kPa, normally consolidated
    (METHODS.md §5.1, computed 133.1 mm):

    >>> round(float(primary_strain(60.0, 40.0, 60.0, 0.3, 0.05, 1.0)) * 4.0 * 1000, 1)
    133.1

    Unloading by 30 kPa swells on Cr: 0.05/2 × log10(30/60) × 4 m = −30.1 mm

    >>> round(float(primary_strain(60.0, -30.0, 60.0, 0.3, 0.05, 1.0)) * 4.0 * 1000, 1)
    -30.1
    """
    s0 = np.asarray(sigma_v0, dtype=float)
    sf = np.maximum(s0 + np.asarray(stress_increase, dtype=float), MIN_UNLOADED_STRESS * s0)
    sp = np.maximum(np.asarray(preconsolidation, dtype=float), s0)
    cc = np.asarray(compression_index, dtype=float)
    cr = np.asarray(recompression_index, dtype=float)
    e0 = np.asarray(void_ratio, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        strain = (
            cr * np.log10(np.minimum(sf, sp) / s0) + cc * np.log10(np.maximum(sf, sp) / sp)
        ) / (1.0 + e0)
    return np.where(s0 > 0.0, strain, np.nan)


def degree_of_consolidation(time_factor: ArrayLike, *, terms: int = SERIES_TERMS) -> np.ndarray:
    """Average degree of consolidation U(Tv) of Terzaghi's one-dimensional theory.

    Parameters
    ----------
    time_factor : array_like
        Tv = cv t / H_dr². [-] Tv ≤ 0 gives 0; Tv = inf gives 1.
    terms : int, optional
        Number of series terms for Tv > 0.02 (30: the neglected tail is below 1e-40).

    Returns
    -------
    numpy.ndarray
        U, 0 to 1 (a fraction, not a percentage). [-]

    Notes
    -----
    Uniform initial excess pore pressure (Terzaghi 1925, 1943):

    .. math:: U = 1 - \\sum_{m=0}^{\\infty} \\frac{2}{M^2} e^{-M^2 T_v},
              \\quad M = \\frac{\\pi}{2}(2m + 1)

    For Tv ≤ 0.02 the short-time form U = √(4 Tv/π) is used; it equals the
    series there to 1e-15.

    Examples
    --------
    >>> round(float(degree_of_consolidation(0.197)), 3)
    0.5
    """
    if int(terms) < 1:
        raise ValueError(f"terms must be a positive integer, got {terms!r}")
    tv = np.asarray(time_factor, dtype=float)
    long = np.maximum(tv, SHORT_TIME_FACTOR)
    series = np.zeros_like(long)
    for m in range(int(terms)):
        big_m = 0.5 * np.pi * (2 * m + 1)
        series = series + 2.0 / big_m**2 * np.exp(-(big_m**2) * long)
    short = np.sqrt(4.0 * np.clip(tv, 0.0, SHORT_TIME_FACTOR) / np.pi)
    return np.where(tv <= SHORT_TIME_FACTOR, short, 1.0 - series)


def _degree_slope(tv: np.ndarray, terms: int = SERIES_TERMS) -> np.ndarray:
    """dU/dTv of the series, 2 Σ exp(−M² Tv)."""
    slope = np.zeros_like(tv)
    for m in range(terms):
        big_m = 0.5 * np.pi * (2 * m + 1)
        slope = slope + 2.0 * np.exp(-(big_m**2) * tv)
    return slope


def time_factor(degree: ArrayLike) -> np.ndarray:
    """Time factor Tv at which the average degree of consolidation reaches U (inverse of U(Tv)).

    Parameters
    ----------
    degree : array_like
        U as a fraction, 0 to 1. [-] U ≤ 0 gives 0, U ≥ 1 gives inf.

    Returns
    -------
    numpy.ndarray
        Tv. [-]

    Notes
    -----
    Below U = √(0.08/π) = 0.160 the exact short-time form Tv = π U²/4 is used;
    above, Newton's method on the series of :func:`degree_of_consolidation`
    (from the classical approximation, until the step is below 1e-12 Tv, at
    most 30 steps; Newton being quadratic, the error is then far smaller). Printed
    values (Terzaghi 1943): Tv = 0.197 at U = 50 %, 0.848 at 90 %.

    Examples
    --------
    >>> round(float(time_factor(0.9)), 3)
    0.848
    """
    u = np.asarray(degree, dtype=float)
    uc = np.clip(u, SHORT_TIME_DEGREE, 1.0 - 1e-15)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        # starting value: π/4 U² up to U = 0.6, the one-term series beyond
        guess = np.where(
            uc <= 0.6,
            0.25 * np.pi * uc**2,
            -4.0 / np.pi**2 * np.log(np.pi**2 / 8.0 * (1.0 - uc)),
        )
        tv = guess
        for _ in range(NEWTON_ITERATIONS):
            step = (degree_of_consolidation(tv) - uc) / _degree_slope(tv)
            tv = np.maximum(tv - step, SHORT_TIME_FACTOR)
            # NaN compares False, so NaN entries never hold the loop up
            if not np.any(np.abs(step) > 1e-12 * tv):
                break
    tv = np.where(u >= 1.0, np.inf, tv)
    tv = np.where(u <= SHORT_TIME_DEGREE, 0.25 * np.pi * np.clip(u, 0.0, None) ** 2, tv)
    return tv


def _parse(choice_type, value, name):
    try:
        return choice_type(str(value).strip().lower())
    except ValueError:
        valid = ", ".join(repr(m.value) for m in choice_type)
        raise ValueError(f"unknown {name} {value!r}; valid: {valid}") from None


def drainage_path(thickness: ArrayLike, drainage: str = Drainage.BOTH) -> np.ndarray:
    """Length of the drainage path H_dr of a cohesive layer.

    Parameters
    ----------
    thickness : array_like
        Thickness H of the consolidating layer. [m]
    drainage : {"both", "top", "bottom"}
        Drained faces (:class:`sitesettle.options.Drainage`).

    Returns
    -------
    numpy.ndarray
        H_dr: H/2 when both faces drain, H when one does. [m]

    Examples
    --------
    >>> float(drainage_path(4.0, "both")), float(drainage_path(4.0, "top"))
    (2.0, 4.0)
    """
    d = _parse(Drainage, drainage, "drainage")
    return DRAINAGE_PATH_FRACTION[d] * np.asarray(thickness, dtype=float)


def time_factor_at(time: ArrayLike, cv: ArrayLike, drainage_path: ArrayLike) -> np.ndarray:
    """Terzaghi time factor Tv = cv t / H_dr².

    Parameters
    ----------
    time : array_like
        Time since loading t. [yr]
    cv : array_like
        Coefficient of consolidation. [m²/yr]
    drainage_path : array_like
        H_dr from :func:`drainage_path`. [m] A zero path (a layer of no
        thickness) gives Tv = inf: nothing is left to consolidate.

    Returns
    -------
    numpy.ndarray
        Tv. [-]

    Notes
    -----
    .. math:: T_v = c_v t / H_{dr}^2
    """
    t = np.asarray(time, dtype=float)
    c = np.asarray(cv, dtype=float)
    h = np.asarray(drainage_path, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        tv = c * t / h**2
    unknown = np.isnan(t) | np.isnan(c) | np.isnan(h)
    return np.where(unknown, np.nan, np.where(h == 0.0, np.inf, tv))


def end_of_primary_time_factor(convention: str) -> float:
    """Tv at which primary consolidation is taken to end, for a convention.

    Parameters
    ----------
    convention : {"u95", "u90", "tv1"}
        :class:`sitesettle.options.EndOfPrimary` (not "given").

    Returns
    -------
    float
        Tv: 1.129 (U = 95 %), 0.848 (U = 90 %) or 1, from :func:`time_factor`.
    """
    c = _parse(EndOfPrimary, convention, "end-of-primary convention")
    if c is EndOfPrimary.TV1:
        return TV1_TIME_FACTOR
    if c is EndOfPrimary.GIVEN:
        raise ValueError('the "given" convention has no time factor; pass the time itself')
    return _time_factor_of_degree(END_OF_PRIMARY_DEGREE[c])


@functools.lru_cache(maxsize=8)
def _time_factor_of_degree(degree: float) -> float:
    # the inverse is a root search: cache it, the conventions are a handful of constants
    return float(time_factor(degree))


def end_of_primary_time(
    convention: str,
    cv: ArrayLike,
    drainage_path: ArrayLike,
    given: ArrayLike | None = None,
) -> np.ndarray:
    """Time t_p at which secondary compression starts.

    Parameters
    ----------
    convention : {"u95", "u90", "tv1", "given"}
        :class:`sitesettle.options.EndOfPrimary`. There is no single standard
        (common practice, METHODS.md §5.3): the tool makes it an explicit choice.
    cv : array_like
        Coefficient of consolidation. [m²/yr] cv = 0 gives inf.
    drainage_path : array_like
        H_dr. [m]
    given : array_like, optional
        The time itself, for the "given" convention. [yr]

    Returns
    -------
    numpy.ndarray
        t_p. [yr]

    Notes
    -----
    .. math:: t_p = T_{v,p}\\, H_{dr}^2 / c_v
    """
    c = _parse(EndOfPrimary, convention, "end-of-primary convention")
    if c is EndOfPrimary.GIVEN:
        if given is None:
            raise ValueError('the "given" end-of-primary convention needs the time (given=...)')
        return np.asarray(given, dtype=float)
    tv = end_of_primary_time_factor(c)
    h = np.asarray(drainage_path, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return tv * h**2 / np.asarray(cv, dtype=float)


def void_ratio_after(void_ratio: ArrayLike, strain: ArrayLike) -> np.ndarray:
    """Void ratio after a one-dimensional strain, e_p = e0 − ε (1 + e0).

    Parameters
    ----------
    void_ratio : array_like
        Initial void ratio e0. [-]
    strain : array_like
        Vertical strain ε (e.g. from :func:`primary_strain`). [-]

    Returns
    -------
    numpy.ndarray
        Void ratio at the end of primary consolidation. [-]
    """
    e0 = np.asarray(void_ratio, dtype=float)
    return e0 - np.asarray(strain, dtype=float) * (1.0 + e0)


def secondary_strain(
    secondary_index: ArrayLike,
    void_ratio_end_primary: ArrayLike,
    time: ArrayLike,
    end_of_primary: ArrayLike,
) -> np.ndarray:
    """Secondary compression strain after the end of primary consolidation.

    Parameters
    ----------
    secondary_index : array_like
        Cα = Δe / Δlog10 t. [-]
    void_ratio_end_primary : array_like
        e_p, from :func:`void_ratio_after`. [-]
    time : array_like
        Time since loading t. [yr]
    end_of_primary : array_like
        t_p, from :func:`end_of_primary_time`. [yr] Must be > 0 (NaN otherwise);
        inf (cv = 0) gives 0.

    Returns
    -------
    numpy.ndarray
        Strain; sublayer settlement = ε H. 0 for t ≤ t_p. [-]

    Notes
    -----
    .. math:: \\varepsilon_s = \\frac{C_\\alpha}{1 + e_p} \\log_{10}(t / t_p), \\quad t > t_p

    References
    ----------
    .. [1] Mesri & Godlewski (1977), see the module references.

    Examples
    --------
    Cα = 0.012, e_p = 0.9, H = 4 m, t_p = 1 yr, t = 10 yr (METHODS.md §5.3, computed):

    >>> round(float(secondary_strain(0.012, 0.9, 10.0, 1.0)) * 4.0 * 1000, 1)
    25.3
    """
    ca = np.asarray(secondary_index, dtype=float)
    ep = np.asarray(void_ratio_end_primary, dtype=float)
    t = np.asarray(time, dtype=float)
    tp = np.asarray(end_of_primary, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        strain = ca / (1.0 + ep) * np.log10(np.maximum(t, tp) / tp)
    strain = np.where(np.isposinf(tp) & ~np.isnan(t), 0.0 * ca * ep, strain)
    return np.where(tp > 0.0, strain, np.nan)


#: series terms are kept while exp(−k² cv t) is above exp(−SERIES_EXPONENT)
#: (the neglected terms are then below 1e-13 of the first)
SERIES_EXPONENT = 30.0
#: at most this many series terms (below that the layer is short-time-like and
#: the truncated series still averages each sublayer to better than 1e-4)
MAX_SERIES_TERMS = 4000
#: elements of the largest temporary array (columns × sublayers × terms)
_CHUNK = 4_000_000


def _erf_antiderivative(x: np.ndarray) -> np.ndarray:
    """F(x) = x erf(x) + exp(−x²)/√π, so that ∫ erf(x) dx = F(x)."""
    return x * erf(x) + np.exp(-(x**2)) / math.sqrt(math.pi)


def _mean_sin(k: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """∫_a^b sin(kζ) dζ, with k (..., N) and a, b broadcastable."""
    return (np.cos(k * a) - np.cos(k * b)) / k


def sublayer_degree_of_consolidation(
    top: ArrayLike,
    bottom: ArrayLike,
    initial_excess: ArrayLike,
    thickness: ArrayLike,
    cv: ArrayLike,
    time: ArrayLike,
    drainage: ArrayLike,
) -> np.ndarray:
    r"""Degree of consolidation of each sublayer of a clay layer under any initial load profile.

    Parameters
    ----------
    top, bottom : array_like
        (m, n) depth of each sublayer's top and bottom below the top of the
        consolidating layer, for m layers (columns) of up to n sublayers [m];
        padding sublayers have ``top == bottom``.
    initial_excess : array_like
        (m, n) initial excess pore pressure of each sublayer, the stress
        increase Δσz it carries [kPa] (≥ 0; the profile may vary freely).
    thickness : array_like
        (m,) thickness L of each layer [m]; ``inf`` for a layer with no bottom
        (drained at its top).
    cv : array_like
        (m,) coefficient of consolidation [m²/yr].
    time : array_like
        (nt,) times since loading [yr].
    drainage : array_like
        (m,) drained faces: ``"both"``, ``"top"`` or ``"bottom"``
        (:class:`sitesettle.options.Drainage`).

    Returns
    -------
    numpy.ndarray
        (m, n, nt) U = 1 − ū/u0 of every sublayer, ū its mean excess pore
        pressure at the time, clipped to [0, 1] (a sublayer next to a more
        loaded one can briefly gain pore pressure); 1 where u0 = 0 [-].

    Notes
    -----
    Terzaghi's one-dimensional equation ∂u/∂t = cv ∂²u/∂z² (Terzaghi 1925,
    1943) with u = 0 on a drained face and ∂u/∂z = 0 on an impermeable one,
    from the piecewise-constant initial profile u0:

    * a finite layer drained on both faces (Fourier sine series, exact):

      .. math:: u(z,t) = \sum_{n\ge1} b_n \sin(k_n z)\, e^{-k_n^2 c_v t},
                \quad k_n = n\pi/L,\quad b_n = \frac{2}{L}\int_0^L u_0 \sin(k_n z)\,dz

    * drained on one face only: the same with k = (2m+1)π/(2L), the layer
      being half of a doubly drained layer of thickness 2L (mirror image);
    * no bottom (drained at the top): the half-space solution by the method
      of images, in closed form with the error function:

      .. math:: u(z,t) = \sum_j \frac{u_{0j}}{2}\left[\operatorname{erf}\frac{z-a_j}{s}
                - \operatorname{erf}\frac{z-b_j}{s} - \operatorname{erf}\frac{z+b_j}{s}
                + \operatorname{erf}\frac{z+a_j}{s}\right], \quad s = 2\sqrt{c_v t}

    Sublayer means are exact integrals of these expressions. For a uniform u0
    the thickness-weighted mean of U is Terzaghi's average degree
    U(Tv) (:func:`degree_of_consolidation`); for a profile that decays with
    depth the upper, more loaded part drains first, as it does in the field.
    The sublayer settlement at time t is its final strain × thickness × U
    (common practice for the e–log σ' strain, which is not linear in the stress).

    Examples
    --------
    A uniform load on a 4 m layer drained on both faces at Tv = 0.197:

    >>> import numpy as np
    >>> e = np.linspace(0.0, 4.0, 41)
    >>> u = sublayer_degree_of_consolidation(e[None, :-1], e[None, 1:], np.ones((1, 40)),
    ...                                      [4.0], [1.0], [0.197 * 4.0], ["both"])
    >>> round(float(u.mean()), 3)
    0.5
    """
    a = np.atleast_2d(np.asarray(top, dtype=float))
    b = np.atleast_2d(np.asarray(bottom, dtype=float))
    u0 = np.atleast_2d(np.clip(np.asarray(initial_excess, dtype=float), 0.0, None))
    L = np.atleast_1d(np.asarray(thickness, dtype=float))
    c = np.atleast_1d(np.asarray(cv, dtype=float))
    t = np.atleast_1d(np.asarray(time, dtype=float))
    d = np.array([str(x) for x in np.atleast_1d(np.asarray(drainage, dtype=object))])
    m, n = a.shape
    h = b - a
    out = np.ones((m, n, len(t)))
    # bottom-drained: flip the layer so that its drained face is on top
    flip = (d == Drainage.BOTTOM.value) & np.isfinite(L)
    a = np.where(flip[:, None], L[:, None] - b, a)
    b = np.where(flip[:, None], a + h, b)
    one_face = (d != Drainage.BOTH.value) | ~np.isfinite(L)
    ubar = np.zeros((m, n, len(t)))
    open_ = ~np.isfinite(L)
    fin = np.flatnonzero(~open_)
    later = t > 0
    ubar[..., ~later] = u0[..., None]
    for it in np.flatnonzero(later):
        if np.any(open_):
            ct = c * t[it]
            ubar[open_, :, it] = _half_space_mean(a[open_], b[open_], u0[open_], ct[open_])
    if len(fin) and later.any():
        # the series' sublayer integrals and coefficients do not depend on time:
        # computed once for all the times (each time keeps its own number of terms)
        ubar[np.ix_(fin, np.arange(n), np.flatnonzero(later))] = _series_means(
            a[fin], b[fin], u0[fin], L[fin], c[fin], t[later], one_face[fin]
        )
    with np.errstate(divide="ignore", invalid="ignore"):
        U = 1.0 - ubar / u0[..., None]
    loaded = (u0 > 0) & (h > 0)
    out = np.where(loaded[..., None], np.clip(np.nan_to_num(U, nan=1.0), 0.0, 1.0), 1.0)
    return np.where(np.isnan(c)[:, None, None], np.nan, out)


def _series_terms_each(span, c, times) -> list[int]:
    """Series terms needed at each of ``times`` [yr] (at least 1, at most
    ``MAX_SERIES_TERMS``): the most any layer needs for exp(−k²·cv·t) of the last
    term to fall below exp(−SERIES_EXPONENT), k = Nπ/span."""
    if not len(span):
        return [1] * len(times)
    ct = c[:, None] * np.asarray(times, dtype=float)[None, :]  # (m, nt)
    with np.errstate(divide="ignore", invalid="ignore"):
        need = np.where(ct > 0, span[:, None] / math.pi * np.sqrt(SERIES_EXPONENT / ct), 1.0)
    top = np.nanmax(np.ceil(need), axis=0)
    return [int(np.clip(v, 1, MAX_SERIES_TERMS)) for v in top]


def _series_means(a, b, u0, L, c, times, one_face) -> np.ndarray:
    """(m, n, nt) mean excess pore pressure of the sublayers of finite layers at each time > 0
    (Fourier series of Terzaghi's solution).

    Each time keeps its own number of terms (:func:`_series_terms_each`); the sublayer
    integrals ∫sin(kζ)dζ, which do not depend on time, are computed once for the most
    terms asked.
    """
    m, n = a.shape
    nt = len(times)
    h = b - a
    span = np.where(one_face, 2.0 * L, L)  # the doubly drained equivalent layer
    counts = _series_terms_each(span, c, times)
    terms = max(counts)
    out = np.zeros((m, n, nt))
    step = max(1, _CHUNK // max(1, n * terms))
    j = np.arange(1, terms + 1, dtype=float)
    for s in range(0, m, step):
        sl = slice(s, s + step)
        # one face: k = (2i−1)π/(2L); both: k = iπ/L
        k_all = np.where(
            one_face[sl, None],
            (2.0 * j - 1.0) * math.pi / (2.0 * L[sl, None]),
            j * math.pi / L[sl, None],
        )  # (mc, N)
        integ_all = _mean_sin(k_all[:, None, :], a[sl, :, None], b[sl, :, None])  # (mc, n, N)
        for it, (tt, nk) in enumerate(zip(times, counts)):
            k = np.ascontiguousarray(k_all[:, :nk])
            integ = np.ascontiguousarray(integ_all[:, :, :nk])
            bn = 2.0 / L[sl, None] * np.einsum("mj,mjn->mn", u0[sl], integ)
            decay = np.exp(-(k**2) * (c[sl] * tt)[:, None])
            with np.errstate(divide="ignore", invalid="ignore"):
                mean = np.einsum("mn,mjn->mj", bn * decay, integ) / h[sl]
            out[sl, :, it] = np.where(h[sl] > 0, mean, 0.0)
    return out


def _half_space_mean(a, b, u0, ct) -> np.ndarray:
    """Mean excess pore pressure of each sublayer of a layer with no bottom (images)."""
    m, n = a.shape
    h = b - a
    s = 2.0 * np.sqrt(ct)[:, None, None]
    out = np.zeros((m, n))
    step = max(1, _CHUNK // max(1, n * n))
    F = _erf_antiderivative
    for r in range(0, m, step):
        sl = slice(r, r + step)
        ai, bi = a[sl, :, None], b[sl, :, None]  # the sublayer averaged over
        aj, bj = a[sl, None, :], b[sl, None, :]  # the loaded sublayers
        ss = s[sl]

        def ramp(x0, ai=ai, bi=bi, ss=ss):
            return F((bi - x0) / ss) - F((ai - x0) / ss)

        def image(x0, ai=ai, bi=bi, ss=ss):
            return F((bi + x0) / ss) - F((ai + x0) / ss)

        kern = ramp(aj) - ramp(bj) - image(bj) + image(aj)  # (mc, n, n)
        with np.errstate(divide="ignore", invalid="ignore"):
            mean = 0.5 * ss[..., 0] * np.einsum("mij,mj->mi", kern, u0[sl]) / h[sl]
        out[sl] = np.where(h[sl] > 0, mean, 0.0)
    return out
