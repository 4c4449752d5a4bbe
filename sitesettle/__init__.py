"""sitesettle: settlement and movement checks for every shallow footing of a building plan.

Public API (:data:`__all__`)::

    site = sitesettle.load_site(sitesettle.demo_site())   # read and validate a project
    results = sitesettle.analyse(site)                     # settlements, traces, map, checks
    results.footings(); results.pairs()                    # DataFrames, units in the names
    wider = site.with_footing("F4", width=3.0, length=3.0) # a what-if copy of the site
    sitesettle.write_results(results, "results")          # the results folder, atomically
    sigma_z = sitesettle.stress.vertical_stress(loads, points)

Everything else is private by name (a leading underscore) or by module: the
modules under :mod:`sitesettle.io`, the engine's stages (:mod:`sitesettle.analysis`,
:mod:`sitesettle.columns`, :mod:`sitesettle.field`) and the figures may change
between versions.

Results support, and never replace, the judgement of a licensed engineer.
"""

from __future__ import annotations

__version__ = "0.1.0"

#: the public names; each has a numpydoc docstring with its units (tests/test_api.py)
__all__ = [
    "__version__",
    "load_site",
    "analyse",
    "write_results",
    "demo_site",
    "Results",
    "Site",
    "Footing",
    "Stratum",
    "stress",
    "size_footings",
    "SizingLimits",
]

_LAZY = {
    "load_site": ("sitesettle.io.project", "load_site"),
    "analyse": ("sitesettle.api", "analyse"),
    "write_results": ("sitesettle.api", "write_results"),
    "demo_site": ("sitesettle.api", "demo_site"),
    "Results": ("sitesettle.api", "Results"),
    "Site": ("sitesettle.site", "Site"),
    "Footing": ("sitesettle.site", "Footing"),
    "Stratum": ("sitesettle.site", "Stratum"),
    "size_footings": ("sitesettle.sizing", "size_footings"),
    "SizingLimits": ("sitesettle.sizing", "SizingLimits"),
}


def __getattr__(name: str):
    # lazy imports keep `import sitesettle` light and free of import cycles
    if name in _LAZY:
        import importlib

        module, attr = _LAZY[name]
        return getattr(importlib.import_module(module), attr)
    if name == "stress":
        import sitesettle.stress as stress

        return stress
    raise AttributeError(f"module 'sitesettle' has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | set(__all__))
