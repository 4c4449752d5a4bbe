"""A plan too large for the machine is refused, a large one warned, before the work starts.

The thresholds (refuse above 2 × physical memory, warn above 80 % of the memory
available or over 10 minutes) are the project's rule (sitesettle.budget); the
estimate's coefficients are measured by benchmarks/scale_bench.py, never timed here.
"""

from __future__ import annotations

import dataclasses
import pathlib
import shutil

import pytest
from _factories import make_site
from sitesettle_cli.main import main

import sitesettle
from sitesettle import analysis, budget, stress
from sitesettle.errors import InputError

DEMO = pathlib.Path(__file__).resolve().parents[1] / "demo_site"
GB = 1e9


def _no_stress(*args, **kwargs):
    raise AssertionError("a stress was computed before the plan was assessed")


@pytest.fixture
def machine(monkeypatch):
    """A machine of 4 GB with 3 GB available (whatever this one has)."""
    monkeypatch.setattr(budget, "physical_memory", lambda: 4 * GB)
    monkeypatch.setattr(budget, "available_memory", lambda: 3 * GB)


def _huge():
    """5,000 pads with sublayers of 1 % of their width: far beyond 8 GB by the estimate."""
    site = make_site(nx=100, ny=50)
    return dataclasses.replace(
        site, analysis=dataclasses.replace(site.analysis, sublayer_fraction=0.01)
    )


def _guard(monkeypatch):
    for name in ("stress_sums", "stress_states", "own_stress"):
        monkeypatch.setattr(stress, name, _no_stress)


def test_a_huge_plan_is_refused_before_any_stress(machine, monkeypatch):
    _guard(monkeypatch)
    with pytest.raises(budget.PlanTooLarge) as err:
        sitesettle.analyse(_huge())
    assert isinstance(err.value, InputError)  # exit code 2, one message
    text = str(err.value)
    assert "5,000 footings" in text and "GB of memory" in text
    assert "sublayer_fraction" in text  # what to change


def test_the_command_refuses_it_with_exit_2_and_writes_nothing(
    machine, monkeypatch, tmp_path, capsys
):
    folder = tmp_path / "demo"
    shutil.copytree(DEMO, folder)
    # the demo (about 0.75 GB by the estimate) on a machine of 0.25 GB: refused
    monkeypatch.setattr(budget, "physical_memory", lambda: 0.25 * GB)
    _guard(monkeypatch)
    out = tmp_path / "results"
    assert main(["check", str(folder), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert "too large for this machine" in err and "GB of memory" in err
    assert "Traceback" not in err
    assert not out.exists()


def test_a_large_plan_is_warned_before_the_work(monkeypatch):
    site = make_site(nx=2, ny=1)
    monkeypatch.setattr(budget, "physical_memory", lambda: 64 * GB)
    monkeypatch.setattr(budget, "available_memory", lambda: 0.1 * GB)  # little free memory
    calls = []
    real = stress.stress_states

    def counted(*args, **kwargs):
        calls.append("stress")
        return real(*args, **kwargs)

    monkeypatch.setattr(stress, "stress_states", counted)
    seen = []
    res = sitesettle.analyse(site, on_warning=lambda msg: seen.append((msg, len(calls))))
    assert len(seen) == 1 and seen[0][1] == 0  # told before the first stress
    assert calls  # and the stresses were then computed (the counter counts)
    assert "a large plan" in seen[0][0] and "80%" in seen[0][0]
    assert seen[0][0] in res.warnings


def test_large_plan_run_overrides_the_refusal_with_a_warning(monkeypatch):
    # [analysis] large_plan = "run": a plan beyond 2 × the memory is run all the same
    # (a machine with swap), with a warning that says so; the default refuses it
    site = make_site(nx=3, ny=2)
    monkeypatch.setattr(budget, "physical_memory", lambda: 0.01 * GB)
    monkeypatch.setattr(budget, "available_memory", lambda: 0.01 * GB)
    with pytest.raises(budget.PlanTooLarge, match='large_plan = "run"'):
        sitesettle.analyse(site, with_map=False)
    run = dataclasses.replace(site, analysis=dataclasses.replace(site.analysis, large_plan="run"))
    res = sitesettle.analyse(run, with_map=False)
    note = [w for w in res.warnings if w.startswith("a large plan")]
    assert len(note) == 1 and 'large_plan = "run"' in note[0] and "may swap" in note[0]
    assert res.total.shape[0] == len(site.footings)


def test_large_plan_from_the_command_line(machine, monkeypatch, tmp_path, capsys):
    folder = tmp_path / "demo"
    shutil.copytree(DEMO, folder)
    monkeypatch.setattr(budget, "physical_memory", lambda: 0.25 * GB)
    out = tmp_path / "results"
    args = ["check", str(folder), "--out", str(out), "--quiet"]
    assert main([*args, "--set", "analysis.large_plan=maybe"]) == 2
    assert "large_plan" in capsys.readouterr().err and not out.exists()
    assert main([*args, "--set", "analysis.large_plan=run"]) == 1  # the demo fails checks
    assert "large_plan" in (out / "summary.json").read_text(encoding="utf-8")


def test_time_over_ten_minutes_is_warned(machine):
    est = budget.estimate(budget.counts(50_000, 300_000, 40_000, 7, 2, 0.1))
    assert est.seconds > budget.WARN_SECONDS
    note = budget.assess(dataclasses.replace(est, bytes=1 * GB))
    assert note is not None and "longer than 10 minutes" in note


def test_a_normal_plan_is_not_warned(machine):
    site = sitesettle.load_site(DEMO)
    ctx = analysis.prepare(site)
    pts, layout = analysis.evaluation_points(ctx.site, with_map=True)
    est = analysis.plan_estimate(ctx, pts, layout)
    assert budget.assess(est) is None
    assert est.counts.footings == len(site.footings)
    assert est.counts.columns == len(pts) and est.counts.map_points == len(layout["map"])


@pytest.mark.parametrize("field", ["footings", "columns", "map_points", "times", "stages"])
def test_the_estimate_grows_with_every_count(field):
    base = dict(footings=300, columns=5000, map_points=4000, times=5, stages=2)
    seconds, memory = [], []
    for factor in (1, 2, 4, 8):
        kw = {**base, field: base[field] * factor}
        est = budget.estimate(budget.counts(**kw, sublayer_fraction=0.1))
        seconds.append(est.seconds)
        memory.append(est.bytes)
    assert seconds == sorted(seconds) and memory == sorted(memory)
    if field in ("columns", "times"):  # these scale the sublayer arrays
        assert seconds[-1] > seconds[0] and memory[-1] > memory[0]
    if field == "stages":  # one state at a time: more time, not more memory
        assert seconds[-1] > seconds[0] and memory[-1] == memory[0]


def test_finer_sublayers_cost_more():
    est = [budget.estimate(budget.counts(300, 5000, 4000, 5, 2, f)) for f in (0.5, 0.2, 0.1, 0.01)]
    assert all(a.bytes < b.bytes and a.seconds < b.seconds for a, b in zip(est, est[1:]))


def test_memory_of_this_machine_is_read():
    assert budget.physical_memory() > 0
    assert 0 < budget.available_memory() <= budget.physical_memory() * 1.01
