"""Vectorised steps of the analysis pipeline against the simple per-item loops they replace.

Each replacement must give the same numbers, bit for bit, as the loop it replaced
(issue 18: speed and memory only, results unchanged); the loops are kept, or
written out here, as the reference.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from sitesettle import columns as colmod


def _loop_edges(base, scale, fraction, top, bottom, boundaries):
    """The per-column loop that integrate ran before (column_edges, one column at a time)."""
    rows, tops, bots = [], [], []
    for r in range(len(base)):
        b = boundaries[r][np.isfinite(boundaries[r])]
        tpl = colmod.regular_edges(base[r], scale[r], fraction, colmod.MAX_INTEGRATION_DEPTH)
        e = colmod.column_edges(base[r], scale[r], fraction, top[r], bottom[r], b, tpl)
        rows.append(np.full(len(e) - 1, r))
        tops.append(e[:-1])
        bots.append(e[1:])
    return np.concatenate(rows), np.concatenate(tops), np.concatenate(bots)


@st.composite
def _columns(draw):
    m = draw(st.integers(1, 12))
    bases = draw(st.lists(st.sampled_from([0.0, 0.5, 1.2, 2.0]), min_size=m, max_size=m))
    scales = draw(st.lists(st.sampled_from([0.6, 1.5, 2.25, 4.0, 30.0]), min_size=m, max_size=m))
    fraction = draw(st.sampled_from([0.05, 0.1, 0.25]))
    top, bottom, bnd = [], [], []
    nb = draw(st.integers(0, 6))
    for r in range(m):
        z0 = bases[r] + draw(st.sampled_from([0.0, 0.0, 3.0, 17.5]))
        z1 = z0 + draw(st.floats(0.01, 300.0))
        top.append(z0)
        bottom.append(z1)
        row = draw(
            st.lists(
                st.one_of(
                    st.floats(0.0, 400.0),
                    st.sampled_from([np.inf, np.nan, z0, z1, z0 + 1e-4, 5.0, 5.0]),
                ),
                min_size=nb,
                max_size=nb,
            )
        )
        bnd.append(row)
    return (
        np.array(bases),
        np.array(scales),
        fraction,
        np.array(top),
        np.array(bottom),
        np.array(bnd, dtype=float).reshape(m, nb),
    )


@settings(max_examples=150, deadline=None)
@given(_columns())
def test_many_column_edges_is_the_column_loop(case):
    """The sublayers of all columns at once equal column_edges column by column, exactly."""
    base, scale, fraction, top, bottom, bnd = case
    want = _loop_edges(base, scale, fraction, top, bottom, bnd)
    got = colmod.many_column_edges(base, scale, fraction, top, bottom, bnd, {})
    for w, g in zip(want, got):
        assert w.shape == g.shape
        assert np.array_equal(w, g)


def test_many_column_edges_splits_and_merges():
    """A case with a sliver next to a boundary and a thick first sublayer to split
    (the rules of column_edges: slivers under a quarter of the first sublayer merged,
    no sublayer thicker than 15 % of its depth, at least 0.05 m)."""
    base = np.array([1.0, 1.0])
    scale = np.array([2.0, 40.0])
    bnd = np.array([[3.0001, 8.0], [2.0, np.nan]])
    row, top, bot = colmod.many_column_edges(
        base, scale, 0.1, np.array([1.0, 1.0]), np.array([10.0, 12.0]), bnd, {}
    )
    assert np.all(bot > top)
    assert np.all(bot - top <= np.maximum(colmod.DEPTH_FRACTION * top, 0.05) * (1 + 1e-12))
    near = top[(row == 0) & (np.abs(top - 3.0001) < colmod.MIN_SUBLAYER)]
    assert near.tolist() == [3.0001]  # the regular edge at 3.0 merged into the boundary
    assert np.array_equal(np.unique(row), [0, 1])
