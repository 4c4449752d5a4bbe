"""When loads arrive: the live load just after ``checked_after`` by default.

Check values: linearity of the elastic half-space (the settlement under the dead load
alone is D/(D + L) of that under the full load; Boussinesq stresses superpose) and
the superposition of load increments in consolidation (Terzaghi 1943: once every
increment is consolidated the settlement is that of the final load, whatever the
order of arrival).
"""

from __future__ import annotations

import dataclasses
import math
import pathlib
import re
import shutil

import numpy as np
import pytest
from _sites import ROCK, rect
from scipy import integrate

from sitesettle.analysis import analyse, live_load_start
from sitesettle.errors import InputError
from sitesettle.io.project import load_site
from sitesettle.options import Behaviour, GranularMethod
from sitesettle.site import (
    AnalysisSettings,
    Borehole,
    CheckSettings,
    Interval,
    LoadStage,
    Site,
    Stratum,
)

STARTER = pathlib.Path(__file__).resolve().parents[1] / "sitesettle" / "templates" / "starter"

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


# --------------------------------------------------------------------------- stages


def olson_ramp_degree(tv: float, tc: float) -> float:
    """Average degree of consolidation under a load ramped over Tv = tc (Olson 1977, from
    memory; also Duhamel's integral of Terzaghi's U, checked below)."""
    m = math.pi / 2 * (2 * np.arange(400) + 1)
    if tv <= tc:
        return tv / tc * (1 - 2 / tv * float(np.sum((1 - np.exp(-(m**2) * tv)) / m**4)))
    decay = np.exp(-(m**2) * (tv - tc)) * (1 - np.exp(-(m**2) * tc))
    return 1 - 2 / tc * float(np.sum(decay / m**4))


def test_olson_closed_form_is_duhamels_integral_of_terzaghi():
    m = math.pi / 2 * (2 * np.arange(2000) + 1)

    def u(tv):
        return 1 - float(np.sum(2 / m**2 * np.exp(-(m**2) * tv))) if tv > 0 else 0.0

    for tv, tc in ((0.1, 0.2), (0.2, 0.2), (0.6, 0.2)):
        duhamel = integrate.quad(lambda s, tv=tv: u(tv - s), 0, min(tv, tc), limit=200)[0] / tc
        assert olson_ramp_degree(tv, tc) == pytest.approx(duhamel, abs=1e-4)


def wide_clay_site(stages=(), checked_after=0.0, **kw):
    # a 1 m clay at 10–11 m under 10 m of stiff sand, on rock: σ'0 within ±5 % across it,
    # so its settlement degree is the average degree of consolidation; cv = 1 m²/yr,
    # drained at the top only (H_dr = 1 m: Tv = t in years)
    clay = Stratum("clay", Behaviour.COHESIVE, 18.0, 18.0, compression_index=0.3,
                   recompression_index=0.05, void_ratio=1.0, ocr=1.0,
                   consolidation_coefficient=1.0, secondary_index=0.0)
    stiff = Stratum("sand", Behaviour.GRANULAR, 18.0, 20.0, 0.3, youngs_modulus=1e8,
                    method=GranularMethod.ELASTIC)
    B = 400.0
    f = rect("R", 0.0, 0.0, B, depth=0.0, load=20.0 * B * B, live=0.0, fill=0.0)
    site = site_of([f], [stiff, clay, ROCK], [10.0, 1.0, 5.0], checked_after=checked_after,
                   cohesive_immediate=False, **kw)
    return dataclasses.replace(site, stages=tuple(stages))


def test_ramp_loading_against_olson():
    # the load ramped over 0.2 yr (Tc = 0.2): at the end of the ramp and after it the
    # settlement is U(Tv) of Olson (1977) × the final settlement
    times = (0.1, 0.2, 0.4, 0.6)
    ramp = wide_clay_site([LoadStage("fill", 0.0, 0.2, dead=1.0)], report_times=times,
                          design_life=40.0)
    r = analyse(ramp, with_map=False, with_checks=False)
    final = r.at_design_life()[0]
    for tv in times:
        k = list(r.times).index(tv)
        assert r.total[0, k] / final == pytest.approx(olson_ramp_degree(tv, 0.2), abs=0.01)
    # long after the ramp it tends to the instant-load result
    inst = analyse(wide_clay_site(report_times=times, design_life=40.0), with_map=False,
                   with_checks=False)
    assert final == pytest.approx(inst.at_design_life()[0], rel=1e-3)


def test_stages_superpose_linearly_on_elastic_ground():
    # three stages of 50 %, 30 % and 20 % of the dead load at 0, 0.5 and 1 yr on elastic
    # ground: the settlement after each is that fraction of the full settlement
    # (linear elasticity), and checked_after = "after finishes" is the end of that stage
    f = rect("F", 0.0, 0.0, 2.0, depth=0.0, load=600.0, live=150.0, sustained=1.0, fill=0.0)
    stages = (LoadStage("frame", 0.0, 0.0, dead=0.5), LoadStage("finishes", 0.5, 0.0, dead=0.3),
              LoadStage("cladding", 1.0, 0.0, dead=0.2), LoadStage("use", 3.0, 0.0, live=1.0))
    site = dataclasses.replace(site_of([f], [SAND, ROCK], [10.0, 5.0], checked_after=0.0,
                                       report_times=(0.25, 0.75, 2.0, 5.0)), stages=stages)
    r = analyse(site, with_map=False, with_checks=False)
    t = list(r.times)
    s = r.total[0]
    full = s[t.index(5.0)]
    for when, frac in ((0.25, 0.5 * 600 / 750), (0.75, 0.8 * 600 / 750), (2.0, 600 / 750)):
        assert s[t.index(when)] == pytest.approx(frac * full, rel=1e-9)
    for mark in (0.5, 1.0, 3.0):  # stage starts are reported
        assert mark in t


def test_stages_from_site_toml(tmp_path):
    folder = tmp_path / "p"
    shutil.copytree(STARTER, folder)
    toml = folder / "site.toml"
    text = toml.read_text(encoding="utf-8").replace(
        'checked_after = "0 yr"', 'checked_after = "after finishes"'
    )
    text += (
        '\n[[area_loads]]\nname = "yard fill"\nfill_thickness = "0.4 m"\n'
        'fill_unit_weight = "19 kN/m^3"\nextent = "plan + 10 m"\n'
        '\n[[stages]]\nname = "fill"\nstart = "0 months"\nduration = "1 month"\n'
        'area_loads = ["yard fill"]\n'
        '\n[[stages]]\nname = "frame"\nstart = "2 months"\nduration = "3 months"\ndead = 0.8\n'
        '\n[[stages]]\nname = "finishes"\nstart = "5 months"\nduration = "2 months"\ndead = 0.2\n'
        '\n[[stages]]\nname = "occupancy"\nstart = "8 months"\nlive = 1\n'
    )
    toml.write_text(text, encoding="utf-8")
    # and an excavation beside the plan (a plant-room pit 8 m east of it, 2.5 m deep)
    text = toml.read_text(encoding="utf-8")
    fx = [float(v) for v in re.findall(r"^C\d,\w+,([-\d.]+)", (folder / "footings.csv")
                                         .read_text(encoding="utf-8"), re.M)]
    x0 = max(fx) + 14.0
    text += (
        f'\n[[area_loads]]\nname = "pit"\nexcavation = "2.5 m"\n'
        f"polygon = [[{x0}, 0], [{x0 + 4}, 0], [{x0 + 4}, 4], [{x0}, 4]]\n"
    )
    toml.write_text(text, encoding="utf-8")
    site = load_site(folder)
    assert [s.name for s in site.stages] == ["fill", "frame", "finishes", "occupancy"]
    assert site.checks.checked_after == pytest.approx(7 / 12)
    r = analyse(site)
    assert np.all(np.isfinite(r.total))
    assert any("finishes: 20% of the dead load from" in b for b in r.basis)
    # the pit (with the first stage) unloads: its own point would rebound; the footings
    # are checked on the movement after the finishes, and the report has the stage table
    assert r.site.area_loads[1].pressure < 0
    from sitesettle.report import render_report

    html = render_report(r, {})
    assert "<h3>Load history</h3>" in html and ">finishes<" in html and ">pit<" in html


@pytest.mark.parametrize(
    "extra, match",
    [
        ('[[stages]]\nname = "a"\nstart = "0 yr"\ndead = 0.5\n', "apply 0.5 of the dead load"),
        ('[[stages]]\nname = "a"\nstart = "0 yr"\ndead = 1\narea_loads = ["nope"]\n',
         'unknown area load "nope"'),
        ('[[stages]]\nname = "a"\nstart = "1 yr"\ndead = 0.5\n[[stages]]\nname = "b"\n'
         'start = "0 yr"\ndead = 0.5\n', "before the stage above it"),
        ('[[stages]]\nname = "a"\nstart = "0 yr"\ndead = 1.5\n', "a fraction in"),
        ('[[stages]]\nname = "a"\ndead = 1\n', "key 'start': the key is missing"),
    ],
)
def test_bad_stages_are_refused(tmp_path, extra, match):
    folder = tmp_path / "p"
    shutil.copytree(STARTER, folder)
    toml = folder / "site.toml"
    toml.write_text(toml.read_text(encoding="utf-8") + "\n" + extra, encoding="utf-8")
    with pytest.raises(InputError, match=match):
        analyse(load_site(folder), with_map=False)


def test_checked_after_names_an_unknown_stage(tmp_path):
    folder = tmp_path / "p"
    shutil.copytree(STARTER, folder)
    toml = folder / "site.toml"
    toml.write_text(toml.read_text(encoding="utf-8").replace(
        'checked_after = "0 yr"', 'checked_after = "after roofing"'), encoding="utf-8")
    with pytest.raises(InputError, match='no stage called "roofing"'):
        load_site(folder)


def test_stages_and_area_loads_are_drawn(tmp_path):
    import matplotlib

    matplotlib.use("Agg")
    from sitesettle import plots

    folder = tmp_path / "p"
    shutil.copytree(STARTER, folder)
    toml = folder / "site.toml"
    toml.write_text(
        toml.read_text(encoding="utf-8")
        + '\n[[area_loads]]\nname = "yard fill"\nfill_thickness = "0.4 m"\n'
        'fill_unit_weight = "19 kN/m^3"\nextent = "plan + 4 m"\n'
        '\n[[stages]]\nname = "frame"\nstart = "0 yr"\ndead = 1\narea_loads = ["yard fill"]\n'
        '\n[[stages]]\nname = "occupancy"\nstart = "6 months"\nlive = 1\n',
        encoding="utf-8",
    )
    r = analyse(load_site(folder))
    ax = plots.plan(r)
    assert "yard fill" in [t.get_text() for t in ax.texts]
    ax = plots.history(r)
    assert any(t.get_text().strip() == "occupancy" for t in ax.texts)
    assert any(abs(line.get_xdata()[0] - 0.5) < 1e-12 for line in ax.lines
               if len(line.get_xdata()) == 2)


def test_stage_states_summed_with_the_full_loads_keep_their_own_bound():
    # a group of 12 pads (enough for the treecode) in three stages: the superposed
    # stresses of every stage's load state are summed in the same pass as the full
    # and sustained loads; each stays within the engine's bound (tolerance × that
    # state's largest pressure) of the exact sum of that state's loads alone
    from sitesettle import analysis as A
    from sitesettle import stress
    from sitesettle.columns import GroundColumns
    from sitesettle.field import Tables

    pads = [
        rect(f"P{i}", 3.5 * (i % 4), 4.0 * (i // 4), 1.5 + 0.1 * i, depth=1.0,
             load=400.0 + 30.0 * i, live=120.0, sustained=0.5, fill=0.0)
        for i in range(12)
    ]  # fmt: skip
    stages = (LoadStage("frame", 0.0, 0.0, dead=0.6), LoadStage("finishes", 0.5, 0.0, dead=0.4),
              LoadStage("use", 2.0, 0.0, live=1.0))  # fmt: skip
    plain = site_of(pads, [SAND, ROCK], [12.0, 5.0], stress_tolerance=1e-3)
    site = dataclasses.replace(plain, stages=stages)
    ctx = A.prepare(site)
    assert len(ctx.states) == 2
    pts, _ = A.evaluation_points(site, with_map=False)
    gc = GroundColumns.build(ctx.ground, pts.xy)
    tab = Tables.build(gc, str(site.analysis.granular_method))
    run = A.integrate(ctx, pts, gc, tab, lambda *a: None)
    assert run.stage_stress.shape == (2, 3, len(run.sub))
    xyz = np.column_stack([run.sub.x, run.sub.y, run.sub.mid])
    tol = site.analysis.stress_tolerance
    for k, (_, _, lf, ls) in enumerate(ctx.states):
        for row, loads, part in ((0, lf, 0), (1, lf, 1), (2, ls, 0)):
            exact = stress.stress_sums(loads, xyz, tolerance=0)[part]
            err = np.abs(run.stage_stress[k, row] - exact).max()
            assert err <= tol * np.abs(loads.pressure).max()
    # once every stage is on, linear-elastic ground settles as under the whole load
    # applied at once (superposition), to the engine's tolerance
    staged = analyse(site, with_map=False, with_checks=False).at_design_life()
    once = analyse(plain, with_map=False, with_checks=False).at_design_life()
    np.testing.assert_allclose(staged, once, rtol=2e-3)
