"""``sitesettle compare``: two results folders, footing by footing and pair by pair.

The checks come from outside the comparison: a run compared with itself changes
nothing (identity); the footings a sizing run resized are read from its own
sizing.csv (an independent record of the size changes) and their own-load
settlement must move against their size (a larger footing under the same load
settles less under its own load: s ∝ q·B ∝ P/B on an elastic layer, Steinbrenner
1934 / common practice); every difference is checked against the two CSV files read
by pandas; a copy edited by hand to fail is a regression.

The demo is run once for the module with a coarser settlement map
(``analysis.map_spacing=4``): the map is a grid of its own and the footing values
come from the footings' own points, so the map spacing only shortens the run.
"""

from __future__ import annotations

import base64
import io
import json
import pathlib
import re
import shutil
from contextlib import redirect_stderr, redirect_stdout

import numpy as np
import pandas as pd
import pytest
from sitesettle_cli.main import main

from sitesettle import compare
from sitesettle.io.comparison import compare_folders, default_out

ROOT = pathlib.Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_site"
FAST_MAP = ("--set", "analysis.map_spacing=4")


def run(*args: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        rc = main([str(a) for a in args])
    return rc, out.getvalue(), err.getvalue()


def read(path: pathlib.Path) -> pd.DataFrame:
    """A CSV file as written (comment lines skipped, ids as text)."""
    return pd.read_csv(
        path, comment=None, dtype={"id": str, "a": str, "b": str}, skiprows=_comments(path)
    )


def _comments(path: pathlib.Path) -> int:
    n = 0
    for line in path.read_text(encoding="utf-8").splitlines():
        if not line.startswith("#"):
            break
        n += 1
    return n


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """The demo checked, and sized under a 250 kPa cap: two results folders."""
    root = tmp_path_factory.mktemp("compare")
    a, b = root / "demo", root / "sized"
    rc_a, *_ = run("check", DEMO, "--out", a, "--quiet", *FAST_MAP)
    rc_b, *_ = run("size", DEMO, "--bearing-pressure", "250 kPa", "--out", b, "--quiet", *FAST_MAP)
    assert (a / "summary.json").is_file() and (b / "sizing.csv").is_file()
    return root, a, b


@pytest.fixture(scope="module")
def sized_vs_demo(runs):
    root, a, b = runs
    out = root / "c_sized"
    rc, stdout, err = run("compare", a, b, "--out", out)
    return out, rc, stdout, err


def _pairs_that_broke(a: pathlib.Path, b: pathlib.Path) -> set[frozenset]:
    """Pairs that pass in folder a's pairs.csv and fail in b's (read by pandas)."""
    pa, pb = read(a / "pairs.csv"), read(b / "pairs.csv")
    pst = {frozenset((x, y)): s for x, y, s in zip(pa["a"], pa["b"], pa["status"])}
    return {
        frozenset((x, y))
        for x, y, s in zip(pb["a"], pb["b"], pb["status"])
        if pst.get(frozenset((x, y))) == "pass" and s == "fail"
    }


def _lines_fit(text: str) -> None:
    assert max(len(line) for line in text.splitlines()) <= 100


def test_a_run_compared_with_itself_changes_nothing(runs):
    root, a, _ = runs
    out = root / "self"
    rc, stdout, err = run("compare", a, a, "--out", out)
    assert rc == 0, err
    assert "No change" in stdout and "No regressions" in stdout
    assert "licensed engineer" in stdout
    _lines_fit(stdout)
    for name in ("footings_compared.csv", "pairs_compared.csv", "lines_compared.csv"):
        t = pd.read_csv(out / name)
        deltas = [c for c in t.columns if "_delta" in c]
        assert deltas, name
        for c in deltas:  # exactly zero (no tolerance): the same numbers on both sides
            assert (t[c].dropna() == 0).all(), (name, c)
        assert (t["presence"] == "both").all() and (t["change"] == "same").all()
        assert not t["changed"].any() and not t["regression"].any()
    info = json.loads((out / "comparison.json").read_text(encoding="utf-8"))
    assert info["no_change"] and info["n_regressions"] == 0 and info["basis_differs"] == []
    assert info["counts"]["footings"]["in_a"] == len(read(a / "footings.csv"))


def test_sized_plan_lists_exactly_the_resized_footings(runs, sized_vs_demo):
    root, a, b = runs
    out, rc, stdout, err = sized_vs_demo
    sizing = read(b / "sizing.csv")
    resized = set(sizing.loc[sizing["changed"].astype(str).str.lower() == "true", "id"])
    assert resized  # the demo has pads to resize
    fc = read(out / "footings_compared.csv")
    assert set(fc.loc[fc["size_changed"], "id"]) == resized
    info = json.loads((out / "comparison.json").read_text(encoding="utf-8"))
    assert set(info["resized_footings"]) == resized
    assert info["counts"]["footings"]["size_changed"] == len(resized)
    # a larger footing under the same load settles less under its own load, a smaller
    # one more (s ∝ q·B ∝ P/B: Steinbrenner 1934; common practice)
    rows = fc[fc["size_changed"]]
    area = rows["width_b_m"] * rows["length_b_m"] - rows["width_a_m"] * rows["length_a_m"]
    assert (np.sign(rows["own_delta_mm"]) == -np.sign(area)).all(), rows[["id", "own_delta_mm"]]
    # the footings that sizing made pass, from sizing.csv's own before/after columns
    fixed = set(
        sizing.loc[(sizing["status_before"] == "fail") & (sizing["status"] == "pass"), "id"]
    )
    assert fixed
    assert set(fc.loc[fc["status_change"] == "fail → pass", "id"]) == fixed
    assert set(info["improvements"]["footings"]) == fixed
    for fid in fixed:
        assert fid in stdout or fid in info["improvements"]["footings"]


def test_exit_code_is_1_exactly_when_a_check_that_passed_fails(runs, sized_vs_demo):
    root, a, b = runs
    out, rc, stdout, err = sized_vs_demo
    _lines_fit(stdout)
    # regressions from the two folders' own tables, independently of the comparison
    fa, fb = read(a / "footings.csv"), read(b / "footings.csv")
    st = fa.set_index("id")["status"]
    worse_f = {i for i, s in zip(fb["id"], fb["status"]) if st.get(i) == "pass" and s != "pass"}
    worse_p = _pairs_that_broke(a, b)
    info = json.loads((out / "comparison.json").read_text(encoding="utf-8"))
    assert set(info["regressions"]["footings"]) == worse_f
    assert {frozenset(p) for p in info["regressions"]["pairs"]} == worse_p
    expected = 1 if (worse_f or worse_p or info["regressions"].get("lines")) else 0
    assert rc == expected, err
    if expected:
        assert "REGRESSIONS" in stdout
        for pair in worse_p:
            x, y = sorted(pair)
            assert re.search(rf"pair ({x}–{y}|{y}–{x}):", stdout)


def test_sizing_marks_the_checks_its_sizes_broke(runs):
    # the checks sizing leaves failing that passed on the plan as given, as
    # sizing.json marks them, are exactly the pairs that fail in the sized plan's
    # pairs.csv and passed in the demo's (the two folders' own tables)
    root, a, b = runs
    broke = _pairs_that_broke(a, b)
    info = json.loads((b / "sizing.json").read_text(encoding="utf-8"))
    marked = {
        frozenset(u["footings"])
        for u in info["unresolved"]
        if u["passed_before_sizing"] and u["check"].startswith("pair ")
    }
    assert marked == broke
    for u in info["unresolved"]:
        assert ("passed on the plan as given" in u["reason"]) == u["passed_before_sizing"]


def test_differences_are_b_minus_a_of_the_two_csv_files(runs, sized_vs_demo):
    root, a, b = runs
    out = sized_vs_demo[0]
    fa, fb = read(a / "footings.csv"), read(b / "footings.csv")
    fc = read(out / "footings_compared.csv").set_index("id")
    m = fa.merge(fb, on="id", suffixes=("_A", "_B")).set_index("id")
    for col in ("total", "own", "neighbours"):
        want = (m[f"{col}_mm_B"] - m[f"{col}_mm_A"]).round(3)
        got = fc.loc[m.index, f"{col}_delta_mm"]
        assert np.allclose(got, want, rtol=0, atol=1e-9), col
        assert np.array_equal(fc.loc[m.index, f"{col}_a_mm"], m[f"{col}_mm_A"])
    pa, pb = read(a / "pairs.csv"), read(b / "pairs.csv")
    pc = read(out / "pairs_compared.csv")
    key = lambda t: {frozenset((x, y)): r for (x, y), (_, r) in zip(zip(t.a, t.b), t.iterrows())}  # noqa: E731
    ka, kb = key(pa), key(pb)
    assert len(pc) == len(set(ka) | set(kb))
    for _, r in pc.iterrows():
        k = frozenset((r["a"], r["b"]))
        ra, rb = ka[k], kb[k]
        assert r["differential_delta_mm"] == pytest.approx(
            rb["differential_mm"] - ra["differential_mm"], abs=1e-9
        )
        want = rb["angular_distortion_checked"] - ra["angular_distortion_checked"]
        # the CSV writes ratios to 6 significant figures
        assert r["angular_distortion_checked_delta"] == pytest.approx(want, rel=1e-5, abs=1e-12)
    # sorted: what got worse first, then by the size of the change
    worse = (pc["change"] == "worse").to_numpy()
    assert not np.any(np.diff(worse.astype(int)) > 0)
    rest = pc.loc[~worse, "angular_distortion_checked_delta"].abs().to_numpy()
    assert np.all(np.diff(rest) <= 1e-15)
    fs = read(out / "footings_compared.csv")
    assert np.all(np.diff(fs.loc[fs["change"] != "worse", "total_delta_mm"].abs()) <= 0)


def test_a_hand_edited_failing_footing_is_a_regression(runs, tmp_path):
    root, a, _ = runs
    edited = tmp_path / "edited"
    shutil.copytree(a, edited)
    f = (edited / "footings.csv").read_text(encoding="utf-8").splitlines()
    header = f[0].split(",")
    i_total, i_status, i_limit = (header.index(c) for c in ("total_mm", "status", "total_limit_mm"))
    for k, line in enumerate(f[1:], start=1):
        cells = line.split(",")
        if cells[i_status] == "pass" and cells[i_limit]:
            fid = cells[0]
            before = float(cells[i_total])
            cells[i_total] = f"{float(cells[i_limit]) + 10.0:.3f}"  # above the limit
            cells[i_status] = "fail"
            f[k] = ",".join(cells)
            break
    (edited / "footings.csv").write_text("\n".join(f) + "\n", encoding="utf-8")
    out = tmp_path / "cmp"
    rc, stdout, err = run("compare", a, edited, "--out", out)
    assert rc == 1, err
    assert f"footing {fid}: total {before:.1f} →" in stdout and "pass → fail" in stdout
    info = json.loads((out / "comparison.json").read_text(encoding="utf-8"))
    assert info["regressions"]["footings"] == [fid] and info["n_regressions"] == 1
    fc = read(out / "footings_compared.csv")
    assert fc.iloc[0]["id"] == fid and fc.iloc[0]["change"] == "worse"  # worse first
    assert fc.iloc[0]["total_delta_mm"] == pytest.approx(float(cells[i_total]) - before, abs=1e-9)
    # and the other way round it got better, which is no regression
    rc2, stdout2, _ = run("compare", edited, a, "--out", tmp_path / "back")
    assert rc2 == 0 and "No regressions" in stdout2


def test_different_criteria_are_a_warning_not_an_error(runs, tmp_path):
    root, a, _ = runs
    other = tmp_path / "other"
    shutil.copytree(a, other)
    s = json.loads((other / "summary.json").read_text(encoding="utf-8"))
    s["criteria"] = "bjerrum_no_cracking"
    s["checked_after_yr"] = 1.0
    (other / "summary.json").write_text(json.dumps(s), encoding="utf-8")
    rc, stdout, err = run("compare", a, other, "--out", tmp_path / "c")
    assert rc == 0, err
    assert "warning: the basis differs: criteria: A eurocode7, B bjerrum_no_cracking" in stdout
    assert "movement checked after [yr]: A 0.5, B 1" in stdout
    basis = pd.read_csv(tmp_path / "c" / "basis_compared.csv")
    row = basis.set_index("item").loc["criteria"]
    assert (row["a"], row["b"], bool(row["same"])) == ("eurocode7", "bjerrum_no_cracking", False)


def _refused(args, out: pathlib.Path, *words: str) -> str:
    rc, stdout, err = run("compare", *args, "--out", out)
    assert rc == 2, (stdout, err)
    assert "Traceback" not in err
    for w in words:
        assert w in err, (w, err)
    assert not out.exists()
    assert not list(out.parent.glob(f".{out.name}*"))  # no temporary folder or lock left
    return err


def test_bad_inputs_exit_2_name_the_file_and_write_nothing(runs, tmp_path):
    root, a, _ = runs
    out = tmp_path / "c"
    _refused([tmp_path / "nowhere", a], out, "results folder A", "does not exist")
    _refused([a, tmp_path / "nowhere"], out, "results folder B", "does not exist")
    # a project folder is not a results folder: no summary.json
    _refused([DEMO, a], out, str(DEMO / "summary.json"), "not a results folder")
    bad = tmp_path / "bad"
    shutil.copytree(a, bad)
    (bad / "summary.json").write_text("{not json", encoding="utf-8")
    _refused([a, bad], out, str(bad / "summary.json"), "not valid JSON")
    shutil.copy(a / "summary.json", bad / "summary.json")
    text = (bad / "footings.csv").read_text(encoding="utf-8").splitlines()
    cells = text[2].split(",")
    col = text[0].split(",").index("total_mm")
    cells[col] = "lots"
    text[2] = ",".join(cells)
    (bad / "footings.csv").write_text("\n".join(text) + "\n", encoding="utf-8")
    _refused([a, bad], out, str(bad / "footings.csv"), 'row 3, column "total_mm"', "'lots'")
    (bad / "footings.csv").unlink()
    _refused([a, bad], out, str(bad / "footings.csv"), "missing")


def test_results_in_different_units_are_refused(runs, tmp_path):
    root, a, _ = runs
    us = tmp_path / "us"
    shutil.copytree(a, us)
    for name in ("footings.csv", "pairs.csv", "lines.csv"):
        p = us / name
        head, _, body = p.read_text(encoding="utf-8").partition("\n")
        head = re.sub(r"_mm\b", "_in", re.sub(r"_m\b", "_ft", head))
        p.write_text(head + "\n" + body, encoding="utf-8")
    s = json.loads((us / "summary.json").read_text(encoding="utf-8"))
    s["units"] = "us"
    (us / "summary.json").write_text(json.dumps(s), encoding="utf-8")
    err = _refused([a, us], tmp_path / "c", "different units", "total_mm", "total_in")
    assert "same units" in err


def test_a_folder_that_is_not_a_comparison_is_not_overwritten(runs, tmp_path):
    root, a, b = runs
    before = sorted(p.name for p in a.iterdir())
    rc, stdout, err = run("compare", a, b, "--out", a)  # the results folder A itself
    assert rc == 2 and "no comparison.json of ours" in err
    assert sorted(p.name for p in a.iterdir()) == before
    mine = tmp_path / "mine"
    mine.mkdir()
    (mine / "notes.txt").write_text("keep", encoding="utf-8")
    rc, stdout, err = run("compare", a, b, "--out", mine)
    assert rc == 2 and (mine / "notes.txt").read_text(encoding="utf-8") == "keep"


def test_default_folder_and_rewriting_it(runs, sized_vs_demo):
    root, a, b = runs
    assert default_out(a, b) == b / f"compare_to_{a.name}"
    rc, stdout, err = run("compare", a, b, "--quiet", "--top", "3")
    assert rc in (0, 1) and stdout.strip() in ("REGRESSION", "NO REGRESSION")
    target = b / "compare_to_demo"
    assert (target / "comparison.json").is_file()
    rc2, *_ = run("compare", a, b, "--quiet")  # an earlier comparison is replaced
    assert rc2 == rc and (target / "comparison.json").is_file()
    shutil.rmtree(target)


def test_the_page_is_self_contained_with_the_difference_map(sized_vs_demo):
    out = sized_vs_demo[0]
    html = (out / "comparison.html").read_text(encoding="utf-8")
    assert "http://" not in html and "https://" not in html
    assert not re.search(r"""(src|href)=['"](?!data:|#)""", html)
    assert "<script" not in html
    m = re.search(r"data:image/png;base64,([A-Za-z0-9+/=]+)", html)
    assert m and base64.b64decode(m.group(1))[:8] == b"\x89PNG\r\n\x1a\n"
    assert "Difference map" in html and "licensed engineer" in html
    fc = read(out / "footings_compared.csv")
    assert all(f">{fid}<" in html for fid in fc["id"])


def test_top_limits_the_rows_and_lines_fit(sized_vs_demo, runs):
    root, a, b = runs
    rc, stdout, err = run("compare", a, b, "--out", root / "top2", "--top", "2")
    _lines_fit(stdout)
    block = stdout.split("Largest changes of footings")[1].split("\n\n")[0].splitlines()
    assert len([r for r in block if r.startswith("  ") and "…" not in r]) == 1 + 2  # header + 2
    with pytest.raises(SystemExit) as exc:  # argparse: usage error, code 2
        run("compare", a, b, "--out", root / "top_bad", "--top", "-1")
    assert exc.value.code == 2 and not (root / "top_bad").exists()


def test_python_api_returns_the_tables(runs):
    root, a, b = runs
    c = compare_folders(a, b)
    assert c.units == "si" and c.settlement == "mm"
    assert {"total_a_mm", "total_b_mm", "total_delta_mm"} <= set(c.footings.columns)
    assert c.n_regressions == c.summary()["n_regressions"]


# --------------------------------------------------------- the pure functions


def _footings(**cols) -> pd.DataFrame:
    base = {
        "id": ["P1", "P2"],
        "x_m": [0.0, 5.0],
        "y_m": [0.0, 0.0],
        "width_m": [2.0, 2.0],
        "length_m": [2.0, 2.0],
        "kind": ["pad", "pad"],
        "total_mm": [20.0, 30.0],
        "own_mm": [15.0, 20.0],
        "neighbours_mm": [5.0, 10.0],
        "total_limit_mm": [50.0, 50.0],
        "status": ["pass", "pass"],
    }
    base.update(cols)
    return pd.DataFrame(base)


def test_pairs_match_whatever_the_order_of_their_ids():
    pa = pd.DataFrame(
        {
            "a": ["P1"],
            "b": ["P2"],
            "differential_mm": [10.0],
            "angular_distortion_checked": [0.002],
            "status": ["pass"],
        }
    )
    pb = pd.DataFrame(
        {
            "a": ["P2"],
            "b": ["P1"],
            "differential_mm": [12.5],
            "angular_distortion_checked": [0.0025],
            "status": ["fail"],
        }
    )
    t = compare.compare_pairs(pa, pb)
    assert len(t) == 1 and t.loc[0, "presence"] == "both"
    assert t.loc[0, "differential_delta_mm"] == 2.5
    assert bool(t.loc[0, "regression"]) and t.loc[0, "status_change"] == "pass → fail"


def test_added_removed_and_status_order():
    a = _footings()
    b = _footings(id=["P2", "P3"], status=["beyond range", "fail"], total_mm=[90.0, 60.0])
    t = compare.compare_footings(a, b)
    row = t.set_index("id")
    assert row.loc["P1", "presence"] == "removed" and row.loc["P3", "presence"] == "added"
    assert row.loc["P2", "change"] == "worse" and bool(row.loc["P2", "regression"])
    assert row.loc["P2", "total_delta_mm"] == 60.0
    assert t.iloc[0]["id"] == "P2"  # worse first
    no_pairs = pd.DataFrame(
        {c: [] for c in ("a", "b", "differential_mm", "angular_distortion_checked", "status")}
    )
    k = compare.tally(t, compare.compare_pairs(no_pairs, no_pairs), None)
    assert k["footings"]["failing_added"] == ["P3"] and k["n_regressions"] == 1
    # fail → beyond range is worse but not a regression: A did not pass it
    s = compare.status_columns(["fail"], ["beyond range"], ["both"])
    assert s["change"][0] == "worse" and not s["regression"][0]


def test_a_ratio_rounded_in_its_sixth_figure_is_no_change():
    pa = pd.DataFrame(
        {
            "a": ["P1"],
            "b": ["P2"],
            "differential_mm": [10.0],
            "angular_distortion_checked": [0.00193117],
            "status": ["pass"],
        }
    )
    pb = pa.assign(angular_distortion_checked=[0.00193118])
    t = compare.compare_pairs(pa, pb)
    assert not bool(t.loc[0, "changed"])
    pc = pa.assign(angular_distortion_checked=[0.00193317])
    assert bool(compare.compare_pairs(pa, pc).loc[0, "changed"])


def test_hostile_ids_stay_text_on_the_page_and_the_terminal(runs, tmp_path):
    root, a, _ = runs
    edited = tmp_path / "hostile"
    shutil.copytree(a, edited)
    evil = "<script>alert(1)</script>\u202e"
    for name in ("footings.csv", "pairs.csv"):
        p = edited / name
        text = p.read_text(encoding="utf-8")
        p.write_text(re.sub(r"(?m)(^|,)A1,", lambda m: f"{m.group(1)}{evil},", text), "utf-8")
    out = tmp_path / "c"
    rc, stdout, err = run("compare", a, edited, "--out", out)
    assert rc in (0, 1), err
    html = (out / "comparison.html").read_text(encoding="utf-8")
    assert "<script" not in html and "&lt;script&gt;" in html
    assert "\u202e" not in stdout  # escaped for the terminal (sitesettle.io.text)
    info = json.loads((out / "comparison.json").read_text(encoding="utf-8"))
    assert info["added"]["footings"] == [evil] and info["removed"]["footings"] == ["A1"]


def test_write_results_keeps_its_signature():
    import inspect

    from sitesettle.io.output import write_folder, write_results

    params = list(inspect.signature(write_results).parameters)
    assert params == [
        "results",
        "out_dir",
        "units",
        "progress",
        "section",
        "on_wait",
        "extra_files",
    ]
    assert list(inspect.signature(write_folder).parameters) == [
        "out_dir",
        "fill",
        "marker",
        "what",
        "on_wait",
    ]
