"""Elastic settlement: strain from the Boussinesq stresses, and reference closed forms.

The tool's general method integrates the vertical strain of linear elasticity,

.. math:: \\varepsilon_z = [\\Delta\\sigma_z - \\nu(\\Delta\\sigma_x + \\Delta\\sigma_y)]/E
          = [(1 + \\nu)\\Delta\\sigma_z - \\nu\\,\\Theta]/E,

over sublayers, with the superposed stresses of every footing (METHODS.md §2.3).
On a uniform layer over a rigid base that integral reproduces Steinbrenner
(1934); on a half-space, the classical corner and centre influence factors. Those
closed forms are here too, for tests and comparison.

References
----------
.. [1] Terzaghi, K. (1943). Theoretical Soil Mechanics. Wiley.
.. [2] Timoshenko, S.P. & Goodier, J.N. (1951; 3rd ed. 1970). Theory of
   Elasticity. McGraw-Hill.
.. [3] Steinbrenner, W. (1934). Tafeln zur Setzungsberechnung. Die Strasse 1,
   121–124 (citation from memory).
.. [4] Bowles, J.E. (1996). Foundation Analysis and Design, 5th ed.
   McGraw-Hill, §5-6 (the I1, I2 form of Steinbrenner's factors; from memory).
.. [5] Graßhoff, H. (1955). Setzungsberechnungen starrer Fundamente mit Hilfe
   des kennzeichnenden Punktes. Der Bauingenieur 30, 53–54 (from memory).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

__all__ = [
    "CHARACTERISTIC_POINT_OFFSET",
    "CIRCLE_CHARACTERISTIC_RADIUS",
    "characteristic_point_offset",
    "halfspace_corner_factor",
    "steinbrenner_centre_settlement",
    "steinbrenner_corner_settlement",
    "steinbrenner_factors",
    "vertical_strain",
    "vertical_strain_from_invariant",
]

#: Characteristic point of a rectangle: ±0.37 B and ±0.37 L from the centre along
#: the axes, i.e. 0.74 of the half-dimensions (Graßhoff 1955 [5]; from memory).
#: A flexible footing settles there as much as the same footing made rigid.
CHARACTERISTIC_POINT_OFFSET = 0.37
#: the same number under the name the orchestration uses
characteristic_point_offset = CHARACTERISTIC_POINT_OFFSET
#: Characteristic radius of a circle, as a fraction of its radius a: the root of
#: (4/π) E(k) = π/2 with E the complete elliptic integral of the second kind,
#: r = 0.845 a (computed, METHODS.md §2.5).
CIRCLE_CHARACTERISTIC_RADIUS = 0.845


def vertical_strain(
    sigma_z: ArrayLike, horizontal_sum: ArrayLike, youngs_modulus: ArrayLike, poisson: ArrayLike
) -> np.ndarray:
    """Vertical strain of an isotropic linear-elastic soil from the stress increments.

    Parameters
    ----------
    sigma_z : array_like
        Vertical stress increment Δσz. [kPa]
    horizontal_sum : array_like
        Sum of the horizontal stress increments Δσx + Δσy. [kPa]
    youngs_modulus : array_like
        Young's modulus E (drained for granular soil). [kPa]
    poisson : array_like
        Poisson's ratio ν. [-]

    Returns
    -------
    numpy.ndarray
        Vertical strain εz, compression positive. [-]

    Notes
    -----
    Hooke's law (e.g. Timoshenko & Goodier [2]):

    .. math:: \\varepsilon_z = [\\Delta\\sigma_z - \\nu(\\Delta\\sigma_x + \\Delta\\sigma_y)]/E

    Examples
    --------
    >>> float(vertical_strain(100.0, 40.0, 10e3, 0.25))
    0.009
    """
    sz = np.asarray(sigma_z, dtype=float)
    sh = np.asarray(horizontal_sum, dtype=float)
    nu = np.asarray(poisson, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return (sz - nu * sh) / np.asarray(youngs_modulus, dtype=float)


def vertical_strain_from_invariant(
    sigma_z: ArrayLike, invariant: ArrayLike, youngs_modulus: ArrayLike, poisson: ArrayLike
) -> np.ndarray:
    """Vertical strain from Δσz and the first stress invariant Θ = Δσx + Δσy + Δσz.

    Parameters
    ----------
    sigma_z : array_like
        Vertical stress increment Δσz. [kPa]
    invariant : array_like
        First invariant of the stress increment, Θ. [kPa] Under a uniform load q
        on any area, Θ = (1 + ν) q Ω / π with Ω the solid angle of the area seen
        from the point (METHODS.md §1.2, derived).
    youngs_modulus : array_like
        Young's modulus E. [kPa]
    poisson : array_like
        Poisson's ratio ν. [-]

    Returns
    -------
    numpy.ndarray
        εz. [-]

    Notes
    -----
    .. math:: \\varepsilon_z = [(1 + \\nu)\\Delta\\sigma_z - \\nu\\,\\Theta]/E
    """
    sz = np.asarray(sigma_z, dtype=float)
    nu = np.asarray(poisson, dtype=float)
    return vertical_strain(sz, np.asarray(invariant, dtype=float) - sz, youngs_modulus, nu)


def halfspace_corner_factor(length_ratio: ArrayLike) -> np.ndarray:
    """Settlement factor of the corner of a flexible rectangle on an elastic half-space.

    Parameters
    ----------
    length_ratio : array_like
        M = L/B (> 0). [-]

    Returns
    -------
    numpy.ndarray
        I_corner, with s_corner = q B (1 − ν²) I_corner / E. [-] The centre of a
        B × L rectangle settles 2 I_corner(L/B) q B (1 − ν²)/E (four quarter
        rectangles of half the size).

    Notes
    -----
    .. math::

        I_{corner} = \\frac{1}{\\pi}\\left[M \\ln\\frac{1 + \\sqrt{1 + M^2}}{M}
                     + \\ln\\left(M + \\sqrt{1 + M^2}\\right)\\right]

    The square gives (2/π) ln(1 + √2) = 0.5611.

    References
    ----------
    .. [1] Terzaghi (1943); Timoshenko & Goodier (1951), see the module references.

    Examples
    --------
    >>> round(float(halfspace_corner_factor(1.0)), 4)
    0.5611
    """
    m = np.asarray(length_ratio, dtype=float)
    root = np.sqrt(1.0 + m**2)
    with np.errstate(divide="ignore", invalid="ignore"):
        return (m * np.log((1.0 + root) / m) + np.log(m + root)) / np.pi


def steinbrenner_factors(
    length_ratio: ArrayLike, depth_ratio: ArrayLike
) -> tuple[np.ndarray, np.ndarray]:
    """Steinbrenner's factors F1, F2 for the corner of a flexible rectangle on a finite layer.

    Parameters
    ----------
    length_ratio : array_like
        M = L/B, B the short side. [-]
    depth_ratio : array_like
        N = H/B, H the thickness of the layer over a rigid base (may be inf). [-]

    Returns
    -------
    F1, F2 : numpy.ndarray
        Dimensionless factors. [-] At N = inf, F1 = I_corner (half-space) and F2 = 0;
        at N = 0 both are 0.

    Notes
    -----
    .. math::

        F_1 = \\frac{1}{\\pi}\\left[M \\ln\\frac{(1 + \\sqrt{M^2 + 1})\\sqrt{M^2 + N^2}}
              {M(1 + \\sqrt{M^2 + N^2 + 1})}
              + \\ln\\frac{(M + \\sqrt{M^2 + 1})\\sqrt{1 + N^2}}{M + \\sqrt{M^2 + N^2 + 1}}\\right]

        F_2 = \\frac{N}{2\\pi}\\arctan\\frac{M}{N\\sqrt{M^2 + N^2 + 1}}

    Form and grouping as in Bowles (1996) [4] (there I1, I2); METHODS.md §2.2.

    References
    ----------
    .. [1] Steinbrenner (1934), see the module references.

    Examples
    --------
    >>> f1, f2 = steinbrenner_factors(1.0, 1.0)
    >>> round(float(f1), 3), round(float(f2), 3)
    (0.142, 0.083)
    """
    m = np.asarray(length_ratio, dtype=float)
    n = np.asarray(depth_ratio, dtype=float)
    r1 = np.sqrt(m**2 + 1.0)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        rmn = np.sqrt(m**2 + n**2)
        r3 = np.sqrt(m**2 + n**2 + 1.0)
        f1 = (
            m * np.log((1.0 + r1) * rmn / (m * (1.0 + r3)))
            + np.log((m + r1) * np.sqrt(1.0 + n**2) / (m + r3))
        ) / np.pi
        f2 = n / (2.0 * np.pi) * np.arctan(m / (n * r3))
    infinite = np.isposinf(n)
    f1 = np.where(infinite, halfspace_corner_factor(m), f1)
    f2 = np.where(infinite, 0.0 * m, np.where(n == 0.0, 0.0 * m, f2))
    return f1, f2


def steinbrenner_corner_settlement(
    pressure: ArrayLike,
    width: ArrayLike,
    length: ArrayLike,
    thickness: ArrayLike,
    youngs_modulus: ArrayLike,
    poisson: ArrayLike,
) -> np.ndarray:
    """Settlement of the corner of a flexible, uniformly loaded rectangle on a finite layer.

    Parameters
    ----------
    pressure : array_like
        Uniform pressure q. [kPa]
    width, length : array_like
        Sides of the rectangle (either order; B is the smaller). [m]
    thickness : array_like
        Thickness H of the elastic layer above a rigid base (inf: half-space). [m]
    youngs_modulus : array_like
        E. [kPa]
    poisson : array_like
        ν. [-]

    Returns
    -------
    numpy.ndarray
        Corner settlement. [m]

    Notes
    -----
    .. math:: s = \\frac{q B (1 - \\nu^2)}{E}\\left[F_1 + \\frac{1 - 2\\nu}{1 - \\nu} F_2\\right]

    with F1, F2 from :func:`steinbrenner_factors` at M = L/B, N = H/B. It equals
    the integral from 0 to H of the half-space strain under the corner
    (METHODS.md §2.2, computed): the rigid base is modelled by truncation.

    References
    ----------
    .. [1] Steinbrenner (1934); Bowles (1996), see the module references.

    Examples
    --------
    >>> round(float(steinbrenner_corner_settlement(100.0, 1.0, 1.0, 1.0, 1e4, 0.3)), 6)
    0.001725
    """
    q = np.asarray(pressure, dtype=float)
    b = np.minimum(np.asarray(width, dtype=float), np.asarray(length, dtype=float))
    l = np.maximum(np.asarray(width, dtype=float), np.asarray(length, dtype=float))
    nu = np.asarray(poisson, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        f1, f2 = steinbrenner_factors(l / b, np.asarray(thickness, dtype=float) / b)
        factor = f1 + (1.0 - 2.0 * nu) / (1.0 - nu) * f2
        return q * b * (1.0 - nu**2) * factor / np.asarray(youngs_modulus, dtype=float)


def steinbrenner_centre_settlement(
    pressure: ArrayLike,
    width: ArrayLike,
    length: ArrayLike,
    thickness: ArrayLike,
    youngs_modulus: ArrayLike,
    poisson: ArrayLike,
) -> np.ndarray:
    """Settlement of the centre of a flexible rectangle on a finite layer (four corners).

    Parameters
    ----------
    pressure, width, length, thickness, youngs_modulus, poisson
        As in :func:`steinbrenner_corner_settlement` (kPa, m, m, m, kPa, -).

    Returns
    -------
    numpy.ndarray
        Centre settlement. [m]

    Notes
    -----
    Superposition of four (B/2) × (L/2) rectangles with a common corner at the
    centre (common practice):

    .. math:: s_{centre}(B, L, H) = 4\\, s_{corner}(B/2, L/2, H)
    """
    b = np.asarray(width, dtype=float)
    l = np.asarray(length, dtype=float)
    return 4.0 * steinbrenner_corner_settlement(
        pressure, b / 2.0, l / 2.0, thickness, youngs_modulus, poisson
    )
