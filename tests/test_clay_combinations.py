"""Clay as a checking engineer checks it: undrained + consolidation, secondary, drainage.

Check values: Skempton & Bjerrum's (1957) geometry factor α as computed in METHODS.md
§5.4 from elastic centreline stresses (ν = 0.5) [C], which match the shape of their
published curves (read from the chart, from memory); Terzaghi's (1943) U(Tv);
the secondary compression formula with Cα·Cr/Cc in recompression (Mesri & Godlewski
1977), by hand; one-dimensional e–log σ' settlement by scipy quadrature.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from _sites import ROCK, rect

from sitesettle.analysis import analyse
from sitesettle.methods import consolidation as cons
from sitesettle.options import Behaviour, ClaySettlement, GranularMethod
from sitesettle.site import AnalysisSettings, Borehole, Footing, Interval, Site, Stratum

GW = 9.81


def clay(name="clay", **kw):
    base = dict(
        unit_weight=18.0,
        saturated_unit_weight=18.0,
        compression_index=0.3,
        recompression_index=0.05,
        void_ratio=1.0,
        ocr=1.0,
        consolidation_coefficient=2.0,
        secondary_index=0.0,
    )
    base.update(kw)
    return Stratum(name, Behaviour.COHESIVE, **base)


SAND = Stratum(
    "sand", Behaviour.GRANULAR, 18.0, 20.0, 0.3, youngs_modulus=50000.0,
    method=GranularMethod.ELASTIC,
)
GRAVEL = Stratum(
    "gravel", Behaviour.GRANULAR, 20.0, 21.0, 0.25, youngs_modulus=1e9,
    method=GranularMethod.ELASTIC,
)


def site_of(footings, strata, thicknesses, **settings):
    z, intervals = 0.0, []
    for s, h in zip(strata, thicknesses):
        intervals.append(Interval(s.name, z, z + h))
        z += h
    bh = Borehole("BH", 0.0, 0.0, tuple(intervals), 0.0)
    base = dict(report_times=(1.0,), design_life=1000.0, stress_tolerance=0.0)
    base.update(settings)
    return Site("t", tuple(footings), tuple(strata), (bh,), water_depth=0.0,
                analysis=AnalysisSettings(**base))


def circle(fid, diameter, q):
    a = np.linspace(0, 2 * np.pi, 64, endpoint=False)
    outline = np.column_stack([diameter / 2 * np.cos(a), diameter / 2 * np.sin(a)])
    area = math.pi * diameter**2 / 4
    return Footing(fid, outline, "circle", 0.0, 0.0, diameter, diameter, 0.0, 0.0,
                   q * area, 0.0, 0.0, False, 0.0)


def strip(fid, width, q):
    return rect(fid, 0.0, 0.0, width, 60.0 * width, depth=0.0, load=q * width * 60 * width,
                rigid=False, fill=0.0)


# --------------------------------------------------------------------------- μ


@pytest.mark.parametrize("shape, alpha_ref", [("circle", 0.370), ("strip", 0.366)])
@pytest.mark.parametrize("A", [0.25, 0.5, 1.0])
def test_skempton_bjerrum_mu_against_the_chart(shape, alpha_ref, A):
    # H/B = 1, clay from the base down to a rigid base: α = 0.370 (circle), 0.366
    # (strip), METHODS.md §5.4 [C]; μ = A + α(1 − A) (Skempton & Bjerrum 1957)
    B, q = 4.0, 60.0
    f = circle("F", B, q) if shape == "circle" else strip("F", B, q)
    cl = clay(pore_pressure_coefficient=A)
    base = site_of([f], [cl, ROCK], [B, 5.0], sublayer_fraction=0.02)
    oed = analyse(base, with_map=False, with_checks=False)
    sb = analyse(
        dataclasses.replace(base, analysis=dataclasses.replace(
            base.analysis, clay_settlement=ClaySettlement.SKEMPTON_BJERRUM)),
        with_map=False, with_checks=False,
    )
    mu = sb.consolidation[0, -1] / oed.consolidation[0, -1]
    assert mu == pytest.approx(A + alpha_ref * (1 - A), abs=0.012)


def test_oedometer_default_counts_the_undrained_part_once():
    # Burland, Broms & de Mello (1977): the oedometer settlement is the total; the
    # undrained part (E_u, ν = 0.5) is the share of it that happens on loading.
    # Reference: one-dimensional e–log σ' under a wide load, scipy quad (METHODS §5.1).
    from scipy import integrate

    q, B = 50.0, 80.0
    f = rect("R", 0, 0, B, B, depth=0.0, load=q * B * B, fill=0.0)
    cl = clay(undrained_modulus=8000.0)
    site = site_of([f], [SAND, cl, GRAVEL], [2.0, 4.0, 10.0])
    r = analyse(site, with_map=False, with_checks=False)
    assert r.site.analysis.clay_settlement == ClaySettlement.OEDOMETER

    def sig0(z):
        return (20.0 - GW) * 2.0 + (18.0 - GW) * (z - 2.0)

    def strain(z):
        return float(cons.primary_strain(sig0(z), q, sig0(z), 0.3, 0.05, 1.0))

    ref, _ = integrate.quad(strain, 2.0, 6.0)
    clay_final = r.total[0, -1] - (r.immediate[0, -1] - _clay_on_loading(r))
    assert clay_final == pytest.approx(ref, rel=0.01)
    assert _clay_on_loading(r) > 0  # the undrained share shows on loading


def _clay_on_loading(r):
    tr = r.traces["R"][0]
    coh = np.array([m == "consolidation" for m in tr.method])
    return float(np.sum(tr.details["on loading (mm)"][coh])) / 1000.0


# --------------------------------------------------------------------------- secondary


def test_secondary_in_recompression_uses_calpha_cr_over_cc():
    # by hand: ε_s = (Cα Cr/Cc)/(1 + e_p) log10(t/t_p) (Mesri & Godlewski 1977: Cα/Cc
    # constant); an OC clay (OCR 3) under 10 m of sand and a wide 20 kPa load stays in
    # recompression
    q, B, H = 20.0, 400.0, 2.0
    f = rect("R", 0, 0, B, B, depth=0.0, load=q * B * B, fill=0.0)
    cl = clay(ocr=3.0, secondary_index=0.01, drainage="both")
    site = site_of([f], [SAND, cl, GRAVEL], [10.0, H, 10.0], report_times=(1.0,),
                   design_life=100.0)
    r = analyse(site, with_map=False, with_checks=False)
    tp = 1.129 * (H / 2) ** 2 / 2.0  # U = 95 %, Tv = 1.129 (METHODS §5.3)
    e0, cc, cr, ca = 1.0, 0.3, 0.05, 0.01
    z = np.linspace(0.0, H, 2001)
    s0 = (20.0 - GW) * 10.0 + (18.0 - GW) * z
    eps_p = cr / (1 + e0) * np.log10((s0 + q) / s0)
    ep = e0 - eps_p * (1 + e0)
    hand = np.trapezoid(ca * cr / cc / (1 + ep) * math.log10(100.0 / tp), z)
    assert r.secondary[0, -1] == pytest.approx(hand, rel=0.01)


# --------------------------------------------------------------------------- drainage


def _mean_degree(r, fid):
    tr = r.traces[fid][0]
    coh = np.array([m == "consolidation" for m in tr.method])
    h = (tr.bottom - tr.top)[coh]
    return float(np.sum(tr.details["U(t)"][coh] * h) / np.sum(h))


def test_two_clays_in_contact_consolidate_as_one_layer():
    # Terzaghi (1943): a 4 m layer drained on both faces, H_dr = 2 m, is 50 % consolidated
    # at Tv = 0.1967 (METHODS.md §5.2); two 2 m clays each drained on its own would be
    # at Tv = 0.787 (U = 89 %). Uniform load (wide area) → uniform initial pressure.
    q, B = 50.0, 400.0
    f = rect("R", 0, 0, B, B, depth=0.0, load=q * B * B, fill=0.0)
    t50 = 0.1967 * 2.0**2 / 2.0
    site = site_of([f], [SAND, clay("upper"), clay("lower"), GRAVEL], [2.0, 2.0, 2.0, 10.0],
                   report_times=(t50,), design_life=t50)
    r = analyse(site, with_map=False, with_checks=False)
    assert _mean_degree(r, "R") == pytest.approx(0.5, abs=0.005)
    notes = " ".join(r.traces["R"][0].notes)
    assert "one layer" in notes and "H_dr = 2.00 m" in notes


def test_a_rigid_base_is_impermeable_unless_the_stratum_says_otherwise():
    # clay on rock, drained at the top only: H_dr = H = 4 m; U(Tv = 0.1967) = 0.5
    q, B = 50.0, 400.0
    f = rect("R", 0, 0, B, B, depth=0.0, load=q * B * B, fill=0.0)
    t50 = 0.1967 * 4.0**2 / 2.0
    site = site_of([f], [SAND, clay(), ROCK], [2.0, 4.0, 5.0], report_times=(t50,),
                   design_life=t50)
    r = analyse(site, with_map=False, with_checks=False)
    assert _mean_degree(r, "R") == pytest.approx(0.5, abs=0.005)
    assert "impermeable on the rigid stratum below" in " ".join(r.traces["R"][0].notes)
    both = site_of([f], [SAND, clay(drainage="both"), ROCK], [2.0, 4.0, 5.0],
                   report_times=(t50,), design_life=t50)
    r2 = analyse(both, with_map=False, with_checks=False)
    tv = 0.1967 * 4.0  # H_dr = 2 m: Tv four times larger
    assert _mean_degree(r2, "R") == pytest.approx(float(cons.degree_of_consolidation(tv)),
                                                   abs=0.005)
