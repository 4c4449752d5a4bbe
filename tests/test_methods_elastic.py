"""Tests of sitesettle.methods.elastic against printed factors and scipy integration."""

import numpy as np
import pytest
from methods_support import check_array_forms
from scipy import integrate, optimize, special

from sitesettle.methods import elastic as el


def test_vertical_strain_is_hookes_law():
    # εz = [σz − ν(σx + σy)]/E (Timoshenko & Goodier): uniaxial stress gives σz/E,
    # equal triaxial stress p gives p(1 − 2ν)/E
    assert el.vertical_strain(100.0, 0.0, 1e4, 0.3) == pytest.approx(0.01, rel=1e-15)
    assert el.vertical_strain(50.0, 100.0, 1e4, 0.25) == pytest.approx(50 * 0.5 / 1e4)
    theta = 3 * 50.0
    assert el.vertical_strain_from_invariant(50.0, theta, 1e4, 0.25) == pytest.approx(
        50 * 0.5 / 1e4, rel=1e-14
    )


@pytest.mark.parametrize(
    "length_ratio, corner, centre",
    [
        # Terzaghi (1943) / Timoshenko & Goodier (1951) as reproduced in Bowles (1996),
        # printed to 2 decimals (from memory; METHODS.md §2.1): square 0.56 / 1.12,
        # L/B = 2 0.77 / 1.53
        (1.0, 0.56, 1.12),
        (2.0, 0.77, 1.53),
    ],
)
def test_halfspace_factors_vs_printed(length_ratio, corner, centre):
    i_corner = el.halfspace_corner_factor(length_ratio)
    # centre = four quarter rectangles of half size: 4 × (B/2) I(M) = 2 B I(M)
    i_centre = 2.0 * i_corner
    # two printed decimals → ±0.005
    assert i_corner == pytest.approx(corner, abs=0.005)
    assert i_centre == pytest.approx(centre, abs=0.005)


def test_square_corner_closed_value():
    # (2/π) ln(1 + √2) = 0.5611 (METHODS.md §2.1, computed from the closed form)
    assert el.halfspace_corner_factor(1.0) == pytest.approx(2 / np.pi * np.log(1 + np.sqrt(2)))
    assert el.halfspace_corner_factor(1.0) == pytest.approx(0.5611, abs=5e-5)


def test_halfspace_corner_by_quadrature():
    # independent check: surface settlement of a point load P at distance r is
    # P (1 − ν²)/(π E r) (Boussinesq); integrate over a 1 × 2 rectangle from its corner
    def kernel(y, x):
        return 1.0 / (np.pi * np.hypot(x, y))

    val, _ = integrate.dblquad(kernel, 0.0, 1.0, 0.0, 2.0, epsabs=1e-12, epsrel=1e-12)
    assert el.halfspace_corner_factor(2.0) == pytest.approx(val, rel=1e-9)


# F1 / F2 at (N = H/B, M = L/B), METHODS.md §2.2 (computed, 3 decimals)
STEINBRENNER_TABLE = [
    (0.25, 1, 0.014, 0.049),
    (0.25, 10, 0.010, 0.053),
    (0.5, 1, 0.049, 0.074),
    (0.5, 2, 0.040, 0.084),
    (1, 1, 0.142, 0.083),
    (1, 2, 0.125, 0.109),
    (1, 5, 0.113, 0.122),
    (1, 10, 0.111, 0.124),
    (2, 1, 0.285, 0.064),
    (2, 5, 0.267, 0.136),
    (5, 1, 0.437, 0.031),
    (5, 2, 0.526, 0.058),
    (5, 10, 0.534, 0.140),
    (10, 1, 0.498, 0.016),
    (10, 5, 0.758, 0.071),
    (10, 10, 0.768, 0.112),
    (np.inf, 1, 0.561, 0.0),
    (np.inf, 2, 0.766, 0.0),
    (np.inf, 5, 1.052, 0.0),
    (np.inf, 10, 1.272, 0.0),
]


@pytest.mark.parametrize("n, m, f1, f2", STEINBRENNER_TABLE)
def test_steinbrenner_table(n, m, f1, f2):
    got1, got2 = el.steinbrenner_factors(m, n)
    # table printed to 3 decimals → ±0.0005
    assert got1 == pytest.approx(f1, abs=5e-4)
    assert got2 == pytest.approx(f2, abs=5e-4)


def test_steinbrenner_bowles_printed_value():
    # Bowles (1996) prints I1 = 0.142, I2 = 0.083 at M = N = 1 (from memory)
    f1, f2 = el.steinbrenner_factors(1.0, 1.0)
    assert (round(float(f1), 3), round(float(f2), 3)) == (0.142, 0.083)


def test_steinbrenner_limits():
    f1, f2 = el.steinbrenner_factors(np.array([1.0, 3.0]), 0.0)
    np.testing.assert_allclose(f1, 0.0, atol=1e-15)
    np.testing.assert_allclose(f2, 0.0, atol=1e-15)
    # a very deep layer tends to the half-space corner
    f1, f2 = el.steinbrenner_factors(3.0, 1e6)
    assert f1 == pytest.approx(el.halfspace_corner_factor(3.0), abs=1e-5)
    assert f2 == pytest.approx(0.0, abs=1e-5)


def _corner_strain(z, b, l, nu, q=1.0, e=1.0):
    """Half-space εz under the corner of a b × l rectangle: Holl (1940) σz and Θ = (1+ν)qΩ/π.

    METHODS.md §1.3 (σz), §1.7 (Ω), §1.2 (Θ); written here independently of the package.
    """
    r1, r2, r3 = np.hypot(l, z), np.hypot(b, z), np.sqrt(b * b + l * l + z * z)
    omega = np.arctan(b * l / (z * r3))
    sigma_z = q / (2 * np.pi) * (omega + b * l * z / r3 * (1 / r1**2 + 1 / r2**2))
    theta = (1 + nu) * q * omega / np.pi
    return ((1 + nu) * sigma_z - nu * theta) / e


@pytest.mark.parametrize("b, l, h", [(1.0, 1.0, 1.0), (1.0, 2.0, 0.5), (2.0, 10.0, 7.0)])
@pytest.mark.parametrize("nu", [0.0, 0.3, 0.5])
def test_steinbrenner_equals_strain_integration(b, l, h, nu):
    # METHODS.md §2.2: Steinbrenner ≡ ∫0^H of the half-space strain under the corner;
    # quad converges to ~1e-12, the closed form is exact: rtol 1e-9
    val, _ = integrate.quad(_corner_strain, 0.0, h, args=(b, l, nu), epsabs=1e-13, epsrel=1e-12)
    assert el.steinbrenner_corner_settlement(1.0, b, l, h, 1.0, nu) == pytest.approx(val, rel=1e-9)


def test_steinbrenner_square_benchmark():
    # B = L = H = 1, ν = 0.3 → 0.17246 qB/E (METHODS.md §2.2 and §7.4, computed)
    s = el.steinbrenner_corner_settlement(1.0, 1.0, 1.0, 1.0, 1.0, 0.3)
    assert s == pytest.approx(0.17246, abs=5e-6)
    # sides in either order, and the units scale: q = 150 kPa, B = 2 m, E = 30 MPa
    assert el.steinbrenner_corner_settlement(150.0, 4.0, 2.0, 2.0, 30e3, 0.3) == pytest.approx(
        el.steinbrenner_corner_settlement(150.0, 2.0, 4.0, 2.0, 30e3, 0.3), rel=1e-15
    )


def test_steinbrenner_centre_on_deep_layer_is_halfspace_centre():
    # square centre factor 1.12 (Terzaghi 1943, printed to 2 decimals)
    s = el.steinbrenner_centre_settlement(1.0, 1.0, 1.0, np.inf, 1.0, 0.0)
    assert s == pytest.approx(2 * el.halfspace_corner_factor(1.0), rel=1e-14)
    assert s == pytest.approx(1.12, abs=0.005)


def test_characteristic_point_data():
    # Graßhoff (1955): 0.74 of the half-dimension from the centre (from memory)
    assert el.characteristic_point_offset == pytest.approx(0.74 / 2)
    assert el.CHARACTERISTIC_POINT_OFFSET == el.characteristic_point_offset


def test_circle_characteristic_radius():
    # flexible circle: s(r) = 4 q a (1 − ν²) E(r/a) / (π E_s) for r < a (Timoshenko & Goodier),
    # rigid circle: π q a (1 − ν²) / (2 E_s); they are equal where (4/π) E(k) = π/2.
    # scipy.special.ellipe takes the parameter m = k².
    root = optimize.brentq(lambda k: 4 / np.pi * special.ellipe(k * k) - np.pi / 2, 0.1, 0.99)
    # the module value is given to 3 decimals
    assert el.CIRCLE_CHARACTERISTIC_RADIUS == pytest.approx(root, abs=5e-4)


CASES = [
    (el.vertical_strain, (80.0, 30.0, 15e3, 0.3), {0, 1, 2, 3}),
    (el.vertical_strain_from_invariant, (80.0, 110.0, 15e3, 0.3), {0, 1, 2, 3}),
    (el.halfspace_corner_factor, (2.5,), {0}),
    (el.steinbrenner_factors, (2.5, 1.5), {0, 1}),
    (el.steinbrenner_factors, (2.5, np.inf), {0, 1}),
    (el.steinbrenner_corner_settlement, (150.0, 2.0, 3.0, 4.0, 20e3, 0.3), {0, 1, 2, 3, 4, 5}),
    (el.steinbrenner_centre_settlement, (150.0, 2.0, 3.0, 4.0, 20e3, 0.3), {0, 1, 2, 3, 4, 5}),
]


@pytest.mark.parametrize(
    "func, args, vary", CASES, ids=[f"{c[0].__name__}-{i}" for i, c in enumerate(CASES)]
)
def test_array_forms_and_nan(func, args, vary):
    check_array_forms(func, args, vary)
