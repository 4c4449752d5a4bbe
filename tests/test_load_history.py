"""When loads arrive: the live load just after ``checked_after`` by default.

Check values: linearity of the elastic half-space (the settlement under the dead load
alone is D/(D + L) of that under the full load; Boussinesq stresses superpose) and
the superposition of load increments in consolidation (Terzaghi 1943: once every
increment is consolidated the settlement is that of the final load, whatever the
order of arrival).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from _sites import ROCK, rect

from sitesettle.analysis import analyse, live_load_start
from sitesettle.options import Behaviour, GranularMethod
from sitesettle.site import AnalysisSettings, Borehole, CheckSettings, Interval, Site, Stratum

SAND = Stratum(
    "sand", Behaviour.GRANULAR, 18.0, 20.0, 0.3, youngs_modulus=30000.0,
    method=GranularMethod.ELASTIC,
)


def site_of(footings, strata, thicknesses, checked_after=1.0, **settings):
    z, intervals = 0.0, []
    for s, h in zip(strata, thicknesses):
        intervals.append(Interval(s.name, z, z + h))
        z += h
    bh = Borehole("BH", 0.0, 0.0, tuple(intervals), 0.0)
    base = dict(report_times=(0.5, 2.0), design_life=50.0, stress_tolerance=0.0)
    base.update(settings)
    return Site("t", tuple(footings), tuple(strata), (bh,), water_depth=0.0,
                analysis=AnalysisSettings(**base),
                checks=CheckSettings(checked_after=checked_after))


def test_live_load_arrives_after_checked_after_on_elastic_ground():
    # a 2 m pad at the surface (q = P/A), D = 600 kN, L = 200 kN, on elastic sand: before
    # 1 yr it settles D/(D+L) = 3/4 of its full-load settlement, after it all of it, so
    # the movement after 1 yr is L/(D+L) = 1/4 of it (linear elasticity)
    f = rect("F", 0.0, 0.0, 2.0, depth=0.0, load=600.0, live=200.0, sustained=0.5, fill=0.0)
    alone = site_of([f], [SAND, ROCK], [10.0, 5.0])
    a = analyse(alone, with_map=False, with_checks=False)
    t_a = list(a.times)
    assert a.total[0, t_a.index(0.5)] == pytest.approx(0.75 * a.total[0, t_a.index(2.0)], rel=1e-9)
    # beside a pad G with no live load: F's settlement before 1 yr is that of the plan
    # with F's live load absent (superposition), after it that of the full plan
    g = rect("G", 5.0, 0.0, 2.0, depth=0.0, load=600.0, fill=0.0)
    site = site_of([f, g], [SAND, ROCK], [10.0, 5.0])
    assert live_load_start(site) == 1.0
    r = analyse(site, with_map=False)
    times = list(r.times)
    assert 1.0 in times  # checked_after is reported
    s = r.total[0]
    full = s[times.index(2.0)]
    no_live = analyse(
        dataclasses.replace(site, footings=(dataclasses.replace(f, live_load=0.0), g)),
        with_map=False, with_checks=False,
    )
    assert s[times.index(0.5)] == pytest.approx(no_live.total[0, 0], rel=1e-9)
    assert s[times.index(1.0)] == pytest.approx(no_live.total[0, 0], rel=1e-9)  # just before
    start = analyse(dataclasses.replace(site, analysis=dataclasses.replace(
        site.analysis, live_load_from="start")), with_map=False)
    assert start.total[0, times.index(0.5)] == pytest.approx(full, rel=1e-9)
    assert r.at_design_life()[0] == pytest.approx(start.at_design_life()[0], rel=1e-9)
    # the checked differential includes the live load's settlement on loading: F moves
    # a quarter of its settlement after 1 yr, G (no live load) only by F's effect on it
    moved_f = full - s[times.index(1.0)]
    moved_g = r.total[1, times.index(2.0)] - r.total[1, times.index(1.0)]
    assert moved_f > 0.2 * full and moved_g < 0.2 * moved_f
    assert r.checks.pairs.differential[0] == pytest.approx(moved_f - moved_g, rel=1e-6)
    assert start.checks.pairs.differential[0] < 1e-12  # all at once: nothing after 1 yr
    assert any("live load just after 1 yr" in b for b in r.basis)


def test_staged_consolidation_ends_at_the_final_load_settlement():
    # a wide loaded area over a 4 m clay on rock (cv = 2 m²/yr, H_dr = 4 m: U ≈ 1 by
    # Tv = 2 at 16 yr); live load arriving at 1 yr: at 50 yr the settlement is the same
    # as with every load at time 0 (superposition of increments, Terzaghi 1943)
    clay = Stratum("clay", Behaviour.COHESIVE, 18.0, 18.0, compression_index=0.3,
                   recompression_index=0.05, void_ratio=1.0, ocr=1.0,
                   consolidation_coefficient=2.0, secondary_index=0.0)
    B = 200.0
    f = rect("R", 0.0, 0.0, B, depth=0.0, load=30.0 * B * B, live=20.0 * B * B, sustained=1.0,
             fill=0.0)
    g = rect("S", 150.0, 0.0, 2.0, depth=0.0, load=100.0, fill=0.0)
    site = site_of([f, g], [clay, ROCK], [4.0, 5.0], cohesive_immediate=False)
    staged = analyse(site, with_map=False, with_checks=False)
    at_once = analyse(dataclasses.replace(site, analysis=dataclasses.replace(
        site.analysis, live_load_from="start")), with_map=False, with_checks=False)
    assert staged.at_design_life()[0] == pytest.approx(at_once.at_design_life()[0], rel=2e-3)
    times = list(staged.times)
    # at 2 yr the live increment has consolidated for 1 yr only: less settlement
    k = times.index(2.0)
    assert staged.total[0, k] < at_once.total[0, k] - 0.002
    # before 1 yr: the dead load alone (30 of 50 kPa): less than at once
    assert staged.total[0, times.index(0.5)] < at_once.total[0, times.index(0.5)]


def test_no_shift_without_live_load_or_checked_after():
    f = rect("F", 0.0, 0.0, 2.0, depth=0.0, load=600.0, fill=0.0)
    assert live_load_start(site_of([f], [SAND, ROCK], [10.0, 5.0])) == 0.0
    f2 = rect("F", 0.0, 0.0, 2.0, depth=0.0, load=600.0, live=100.0, fill=0.0)
    assert live_load_start(site_of([f2], [SAND, ROCK], [10.0, 5.0], checked_after=0.0)) == 0.0
    np.testing.assert_equal(live_load_start(site_of([f2], [SAND, ROCK], [10.0, 5.0])), 1.0)
