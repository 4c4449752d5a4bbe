"""Tests of sitesettle.methods.consolidation against hand arithmetic and Terzaghi's theory."""

import numpy as np
import pytest
from methods_support import check_array_forms
from scipy import integrate

from sitesettle.methods import consolidation as cn
from sitesettle.options import Drainage, EndOfPrimary

# METHODS.md §5.1 benchmark layer (computed): H = 4 m, e0 = 1.0, Cc = 0.30, Cr = 0.05,
# σ'0 = 60 kPa
H, E0, CC, CR, S0 = 4.0, 1.0, 0.30, 0.05, 60.0


def test_normally_consolidated_layer_by_hand():
    # s = Cc H/(1 + e0) log10(σ'f/σ'0) = 0.3 × 4/2 × log10(100/60) = 0.6 × 0.22185 = 0.13311 m
    hand = 0.3 * 4.0 / 2.0 * np.log10(100.0 / 60.0)
    s = cn.primary_strain(S0, 40.0, S0, CC, CR, E0) * H
    assert s == pytest.approx(hand, rel=1e-14)
    assert s * 1000 == pytest.approx(133.1, abs=0.05)  # METHODS.md §5.1, 1 decimal in mm


def test_overconsolidated_layer_below_preconsolidation_by_hand():
    # σ'f = 100 ≤ σ'p = 120: s = Cr H/(1 + e0) log10(100/60) = 0.1 × 0.22185 = 0.022185 m
    hand = 0.05 * 4.0 / 2.0 * np.log10(100.0 / 60.0)
    s = cn.primary_strain(S0, 40.0, 120.0, CC, CR, E0) * H
    assert s == pytest.approx(hand, rel=1e-14)
    assert s * 1000 == pytest.approx(22.2, abs=0.05)


def test_overconsolidated_layer_crossing_preconsolidation_by_hand():
    # σ'p = 80, σ'f = 160: s = H/(1 + e0) [Cr log10(80/60) + Cc log10(160/80)]
    #   = 2 × (0.05 × 0.124939 + 0.3 × 0.301030) = 2 × 0.096556 = 0.193112 m
    hand = 4.0 / 2.0 * (0.05 * np.log10(80.0 / 60.0) + 0.3 * np.log10(160.0 / 80.0))
    s = cn.primary_strain(S0, 100.0, 80.0, CC, CR, E0) * H
    assert s == pytest.approx(hand, rel=1e-14)
    assert s * 1000 == pytest.approx(193.1, abs=0.05)


@pytest.mark.parametrize(
    "stress_increase, preconsolidation, expected",
    [
        (0.0, 80.0, 0.0),  # no load, no settlement
        # unloading swells on Cr: Cr/(1 + e0) log10(40/60) (e.g. Craig's Soil Mechanics §7)
        (-20.0, 80.0, CR / 2 * np.log10(40 / 60)),
        # unloading past zero effective stress: kept at 5 % of σ'0 (documented floor)
        (-100.0, 80.0, CR / 2 * np.log10(0.05)),
        (40.0, 30.0, cn.primary_strain(S0, 40.0, S0, CC, CR, E0)),  # σ'p < σ'0 → σ'p = σ'0
        (20.0, 80.0, CR / 2 * np.log10(80 / 60)),  # reaching σ'p exactly: recompression only
    ],
)
def test_primary_strain_edges(stress_increase, preconsolidation, expected):
    got = cn.primary_strain(S0, stress_increase, preconsolidation, CC, CR, E0)
    assert got == pytest.approx(expected, rel=1e-14, abs=1e-16)


def test_primary_strain_is_continuous_at_preconsolidation():
    # the strain must not jump where σ'f crosses σ'p (the three cases join)
    below = cn.primary_strain(S0, 20.0 - 1e-9, 80.0, CC, CR, E0)
    above = cn.primary_strain(S0, 20.0 + 1e-9, 80.0, CC, CR, E0)
    assert above - below == pytest.approx(0.0, abs=1e-10)


def test_primary_strain_needs_positive_initial_stress():
    assert np.isnan(cn.primary_strain(0.0, 40.0, 60.0, CC, CR, E0))


def test_janbu_j0_equivalence():
    # METHODS.md §5.5: Janbu (1963) tangent modulus with j = 0, M_t = m σ' (σ_r cancels),
    # integrates to ε = (1/m) ln(σ'f/σ'0); with m = ln(10)(1 + e0)/Cc it is the Cc strain.
    # Integrate dε = dσ'/M_t numerically (scipy) as the independent route.
    m = np.log(10.0) * (1.0 + E0) / CC  # 15.35
    assert m == pytest.approx(15.35, abs=0.005)
    janbu, _ = integrate.quad(lambda s: 1.0 / (m * s), 60.0, 100.0, epsabs=1e-14)
    assert janbu == pytest.approx(0.03328, abs=5e-6)  # METHODS.md §5.5, 4 s.f.
    assert cn.primary_strain(60.0, 40.0, 60.0, CC, CR, E0) == pytest.approx(janbu, rel=1e-12)


# ---------------------------------------------------------------- Terzaghi U(Tv)


@pytest.mark.parametrize(
    "degree, printed",
    # Terzaghi (1943), as printed in every text to 3 decimals (from memory; METHODS.md §5.2)
    [(0.5, 0.197), (0.9, 0.848)],
)
def test_time_factor_printed(degree, printed):
    assert cn.time_factor(degree) == pytest.approx(printed, abs=5e-4)


@pytest.mark.parametrize(
    "tv, u",
    # METHODS.md §5.2 (computed, 400-term series, 4 decimals)
    [(0.05, 0.2523), (0.1, 0.3568), (0.2, 0.5041), (0.5, 0.7640), (1.0, 0.9313), (2.0, 0.9942)],
)
def test_degree_of_consolidation_table(tv, u):
    assert cn.degree_of_consolidation(tv) == pytest.approx(u, abs=5e-5)


@pytest.mark.parametrize("degree, tv", [(0.5, 0.1967), (0.9, 0.8481), (0.95, 1.129), (0.99, 1.781)])
def test_time_factor_table(degree, tv):
    # METHODS.md §5.2 (computed); rounded to the digits shown
    assert cn.time_factor(degree) == pytest.approx(tv, abs=5e-4 if tv > 1 else 5e-5)


def _pore_pressure_solution(tv, n=20001):
    """U from the finite-difference-free route: integrate the isochrone u(Z, Tv) over depth.

    u/u0 = Σ (2/M) sin(MZ) exp(−M²Tv), Z = z/H_dr in [0, 1] (Terzaghi 1925), averaged with
    scipy's Simpson rule: an independent evaluation of the average degree.
    """
    z = np.linspace(0.0, 1.0, n)
    u = np.zeros_like(z)
    for m in range(300):  # exp(−M² Tv) < 1e-300 beyond, for Tv ≥ 0.005
        big_m = np.pi / 2 * (2 * m + 1)
        u += 2 / big_m * np.sin(big_m * z) * np.exp(-(big_m**2) * tv)
    return 1.0 - integrate.simpson(u, x=z)


@pytest.mark.parametrize("tv", [0.005, 0.03, 0.15, 0.6])
def test_degree_matches_isochrone_average(tv):
    # Simpson on 20 001 points of a smooth isochrone: error < 1e-6 for Tv ≥ 0.005
    assert cn.degree_of_consolidation(tv) == pytest.approx(_pore_pressure_solution(tv), abs=1e-6)


def _series(tv, terms=5000):
    m = np.arange(terms)
    big_m = np.pi / 2 * (2 * m + 1)
    return 1 - np.sum(2 / big_m**2 * np.exp(-(big_m**2) * tv))


@pytest.mark.parametrize("factor", [0.5, 1.0 - 1e-9, 1.0, 1.0 + 1e-9, 2.0])
def test_short_time_branch_joins_series(factor):
    # U = √(4Tv/π) below Tv = 0.02, the series above: either side of the switch both
    # must equal a 5000-term series to 1e-12 (no jump)
    tv = cn.SHORT_TIME_FACTOR * factor
    assert cn.degree_of_consolidation(tv) == pytest.approx(_series(tv), abs=1e-12)


def test_time_factor_inverts_degree():
    u = np.linspace(0.0, 0.9999, 2001)
    np.testing.assert_allclose(cn.degree_of_consolidation(cn.time_factor(u)), u, atol=1e-12)
    assert cn.time_factor(1.0) == np.inf
    assert cn.time_factor(-0.2) == 0.0
    assert cn.degree_of_consolidation(np.inf) == 1.0
    assert cn.degree_of_consolidation(-1.0) == 0.0


def test_degree_terms_must_be_positive():
    with pytest.raises(ValueError, match="terms"):
        cn.degree_of_consolidation(0.3, terms=0)


# ---------------------------------------------------------------- drainage and times


@pytest.mark.parametrize(
    "drainage, expected",
    [(Drainage.BOTH, 2.5), ("both", 2.5), ("top", 5.0), (Drainage.BOTTOM, 5.0)],
)
def test_drainage_path(drainage, expected):
    # H_dr = H/2 drained both faces, H one face (every text; METHODS.md §5.2)
    assert cn.drainage_path(5.0, drainage) == expected


def test_bad_choices_list_the_valid_ones():
    with pytest.raises(ValueError, match="'both', 'top', 'bottom'"):
        cn.drainage_path(5.0, "sideways")
    with pytest.raises(ValueError, match="'u95'"):
        cn.end_of_primary_time("u50", 1.0, 1.0)
    with pytest.raises(ValueError, match="given="):
        cn.end_of_primary_time(EndOfPrimary.GIVEN, 1.0, 1.0)


def test_time_factor_at():
    # Tv = cv t / H_dr²: cv = 2 m²/yr, t = 3 yr, H_dr = 2 m → 1.5
    assert cn.time_factor_at(3.0, 2.0, 2.0) == pytest.approx(1.5)
    assert cn.time_factor_at(3.0, 2.0, 0.0) == np.inf  # no thickness: fully consolidated
    assert np.isnan(cn.time_factor_at(np.nan, 2.0, 0.0))


@pytest.mark.parametrize(
    "convention, tv",
    # Tv = 1.129 at U = 95 %, 0.848 at 90 % (Terzaghi series; 3 decimals), Tv = 1
    [(EndOfPrimary.U95, 1.129), ("u90", 0.848), ("tv1", 1.0)],
)
def test_end_of_primary_time(convention, tv):
    # cv = 1.5 m²/yr, H_dr = 3 m: t_p = Tv × 9 / 1.5 = 6 Tv
    assert cn.end_of_primary_time(convention, 1.5, 3.0) == pytest.approx(6 * tv, abs=6 * 5e-4)
    assert cn.end_of_primary_time("given", 1.5, 3.0, given=2.5) == 2.5


def test_end_of_primary_degree_is_reached():
    t_p = cn.end_of_primary_time("u95", 1.5, 3.0)
    u = cn.degree_of_consolidation(cn.time_factor_at(t_p, 1.5, 3.0))
    assert u == pytest.approx(0.95, abs=1e-12)


# ---------------------------------------------------------------- secondary


@pytest.mark.parametrize("time, expected_mm", [(10.0, 25.3), (30.0, 37.3)])
def test_secondary_benchmark(time, expected_mm):
    # METHODS.md §5.3 (computed): Cα = 0.012, e_p = 0.9, H = 4 m, t_p = 1 yr
    # by hand: 0.012/1.9 × 4 × log10(10) = 0.025263 m; × log10(30) = 0.037318 m
    s = cn.secondary_strain(0.012, 0.9, time, 1.0) * 4.0
    assert s == pytest.approx(0.012 / 1.9 * 4 * np.log10(time), rel=1e-14)
    assert s * 1000 == pytest.approx(expected_mm, abs=0.05)


@pytest.mark.parametrize("time", [0.0, 0.5, 1.0])
def test_no_secondary_before_end_of_primary(time):
    assert cn.secondary_strain(0.012, 0.9, time, 1.0) == 0.0


def test_secondary_edges():
    assert cn.secondary_strain(0.012, 0.9, 10.0, np.inf) == 0.0  # cv = 0: never starts
    assert np.isnan(cn.secondary_strain(0.012, 0.9, 10.0, 0.0))  # t_p must be positive


def test_void_ratio_after():
    # e_p = e0 − ε (1 + e0): Δe = ε (1 + e0) is the definition of 1-D strain
    assert cn.void_ratio_after(1.0, 0.05) == pytest.approx(0.9)
    strain = cn.primary_strain(S0, 40.0, S0, CC, CR, E0)
    # the NC e–log σ' line: e_p = e0 − Cc log10(σ'f/σ'0)
    assert cn.void_ratio_after(E0, strain) == pytest.approx(E0 - CC * np.log10(100 / 60))


# ---------------------------------------------------------------- array forms and NaN

CASES = [
    (cn.primary_strain, (60.0, 40.0, 60.0, 0.3, 0.05, 1.0), {0, 1, 2, 3, 4, 5}),
    (cn.primary_strain, (60.0, 40.0, 120.0, 0.3, 0.05, 1.0), {0, 1, 2, 3, 4, 5}),
    (cn.primary_strain, (60.0, 100.0, 80.0, 0.3, 0.05, 1.0), {0, 1, 2, 3, 4, 5}),
    (cn.degree_of_consolidation, (0.01,), {0}),
    (cn.degree_of_consolidation, (0.4,), {0}),
    (cn.time_factor, (0.1,), {0}),
    (cn.time_factor, (0.7,), {0}),
    (cn.drainage_path, (5.0, "both"), {0}),
    (cn.time_factor_at, (3.0, 2.0, 1.5), {0, 1, 2}),
    (cn.end_of_primary_time, ("u95", 2.0, 1.5), {1, 2}),
    (cn.void_ratio_after, (1.1, 0.03), {0, 1}),
    (cn.secondary_strain, (0.012, 0.9, 10.0, 1.0), {0, 1, 2, 3}),
    (cn.secondary_strain, (0.012, 0.9, 0.5, 1.0), {0, 1, 2, 3}),
]


@pytest.mark.parametrize(
    "func, args, vary", CASES, ids=[f"{c[0].__name__}-{i}" for i, c in enumerate(CASES)]
)
def test_array_forms_and_nan(func, args, vary):
    check_array_forms(func, args, vary)
