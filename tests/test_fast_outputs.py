"""The outputs built fast give what the simple loops gave (issue 18, outputs side).

Each fast builder is checked against the plain row-by-row or cell-by-cell code it
replaced, kept here as the reference, on random input (hypothesis). The reference
is the project's own earlier code, so these tests pin "no change of content"; the
content itself is checked against outside sources by the report and output tests.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from sitesettle import report
from sitesettle.report import _Q, _column_table, _e, _num, _table, _trace_cell, _trace_cells

# ----------------------------------------------------------------- references


def _reference_df_rows(text: pd.DataFrame, status):
    """The rows and row classes as report._df_table made them before (iterrows)."""
    rows, classes = [], []
    for _, r in text.iterrows():
        cells = []
        for c in text.columns:
            v = r[c]
            if c == "status":
                cells.append(
                    f"<span class='{_e(v) if v in ('pass', 'fail') else ''}'>{_e(v)}</span>"
                )
            elif isinstance(v, (bool, np.bool_)):
                cells.append("yes" if v else "no")
            else:
                cells.append(_e(v))
        rows.append(cells)
        st_ = r.get("status") if status is None else status.iloc[len(classes)]
        classes.append("fail" if st_ == "fail" else "")
    return rows, classes


def _reference_trace_cells(q, col, rows, key, qty, dec):
    """A trace column cell by cell, as report._trace_table made it before."""
    out = []
    for r in rows:
        v = col[r]
        if dec is None:
            out.append(_e(v))
        elif qty:
            d = 4 if (qty == "settlement" and q.us) else dec
            out.append(q.v(v, qty, d if not (q.us and qty == "pressure") else 3))
        elif key == "primary strain":
            out.append(_num(v, "{:.4e}"))
        else:
            out.append(_num(v, f"{{:.{dec}f}}"))
    return out


# ----------------------------------------------------------------- strategies

_text = st.text(alphabet=st.characters(codec="utf-8", exclude_categories=("Cs",)), max_size=8)
_floats = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True, width=64),
    st.floats(min_value=-1e6, max_value=1e6),
    st.sampled_from([0.0, -0.0, 0.05, 0.15, 2.5, 1e-9, 123456.789]),
    st.sampled_from([math.nan, math.inf, -math.inf]),  # drawn rarely by st.floats alone
)


@settings(max_examples=150, deadline=None)
@given(
    header=st.lists(_text, min_size=1, max_size=5),
    data=st.data(),
    numeric=st.sets(st.integers(0, 4)),
    classes=st.booleans(),
)
def test_column_table_is_the_row_table(header, data, numeric, classes):
    n = data.draw(st.integers(0, 6))
    rows = [[data.draw(_text) for _ in header] for _ in range(n)]
    cls = [data.draw(st.sampled_from(["", "fail", "x"])) for _ in range(n)] if classes else None
    columns = [[r[j] for r in rows] for j in range(len(header))]
    assert _column_table(header, columns, row_classes=cls, numeric=numeric) == _table(
        header, rows, row_classes=cls, numeric=numeric
    )


@settings(max_examples=200, deadline=None)
@given(
    values=st.lists(_floats, min_size=1, max_size=12),
    spec=st.sampled_from(
        [s for s in report._GRANULAR_TRACE + report._CLAY_TRACE if s[3] is not None]
    ),
    units=st.sampled_from(["si", "us"]),
    as_int=st.booleans(),
    data=st.data(),
)
def test_trace_cells_numeric_match_the_cell_loop(values, spec, units, as_int, data):
    _, key, qty, dec = spec
    col = np.asarray(values, float)
    if as_int:
        col = np.nan_to_num(col, nan=0.0, posinf=0.0, neginf=0.0).clip(-1e9, 1e9).astype(int)
    rows = np.asarray(data.draw(st.lists(st.integers(0, len(values) - 1), max_size=12)), int)
    q = _Q(units)
    assert _trace_cells(q, col, rows, key, qty, dec) == _reference_trace_cells(
        q, col, rows, key, qty, dec
    )


@settings(max_examples=100, deadline=None)
@given(
    values=st.lists(
        st.one_of(_text, st.booleans(), st.integers(-5, 5), _floats, st.none()),
        min_size=1,
        max_size=10,
    ),
    dec=st.sampled_from([None, 2, 3]),
    units=st.sampled_from(["si", "us"]),
)
def test_trace_cells_text_and_objects_match_the_cell_loop(values, dec, units):
    col = np.array(values, dtype=object)
    rows = np.arange(len(values))
    q = _Q(units)
    for key, qty in (("stratum", ""), ("C1", ""), ("top", "length"), ("primary strain", "")):
        if dec is None or qty or key != "stratum":
            assert _trace_cells(q, col, rows, key, qty, dec) == [
                _trace_cell(q, v, key, qty, dec) for v in col
            ]


@settings(max_examples=60, deadline=None)
@given(
    ids=st.lists(_text, min_size=0, max_size=6),
    data=st.data(),
    with_status=st.sampled_from(["column", "series", "none"]),
)
def test_df_table_matches_the_row_loop(ids, data, with_status):
    n = len(ids)
    df = pd.DataFrame(
        {
            "id": ids,
            "total_mm": data.draw(st.lists(_floats, min_size=n, max_size=n)),
            "span_m": data.draw(st.lists(_floats, min_size=n, max_size=n)),
            "count": data.draw(st.lists(st.integers(-3, 3), min_size=n, max_size=n)),
            "rigid": data.draw(st.lists(st.booleans(), min_size=n, max_size=n)),
            "angular_distortion": data.draw(st.lists(_floats, min_size=n, max_size=n)),
            "utilisation": data.draw(st.lists(_floats, min_size=n, max_size=n)),
        }
    )
    states = data.draw(st.lists(st.sampled_from(["pass", "fail", "n/a"]), min_size=n, max_size=n))
    status = None
    if with_status == "column":
        df["status"] = states
    elif with_status == "series":
        status = pd.Series(states, index=df.index + 7)  # positional, as the report takes it
    got = report._df_table(df, status=status)
    # the reference: the same text table, then the old row loop
    from sitesettle.io.output import format_table
    from sitesettle.io.summary import ratio_text

    text = format_table(df)
    text["total_mm"] = [f"{v:.1f}" if np.isfinite(v) else "" for v in df["total_mm"]]
    text["angular_distortion"] = [ratio_text(v) for v in df["angular_distortion"]]
    text["utilisation"] = [f"{v:.2f}" if math.isfinite(v) else "" for v in df["utilisation"]]
    rows, classes = _reference_df_rows(text, status)
    numeric = {j for j, c in enumerate(df.columns) if str(df[c].dtype).startswith(("float", "int"))}
    want = _table(
        [_e(report._header(c)) for c in text.columns], rows, row_classes=classes, numeric=numeric
    )
    assert got == want


# ------------------------------------------------------------------------ DXF


def _ezdxf_site_dxf(results, path, units="si", fixed_classes=True):
    """site.dxf made with ezdxf's entity objects and ``saveas`` (the earlier writer), its
    CLASS definitions in the fixed order of :func:`sitesettle.io.cad._fixed_class_order`
    (ezdxf alone orders two of them by the hash seed)."""
    import ezdxf

    from sitesettle.io import cad, output

    u = output._units(units)
    L = output._scale("length", u)
    drawing = ezdxf.new("R2013", setup=False)
    drawing.header["$INSUNITS"] = cad.INSUNITS[u]
    for name, colour in cad.LAYERS.items():
        drawing.layers.add(name, color=colour)
    msp = drawing.modelspace()
    h = cad._text_height(results) * L

    def label(text, x, y, layer):
        msp.add_text(text, height=h, dxfattribs={"layer": layer}).set_placement(
            (x, y), align=ezdxf.enums.TextEntityAlignment.MIDDLE_CENTER
        )

    for f in results.site.footings:
        if f.shape == "circle":
            msp.add_circle((f.x * L, f.y * L), f.width / 2.0 * L, dxfattribs={"layer": "FOOTINGS"})
        else:
            pts = [(float(a) * L, float(b) * L) for a, b in np.asarray(f.outline, float)]
            msp.add_lwpolyline(pts, close=True, dxfattribs={"layer": "FOOTINGS"})
        label(f.id, f.x * L, f.y * L, "FOOTINGS")
    pt = output.pair_table(results, u)
    xy = {m: (p[0] * L, p[1] * L) for m, p in zip(results.member_ids, results.member_xy)}
    for a, b, status in zip(pt["a"], pt["b"], pt["status"]):
        msp.add_line(
            xy[a], xy[b], dxfattribs={"layer": "PAIRS", "color": cad.PAIR_COLOURS.get(status, 8)}
        )
    ct = output.contour_table(results, u)
    level_col = output.column("level", "settlement", u)
    unit = output.UNITS["settlement"][u].suffix
    for level, geom in zip(ct[level_col], ct.geometry):
        coords = np.asarray(geom.coords, float) * L
        if len(coords) < 2:
            continue
        line = msp.add_lwpolyline(
            [(float(a), float(b)) for a, b in coords], dxfattribs={"layer": "CONTOURS"}
        )
        line.dxf.elevation = float(level)
        mid = coords[len(coords) // 2]
        label(f"{level:g} {unit}", float(mid[0]), float(mid[1]), "CONTOURS")
    for p in results.site.points:
        msp.add_point((p.x * L, p.y * L), dxfattribs={"layer": "POINTS"})
        label(p.id, p.x * L, p.y * L + h, "POINTS")
    if fixed_classes:
        cad._fixed_class_order(drawing)
    drawing.saveas(path)


@pytest.fixture
def fixed_dxf_dates(monkeypatch):
    """ezdxf's fixed dates and GUIDs (its option for tests), so two saves can be compared."""
    import ezdxf

    monkeypatch.setattr(ezdxf.options, "write_fixed_meta_data_for_testing", True)


@pytest.mark.parametrize("units", ["si", "us"])
def test_site_dxf_is_the_file_ezdxf_saves(tmp_path, fixed_dxf_dates, units):
    from _factories import make_results

    from sitesettle.io import cad

    results = make_results(ids=["C1", "C$2", "C 3^", "Ø4", "<b>", "C6"])
    cad.write_dxf(results, tmp_path / "fast.dxf", units)
    _ezdxf_site_dxf(results, tmp_path / "ezdxf.dxf", units)
    fast, slow = (tmp_path / "fast.dxf").read_bytes(), (tmp_path / "ezdxf.dxf").read_bytes()
    assert fast == slow
    # the fixed order is an order of the same class definitions ezdxf writes alone
    _ezdxf_site_dxf(results, tmp_path / "plain.dxf", units, fixed_classes=False)
    plain = (tmp_path / "plain.dxf").read_bytes()
    assert len(plain) == len(fast) and _classes(plain) == _classes(fast)


def _classes(dxf: bytes) -> list[bytes]:
    """The CLASS definitions of a DXF file, sorted."""
    start = dxf.index(b"CLASSES\n")
    section = dxf[start : dxf.index(b"  0\nENDSEC", start)]
    return sorted(section.split(b"  0\nCLASS\n"))


_coord = st.one_of(
    st.floats(min_value=-1e7, max_value=1e7, allow_nan=False),
    st.sampled_from([0.0, -0.0, 1e-300, 0.1, 123456.789012]),
)


@settings(max_examples=60, deadline=None)
@given(
    texts=st.lists(st.text(max_size=12), min_size=1, max_size=4),
    xy=st.lists(st.tuples(_coord, _coord), min_size=1, max_size=6),
    r=st.floats(min_value=1e-6, max_value=1e4),
    h=st.floats(min_value=0.01, max_value=20),
    elevation=st.one_of(_coord, st.just(0.0)),
    colour=st.sampled_from([1, 3, 8, 256]),
)
def test_direct_dxf_entities_are_the_tags_ezdxf_writes(texts, xy, r, h, elevation, colour):
    """Each entity kind of site.dxf, written directly and by ezdxf, with the same handles."""
    import io

    import ezdxf
    from ezdxf.lldxf.tagwriter import TagWriter

    from sitesettle.io.cad import _Entities

    doc = ezdxf.new("R2013", setup=False)
    msp = doc.modelspace()
    mine = _Entities(doc.entitydb.handles.copy(), msp.block_record_handle)
    (x0, y0) = xy[0]
    msp.add_circle((x0, y0), r, dxfattribs={"layer": "A"})
    mine.circle("A", x0, y0, r)
    msp.add_lwpolyline(xy, close=True, dxfattribs={"layer": "A"})
    mine.lwpolyline("A", np.array(xy), closed=True)
    line = msp.add_lwpolyline(xy, dxfattribs={"layer": "B"})
    line.dxf.elevation = elevation
    mine.lwpolyline("B", np.array(xy), closed=False, elevation=elevation)
    msp.add_line(xy[0], xy[-1], dxfattribs={"layer": "P", "color": colour})
    mine.line("P", xy[0], xy[-1], colour)
    msp.add_point((x0, y0), dxfattribs={"layer": "Q"})
    mine.point("Q", x0, y0)
    for t in texts:
        msp.add_text(t, height=h, dxfattribs={"layer": "T"}).set_placement(
            (x0, y0), align=ezdxf.enums.TextEntityAlignment.MIDDLE_CENTER
        )
        mine.text("T", t, x0, y0, h)
    stream = io.StringIO()
    writer = TagWriter(stream, dxfversion=doc.dxfversion)
    for e in msp:
        e.export_dxf(writer)
    assert mine.getvalue() == stream.getvalue()


# -------------------------------------------------------------------- figures


def _pixels(png: bytes) -> np.ndarray:
    import io

    from PIL import Image

    return np.asarray(Image.open(io.BytesIO(png)))


@pytest.fixture(scope="module")
def drawn():
    from _factories import make_results, make_section

    results = make_results(ids=["C1", "C$2", "C3", "C4", "C5", "C6"])
    return results, make_section(results)


def test_one_draw_saving_gives_the_pixels_of_savefig(drawn):
    """The layout run once at the saving resolution, then one draw: savefig's own pixels."""
    import io

    from sitesettle.io import output

    results, section = drawn
    for name in output.figure_names(section):
        slow = io.BytesIO()
        fig = _figure(name, results, section)
        fig.savefig(slow, format="png", dpi=output.FIGURE_DPI)  # layout engine on: two draws
        import matplotlib.pyplot as plt

        plt.close(fig)
        fast = output.figure_png(name, results, section=section)
        a, b = _pixels(slow.getvalue()), _pixels(fast)
        assert a.shape == b.shape and (a == b).all(), name


def _figure(name, results, section):
    from sitesettle import plots

    if name == "plan":
        return plots.plan(results).figure
    if name == "contours":
        return plots.contours(results).figure
    if name == "settlement_time":
        ax1, ax2 = plots.history_axes()
        return plots.history(results, ax=ax1, pair_ax=ax2).figure
    return plots.section(section, site=results.site).figure


def _reaped(pids) -> bool:
    import os

    for pid in pids:
        try:
            os.waitpid(pid, os.WNOHANG)
        except ChildProcessError:
            continue
        return False  # still our child: not reaped
    return True


@pytest.mark.parametrize("workers", [0, 1, 2])
def test_figures_from_workers_are_the_figures_drawn_here(drawn, workers):
    from sitesettle.io import figure_workers, output

    results, section = drawn
    here = output.make_figures(results, section=section)
    with figure_workers.rendering(results, section=section, workers=workers) as job:
        got = job.result()
    assert len(job.pids) == min(workers, 4) and _reaped(job.pids)
    assert list(got) == list(here) and got == here


def test_a_worker_that_dies_is_replaced_by_drawing_here(drawn, monkeypatch):
    import os

    from sitesettle.io import figure_workers, output

    results, section = drawn
    parent = os.getpid()
    real = output.figure_png

    def dies_in_a_worker(name, *a, **k):
        if os.getpid() != parent:
            os._exit(3)
        return real(name, *a, **k)

    monkeypatch.setattr(output, "figure_png", dies_in_a_worker)
    with figure_workers.rendering(results, section=section, workers=2) as job:
        got = job.result()
    assert len(job.pids) == 2 and _reaped(job.pids)
    assert got == {n: real(n, results, section=section) for n in output.figure_names(section)}


def test_a_silent_worker_is_killed_and_its_figures_drawn_here(drawn, monkeypatch):
    import os
    import time

    from sitesettle.io import figure_workers, output

    results, section = drawn
    parent = os.getpid()
    real = output.figure_png

    def hangs_in_a_worker(name, *a, **k):
        if os.getpid() != parent:
            time.sleep(60)
        return real(name, *a, **k)

    monkeypatch.setattr(output, "figure_png", hangs_in_a_worker)
    monkeypatch.setattr(figure_workers, "SILENCE_LIMIT", 1.0)
    t = time.monotonic()
    with figure_workers.rendering(results, section=section, workers=1) as job:
        got = job.result()
    assert time.monotonic() - t < 30 and _reaped(job.pids)
    assert set(got) == set(output.figure_names(section))


def test_an_error_while_writing_reaps_the_workers_and_leaves_no_folder(
    drawn, monkeypatch, tmp_path
):
    from sitesettle.io import figure_workers, output

    results, section = drawn
    started = []
    real_start = figure_workers.FigureJob._start

    def spy(self, names):
        real_start(self, names)
        started.extend(self.pids[-1:])

    def broken_dxf(*a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(figure_workers.FigureJob, "_start", spy)
    monkeypatch.setattr(figure_workers, "usable_cores", lambda: 2)
    import sitesettle.io.cad as cad

    monkeypatch.setattr(cad, "write_dxf", broken_dxf)
    with pytest.raises(OSError, match="No space"):
        output.write_results(results, tmp_path / "out", section=section)
    assert started and _reaped(started)
    assert not (tmp_path / "out").exists() and [p.name for p in tmp_path.iterdir()] == []


def test_figure_shares_balance_the_drawing():
    from sitesettle.io.figure_workers import shares

    names = ["plan", "contours", "settlement_time", "section"]
    assert shares(names, 1) == [["plan", "contours", "settlement_time", "section"]]
    two = shares(names, 2)
    assert sorted(sum(two, [])) == sorted(names) and len(two) == 2
    assert {frozenset(s) for s in two} == {
        frozenset({"plan", "settlement_time"}),  # weights 3 + 2 against 3 + 1
        frozenset({"contours", "section"}),
    }
    assert len(shares(names[:1], 2)) == 1  # no empty share


@pytest.mark.parametrize("units", ["si", "us"])
def test_the_report_filled_in_after_the_figures_is_the_report_with_them(drawn, monkeypatch, units):
    from sitesettle.io import output
    from sitesettle.report import render_report

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1800000000")  # the same run date twice
    results, section = drawn
    figures = {n: bytes([k]) * (50 + k) for k, n in enumerate(output.figure_names(section))}
    page, marked = output._report_with_markers(results, list(figures), units)
    whole = render_report(results, figures, units=units, page="letter" if units == "us" else "A4")
    assert isinstance(page, list) and len(page) > 3  # pieces, written one by one
    assert "".join(output._fill_markers(page, marked, figures)) == whole


@pytest.mark.parametrize("cores, most, expected", [(1, 2, 0), (2, 2, 2), (8, 2, 2), (8, 1, 1)])
def test_workers_by_usable_cores(drawn, monkeypatch, cores, most, expected):
    """One core: everything drawn here; two or more: up to MAX_WORKERS workers."""
    from sitesettle.io import figure_workers

    results, section = drawn
    monkeypatch.setattr(figure_workers, "usable_cores", lambda: cores)
    monkeypatch.setattr(figure_workers, "MAX_WORKERS", most)
    with figure_workers.rendering(results, section=section) as job:
        assert len(job.pids) == expected
        got = job.result()
    assert len(got) == 4 and _reaped(job.pids)


_SIGNAL_AT_FORK = r"""
import os, signal, sys
sys.path.insert(0, sys.argv[1])
from _factories import make_results
from sitesettle.io import figure_workers

class Stop(Exception):
    pass

def stop(signum, frame):
    raise Stop()

results = make_results(ids=["C1", "C2", "C3", "C4", "C5", "C6"])
signal.signal(signal.SIGTERM, stop)
# another thread, as in a run (the stress engine's pool): the kernel may hand it a signal
# that the main thread blocks, and Python then runs the handler in the main thread
import threading, time
threading.Thread(target=lambda: [time.sleep(0.001) for _ in range(100000)], daemon=True).start()
# the signal comes while the parent forks (from its at-fork hooks): the window in which
# an exception from a handler, run in a hook, is printed and dropped by Python
os.register_at_fork(**{sys.argv[2]: lambda: os.kill(os.getpid(), signal.SIGTERM)})
try:
    with figure_workers.rendering(results, workers=2) as job:
        job.result()
except Stop:
    sys.exit(7)
sys.exit(0)
"""


@pytest.mark.skipif(not hasattr(__import__("os"), "fork"), reason="fork() is POSIX")
@pytest.mark.parametrize("hook", ["before", "after_in_parent"])
def test_a_signal_during_fork_ends_the_run(hook):
    """SIGTERM arriving in the at-fork window is handled, not dropped (it was: the run
    went on and ended with exit 0, seen in CI as an interrupted check exiting 0)."""
    import pathlib
    import subprocess
    import sys

    here = pathlib.Path(__file__).resolve().parent
    done = subprocess.run(
        [sys.executable, "-c", _SIGNAL_AT_FORK, str(here), hook],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert done.returncode == 7, done.stderr
    assert "Exception ignored" not in done.stderr
