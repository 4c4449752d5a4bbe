"""sitesettle: settlement and movement checks for every shallow footing of a building plan.

Public API::

    site = sitesettle.load_site("my_project")     # read and validate a project folder
    results = sitesettle.analyse(site)            # settlements, traces, map and checks
    sigma_z = sitesettle.stress.vertical_stress(loads, points)

Results support, and never replace, the judgement of a licensed engineer.
"""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__", "load_site", "analyse", "stress"]


def __getattr__(name: str):
    # lazy imports keep `import sitesettle` light and free of import cycles
    if name == "load_site":
        from sitesettle.io.project import load_site

        return load_site
    if name == "analyse":
        from sitesettle.analysis import analyse

        return analyse
    if name == "stress":
        import sitesettle.stress as stress

        return stress
    raise AttributeError(f"module 'sitesettle' has no attribute {name!r}")
