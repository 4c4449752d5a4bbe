"""Schmertmann's strain-influence method for footings on granular soil.

The settlement of a footing is the integral of the vertical strain
ε_z = C1 C2 Δp I_z / E over the depth of influence, with the strain-influence
factor I_z read from a triangular diagram that depends on the footing shape:

.. math::

    s = C_1 C_2 \\, \\Delta p \\sum_i \\frac{1}{E_i} \\int_{z_{top,i}}^{z_{bot,i}} I_z \\, dz

Two published versions: Schmertmann (1970), one "2B-0.6" diagram and E = 2 qc;
Schmertmann, Hartman & Brown (1978), an axisymmetric (L/B = 1) and a
plane-strain (L/B ≥ 10) diagram with a peak I_zp that grows with the net
pressure. Between the two 1978 diagrams the parameters are interpolated in L/B
(common practice; the papers give only the end diagrams).

Depths ``z`` in this module are measured **below the footing base**, in metres.
The integral of the diagram over each sublayer is exact (the diagram is
piecewise linear, its integral piecewise quadratic), so sublayer boundaries
need not coincide with the diagram's kinks.

References
----------
.. [1] Schmertmann, J.H. (1970). Static cone to compute static settlement over
   sand. J. Soil Mech. Found. Div. ASCE 96(SM3), 1011–1043.
.. [2] Schmertmann, J.H., Hartman, J.P. & Brown, P.R. (1978). Improved strain
   influence factor diagrams. J. Geotech. Eng. Div. ASCE 104(GT8), 1131–1135.
.. [3] Salgado, R. (2008). The Engineering of Foundations. McGraw-Hill
   (linear interpolation of the diagram in L/B; from memory).
.. [4] Terzaghi, K., Peck, R.B. & Mesri, G. (1996). Soil Mechanics in
   Engineering Practice, 3rd ed. Wiley (modulus factor 2.5 [1 + 0.4 log10(L/B)];
   from memory).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from sitesettle.options import ShapeInterpolation

__all__ = [
    "DIAGRAMS",
    "Diagram",
    "creep_factor",
    "diagram",
    "embedment_factor",
    "influence_factor",
    "influence_integral",
    "peak_depth",
    "peak_factor",
    "settlement",
    "sublayer_settlement",
    "youngs_modulus",
]

#: Published diagram parameters. ``iz_base``: I_z at the base; ``peak``: fixed
#: peak value (None: from :func:`peak_factor`); ``peak_depth_ratio`` and
#: ``zero_depth_ratio``: depths of the peak and of I_z = 0 below the base, in
#: footing widths B; ``modulus_factor``: E / qc.
#: Sources: "1970" Schmertmann (1970) [1]; "axisymmetric" (L/B = 1) and
#: "plane_strain" (L/B ≥ 10) Schmertmann, Hartman & Brown (1978) [2] — the
#: numbers are the universally reproduced ones (METHODS.md §3.2–3.3, from memory,
#: not re-read in the 1978 paper).
DIAGRAMS: dict[str, dict[str, float | None]] = {
    "1970": {
        "iz_base": 0.0,
        "peak": 0.6,
        "peak_depth_ratio": 0.5,
        "zero_depth_ratio": 2.0,
        "modulus_factor": 2.0,
    },
    "axisymmetric": {
        "iz_base": 0.1,
        "peak": None,
        "peak_depth_ratio": 0.5,
        "zero_depth_ratio": 2.0,
        "modulus_factor": 2.5,
    },
    "plane_strain": {
        "iz_base": 0.2,
        "peak": None,
        "peak_depth_ratio": 1.0,
        "zero_depth_ratio": 4.0,
        "modulus_factor": 3.5,
    },
}

#: L/B of the axisymmetric and of the plane-strain diagram (Schmertmann et al. 1978)
AXISYMMETRIC_LENGTH_RATIO = 1.0
PLANE_STRAIN_LENGTH_RATIO = 10.0
#: I_zp = PEAK_BASE + PEAK_SLOPE √(Δp/σ'vp) (Schmertmann et al. 1978)
PEAK_BASE = 0.5
PEAK_SLOPE = 0.1
#: C1 = 1 − EMBEDMENT_COEFFICIENT σ'v0/Δp ≥ EMBEDMENT_MINIMUM (Schmertmann 1970)
EMBEDMENT_COEFFICIENT = 0.5
EMBEDMENT_MINIMUM = 0.5
#: C2 = 1 + CREEP_COEFFICIENT log10(t / CREEP_REFERENCE_TIME), t in years (Schmertmann 1970)
CREEP_COEFFICIENT = 0.2
CREEP_REFERENCE_TIME = 0.1
#: E/qc = 2.5 [1 + LOG_MODULUS_SLOPE log10(L/B)] (Terzaghi, Peck & Mesri 1996; from memory)
LOG_MODULUS_SLOPE = 0.4

VERSIONS = ("1970", "1978")


class Diagram(NamedTuple):
    """Strain-influence diagram of one footing shape (fields broadcast together).

    Attributes
    ----------
    iz_base : numpy.ndarray
        I_z at the footing base (z = 0). [-]
    peak_depth_ratio : numpy.ndarray
        Depth of the peak below the base, in footing widths. [-]
    zero_depth_ratio : numpy.ndarray
        Depth below the base where I_z reaches 0, in footing widths. [-]
    modulus_factor : numpy.ndarray
        Young's modulus over cone resistance, E/qc. [-]
    peak : numpy.ndarray or None
        Fixed peak value (0.6 for the 1970 diagram); None for the 1978 diagrams,
        whose peak comes from :func:`peak_factor`.
    """

    iz_base: np.ndarray
    peak_depth_ratio: np.ndarray
    zero_depth_ratio: np.ndarray
    modulus_factor: np.ndarray
    peak: np.ndarray | None = None


def embedment_factor(sigma_v0: ArrayLike, net_pressure: ArrayLike) -> np.ndarray:
    """Embedment (depth) correction C1 of Schmertmann's method.

    Parameters
    ----------
    sigma_v0 : array_like
        Initial vertical effective stress at founding level, σ'v0. [kPa]
    net_pressure : array_like
        Net pressure increase at founding level, Δp = q − σ'v0. [kPa]

    Returns
    -------
    numpy.ndarray
        C1, between 0.5 and 1. [-] Where Δp ≤ 0 (no net load) C1 = 1: the
        correction is undefined there and the settlement is zero anyway.

    Notes
    -----
    .. math:: C_1 = 1 - 0.5\\,\\sigma'_{v0}/\\Delta p \\ge 0.5

    References
    ----------
    .. [1] Schmertmann (1970), see the module references.

    Examples
    --------
    >>> float(embedment_factor(18.0, 182.0))
    0.9505494505494505
    """
    sv0 = np.asarray(sigma_v0, dtype=float)
    dp = np.asarray(net_pressure, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        c1 = np.maximum(1.0 - EMBEDMENT_COEFFICIENT * sv0 / dp, EMBEDMENT_MINIMUM)
    c1 = np.where(dp > 0.0, c1, 1.0)
    return np.where(np.isnan(dp) | np.isnan(sv0), np.nan, c1)


def creep_factor(time: ArrayLike) -> np.ndarray:
    """Creep (time) correction C2 of Schmertmann's method.

    Parameters
    ----------
    time : array_like
        Time since load application, t. [yr]

    Returns
    -------
    numpy.ndarray
        C2 ≥ 1. [-] Before t = 0.1 yr (and for t ≤ 0) C2 = 1: the formula is
        anchored at 0.1 yr and is not extrapolated to shorter times.

    Notes
    -----
    .. math:: C_2 = 1 + 0.2 \\log_{10}(t / 0.1\\ \\mathrm{yr})

    References
    ----------
    .. [1] Schmertmann (1970), see the module references.

    Examples
    --------
    >>> float(creep_factor(10.0))
    1.4
    """
    t = np.asarray(time, dtype=float)
    return 1.0 + CREEP_COEFFICIENT * np.log10(
        np.maximum(t, CREEP_REFERENCE_TIME) / CREEP_REFERENCE_TIME
    )


def _parse_interpolation(interpolation: str) -> ShapeInterpolation:
    try:
        return ShapeInterpolation(str(interpolation).lower())
    except ValueError:
        valid = ", ".join(repr(m.value) for m in ShapeInterpolation)
        raise ValueError(f"unknown interpolation {interpolation!r}; valid: {valid}") from None


def diagram(
    length_ratio: ArrayLike,
    *,
    version: str = "1978",
    interpolation: str = ShapeInterpolation.LINEAR,
) -> Diagram:
    """Strain-influence diagram for footings of length-to-width ratio L/B.

    Parameters
    ----------
    length_ratio : array_like
        L/B ≥ 1 (1 for squares and circles). [-] Values below 1 are taken as 1
        (the caller must pass B as the short side); values above 10 as 10.
    version : {"1978", "1970"}
        "1978": Schmertmann, Hartman & Brown (1978), interpolated between the
        axisymmetric (L/B = 1) and plane-strain (L/B ≥ 10) diagrams.
        "1970": Schmertmann (1970), one diagram for every shape.
    interpolation : {"linear", "log"}
        1978 only, for 1 < L/B < 10. "linear": every parameter linear in L/B
        (common practice, e.g. Salgado 2008 [3]; from memory). "log": the
        diagram as "linear" but E/qc = 2.5 [1 + 0.4 log10(L/B)] (Terzaghi, Peck
        & Mesri 1996 [4]; from memory).

    Returns
    -------
    Diagram
        Fields with the broadcast shape of ``length_ratio``; NaN where it is NaN.

    Notes
    -----
    Linear rule, with r = (min(max(L/B, 1), 10) − 1)/9 and a the axisymmetric,
    p the plane-strain value of each parameter:

    .. math:: x(L/B) = x_a + r\\,(x_p - x_a)

    i.e. I_z(0) = 0.1 + 0.0111 (L/B − 1), peak depth 0.5 + 0.0556 (L/B − 1) B,
    zero depth 2 + 0.222 (L/B − 1) B, E/qc = 2.5 + 0.111 (L/B − 1).

    Examples
    --------
    >>> d = diagram(10.0)
    >>> float(d.iz_base), float(d.zero_depth_ratio), float(d.modulus_factor)
    (0.2, 4.0, 3.5)
    """
    r = np.asarray(length_ratio, dtype=float)
    version = str(version)
    if version == "1970":
        p = DIAGRAMS["1970"]
        nan = np.isnan(r)

        def const(name: str) -> np.ndarray:
            return np.where(nan, np.nan, float(p[name]))

        return Diagram(
            iz_base=const("iz_base"),
            peak_depth_ratio=const("peak_depth_ratio"),
            zero_depth_ratio=const("zero_depth_ratio"),
            modulus_factor=const("modulus_factor"),
            peak=const("peak"),
        )
    if version != "1978":
        raise ValueError(f"unknown Schmertmann version {version!r}; valid: {VERSIONS}")
    rule = _parse_interpolation(interpolation)
    ratio = np.clip(r, AXISYMMETRIC_LENGTH_RATIO, PLANE_STRAIN_LENGTH_RATIO)
    frac = (ratio - AXISYMMETRIC_LENGTH_RATIO) / (
        PLANE_STRAIN_LENGTH_RATIO - AXISYMMETRIC_LENGTH_RATIO
    )
    a, p = DIAGRAMS["axisymmetric"], DIAGRAMS["plane_strain"]

    def lin(name: str) -> np.ndarray:
        return a[name] + frac * (p[name] - a[name])

    if rule is ShapeInterpolation.LOG:
        modulus = a["modulus_factor"] * (1.0 + LOG_MODULUS_SLOPE * np.log10(ratio))
    else:
        modulus = lin("modulus_factor")
    return Diagram(
        iz_base=lin("iz_base"),
        peak_depth_ratio=lin("peak_depth_ratio"),
        zero_depth_ratio=lin("zero_depth_ratio"),
        modulus_factor=modulus,
        peak=None,
    )


def peak_depth(width: ArrayLike, diagram: Diagram) -> np.ndarray:
    """Depth of the diagram's peak below the footing base, where σ'vp is taken.

    Parameters
    ----------
    width : array_like
        Footing width B (short side, or diameter). [m]
    diagram : Diagram
        From :func:`diagram`.

    Returns
    -------
    numpy.ndarray
        Depth of the peak below the base. [m]
    """
    return np.asarray(diagram.peak_depth_ratio, dtype=float) * np.asarray(width, dtype=float)


def peak_factor(net_pressure: ArrayLike, sigma_v_peak: ArrayLike) -> np.ndarray:
    """Peak strain-influence factor I_zp of the 1978 diagrams.

    Parameters
    ----------
    net_pressure : array_like
        Net pressure increase at founding level, Δp. [kPa] Δp ≤ 0 gives 0.5.
    sigma_v_peak : array_like
        Initial (pre-load) vertical effective stress at the depth of the peak,
        σ'vp (B/2 below the base for L/B = 1, B for L/B ≥ 10, see
        :func:`peak_depth`). [kPa] Must be > 0 (NaN otherwise).

    Returns
    -------
    numpy.ndarray
        I_zp. [-]

    Notes
    -----
    .. math:: I_{zp} = 0.5 + 0.1 \\sqrt{\\Delta p / \\sigma'_{vp}}

    References
    ----------
    .. [1] Schmertmann, Hartman & Brown (1978), see the module references.

    Examples
    --------
    >>> round(float(peak_factor(182.0, 36.0)), 4)
    0.7248
    """
    dp = np.asarray(net_pressure, dtype=float)
    svp = np.asarray(sigma_v_peak, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.clip(dp / svp, 0.0, None)
        izp = PEAK_BASE + PEAK_SLOPE * np.sqrt(ratio)
    return np.where(svp > 0.0, izp, np.nan)


def youngs_modulus(cone_resistance: ArrayLike, diagram: Diagram) -> np.ndarray:
    """Young's modulus from cone resistance, E = (E/qc) · qc, for the given diagram.

    Parameters
    ----------
    cone_resistance : array_like
        Cone resistance qc. [kPa]
    diagram : Diagram
        From :func:`diagram` (2 for 1970; 2.5 axisymmetric, 3.5 plane strain for 1978).

    Returns
    -------
    numpy.ndarray
        E. [kPa]
    """
    return np.asarray(diagram.modulus_factor, dtype=float) * np.asarray(
        cone_resistance, dtype=float
    )


def _peak(diagram: Diagram, peak: ArrayLike | None) -> np.ndarray:
    if peak is None:
        if diagram.peak is None:
            raise ValueError(
                "the 1978 diagram needs the peak factor: pass peak=peak_factor(net_pressure, "
                "sigma_v_peak)"
            )
        peak = diagram.peak
    return np.asarray(peak, dtype=float)


def _geometry(width: ArrayLike, diagram: Diagram, peak: ArrayLike | None):
    b = np.asarray(width, dtype=float)
    zp = np.asarray(diagram.peak_depth_ratio, dtype=float) * b
    z0 = np.asarray(diagram.zero_depth_ratio, dtype=float) * b
    return np.asarray(diagram.iz_base, dtype=float), _peak(diagram, peak), zp, z0


def influence_factor(
    z: ArrayLike, width: ArrayLike, diagram: Diagram, peak: ArrayLike | None = None
) -> np.ndarray:
    """Strain-influence factor I_z at depth z below the footing base.

    Parameters
    ----------
    z : array_like
        Depth below the footing base. [m] I_z = 0 above the base (z < 0) and
        below the zero depth.
    width : array_like
        Footing width B. [m]
    diagram : Diagram
        From :func:`diagram`.
    peak : array_like, optional
        Peak value I_zp (from :func:`peak_factor`). [-] Omit it for the 1970
        diagram, whose peak is fixed at 0.6.

    Returns
    -------
    numpy.ndarray
        I_z, broadcast over all arguments. [-]

    Notes
    -----
    Piecewise linear: from I_z(0) at the base to I_zp at z_p, then to 0 at z_0,

    .. math::

        I_z = I_z(0) + (I_{zp} - I_z(0))\\, z/z_p \\quad (0 \\le z \\le z_p), \\qquad
        I_z = I_{zp}\\,(z_0 - z)/(z_0 - z_p) \\quad (z_p < z \\le z_0).

    Examples
    --------
    >>> float(influence_factor(1.0, 2.0, diagram(1.0, version="1970")))
    0.6
    """
    z = np.asarray(z, dtype=float)
    iz0, izp, zp, z0 = _geometry(width, diagram, peak)
    with np.errstate(divide="ignore", invalid="ignore"):
        rising = iz0 + (izp - iz0) * z / zp
        falling = izp * (z0 - z) / (z0 - zp)
    iz = np.where(z <= zp, rising, falling)
    return np.where((z < 0.0) | (z > z0), 0.0, iz)


def _antiderivative(z, iz0, izp, zp, z0):
    """∫_0^z I_z dz, exact (piecewise quadratic); NaN propagates through np.clip."""
    a = np.clip(z, 0.0, zp)
    b = np.clip(z, zp, z0) - zp
    with np.errstate(divide="ignore", invalid="ignore"):
        rising = iz0 * a + (izp - iz0) * a**2 / (2.0 * zp)
        falling = izp * (b - b**2 / (2.0 * (z0 - zp)))
    return rising + falling


def influence_integral(
    z_top: ArrayLike,
    z_bottom: ArrayLike,
    width: ArrayLike,
    diagram: Diagram,
    peak: ArrayLike | None = None,
) -> np.ndarray:
    """Exact integral of I_z over the depth interval [z_top, z_bottom] below the base.

    Parameters
    ----------
    z_top, z_bottom : array_like
        Top and bottom of each sublayer, depth below the footing base. [m]
        Parts above the base or below the zero depth contribute nothing.
    width : array_like
        Footing width B. [m]
    diagram : Diagram
        From :func:`diagram`.
    peak : array_like, optional
        Peak value I_zp; omit for the 1970 diagram. [-]

    Returns
    -------
    numpy.ndarray
        ∫ I_z dz over each interval (negative if z_bottom < z_top). [m]

    Notes
    -----
    With F(z) = ∫_0^z I_z dz, piecewise quadratic,

    .. math:: \\int_{z_t}^{z_b} I_z\\,dz = F(z_b) - F(z_t).

    Over the whole diagram (METHODS.md §3.3, derived): B (I_zp + 0.025) for
    L/B = 1, B (0.1 + 2 I_zp) for L/B ≥ 10, 0.6 B for the 1970 diagram.

    Examples
    --------
    >>> float(influence_integral(0.0, 10.0, 2.0, diagram(1.0, version="1970")))
    1.2
    """
    iz0, izp, zp, z0 = _geometry(width, diagram, peak)
    zt = np.asarray(z_top, dtype=float)
    zb = np.asarray(z_bottom, dtype=float)
    return _antiderivative(zb, iz0, izp, zp, z0) - _antiderivative(zt, iz0, izp, zp, z0)


def sublayer_settlement(
    net_pressure: ArrayLike,
    sigma_v0: ArrayLike,
    time: ArrayLike,
    z_top: ArrayLike,
    z_bottom: ArrayLike,
    modulus: ArrayLike,
    width: ArrayLike,
    diagram: Diagram,
    peak: ArrayLike | None = None,
) -> np.ndarray:
    """Settlement contributed by each sublayer, C1 C2 Δp ∫I_z dz / E.

    Parameters
    ----------
    net_pressure : array_like
        Net pressure increase at founding level, Δp. [kPa] Δp ≤ 0 gives no
        settlement (the method does not model heave).
    sigma_v0 : array_like
        Initial vertical effective stress at founding level. [kPa]
    time : array_like
        Time since loading. [yr]
    z_top, z_bottom : array_like
        Sublayer top and bottom below the footing base. [m]
    modulus : array_like
        Young's modulus of each sublayer (e.g. :func:`youngs_modulus`). [kPa]
    width : array_like
        Footing width B. [m]
    diagram : Diagram
        From :func:`diagram`.
    peak : array_like, optional
        I_zp from :func:`peak_factor`; omit for the 1970 diagram. [-]

    Returns
    -------
    numpy.ndarray
        Settlement of each sublayer. [m]

    Notes
    -----
    All arguments broadcast element by element: to evaluate several footings
    (shape ``(F,)``) on sublayers of shape ``(F, n)``, give the per-footing
    arguments a trailing axis (``q[:, None]``).

    .. math:: s_i = C_1 C_2\\,\\Delta p \\int_{z_{t,i}}^{z_{b,i}} I_z\\,dz \\,/\\, E_i

    References
    ----------
    .. [1] Schmertmann (1970); Schmertmann, Hartman & Brown (1978), see the
       module references.
    """
    dp = np.asarray(net_pressure, dtype=float)
    c = embedment_factor(sigma_v0, dp) * creep_factor(time) * np.maximum(dp, 0.0)
    integral = influence_integral(z_top, z_bottom, width, diagram, peak)
    with np.errstate(divide="ignore", invalid="ignore"):
        return c * integral / np.asarray(modulus, dtype=float)


def settlement(
    net_pressure: ArrayLike,
    sigma_v0: ArrayLike,
    time: ArrayLike,
    z_top: ArrayLike,
    z_bottom: ArrayLike,
    modulus: ArrayLike,
    width: ArrayLike,
    diagram: Diagram,
    peak: ArrayLike | None = None,
    *,
    axis: int = -1,
) -> np.ndarray:
    """Settlement of a footing by Schmertmann's method, summed over its sublayers.

    Parameters
    ----------
    net_pressure, sigma_v0, time, z_top, z_bottom, modulus, width, diagram, peak
        As in :func:`sublayer_settlement` (units kPa, kPa, yr, m, m, kPa, m).
    axis : int, optional
        Axis of the broadcast arrays along which the sublayers run (default: last;
        all-scalar input is one sublayer).

    Returns
    -------
    numpy.ndarray
        Settlement. [m]

    Notes
    -----
    .. math:: s = C_1 C_2\\,\\Delta p \\sum_i \\frac{1}{E_i}\\int_{z_{t,i}}^{z_{b,i}} I_z\\,dz

    Examples
    --------
    Square, B = 2 m, Δp = 182 kPa, σ'v0 = 18 kPa, σ'vp = 36 kPa, E = 20 MPa
    (METHODS.md §3.6, computed):

    >>> d = diagram(1.0)
    >>> s = settlement(182.0, 18.0, 0.1, [0.0], [4.0], [20e3], 2.0, d, peak_factor(182.0, 36.0))
    >>> round(float(s) * 1000, 2)
    12.97
    """
    parts = sublayer_settlement(
        net_pressure, sigma_v0, time, z_top, z_bottom, modulus, width, diagram, peak
    )
    # a single sublayer given as scalars has no axis to sum over
    return np.sum(parts, axis=axis) if parts.ndim else parts
