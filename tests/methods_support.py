"""Shared check for the tests of sitesettle.methods: array forms and NaN propagation.

Every model function must give the same numbers on a scalar, a 1-D and a 2-D
array (broadcasting), and NaN in any numeric input must give NaN out at that
element only (STYLE.md, "Tests against the literature").
"""

from __future__ import annotations

import numpy as np


def _leaves(out):
    """The arrays of a result: an array, or the non-None fields of a tuple."""
    if isinstance(out, tuple):
        return [np.asarray(x) for x in out if x is not None]
    return [np.asarray(out)]


def check_array_forms(func, args, vary, kwargs=None):
    """Run ``func(*args)`` on scalars, 1-D and 2-D copies of ``args[i]`` (i in vary), and NaN.

    Returns the scalar result so that a caller may also check its value.
    """
    kwargs = kwargs or {}
    ref = _leaves(func(*args, **kwargs))
    for r in ref:
        assert r.ndim == 0, f"{func.__name__} on scalars returned shape {r.shape}"
    for shape in [(3,), (2, 3)]:
        arrays = [np.full(shape, a, dtype=float) if i in vary else a for i, a in enumerate(args)]
        out = _leaves(func(*arrays, **kwargs))
        for o, r in zip(out, ref):
            assert o.shape == shape, f"{func.__name__}: shape {o.shape}, expected {shape}"
            np.testing.assert_allclose(o, np.broadcast_to(r, shape), rtol=1e-14, atol=0)
    for i in vary:
        arrays = list(args)
        a = np.full(3, args[i], dtype=float)
        a[0] = np.nan
        arrays[i] = a
        out = _leaves(func(*arrays, **kwargs))
        for o, r in zip(out, ref):
            assert np.isnan(o[0]), f"{func.__name__}: NaN in argument {i} did not give NaN"
            np.testing.assert_allclose(o[1:], np.broadcast_to(r, (2,)), rtol=1e-14, atol=0)
    return func(*args, **kwargs)
