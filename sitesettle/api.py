"""The public Python API: what ``import sitesettle`` offers a script or a notebook.

:func:`analyse` returns a :class:`Results`, the results dataclass of the model layer
(:class:`sitesettle.results.Results`, numpy arrays in core units) with methods that
give its tables as pandas DataFrames. The tables are built at the edge, in
:mod:`sitesettle.io.frames`, because the model layer is kept free of pandas; this
module is the thin wrapper that joins the two (a subclass with no fields of its own:
``dataclasses.replace`` keeps it, and every function that takes the core class takes
it too).
"""

from __future__ import annotations

import os
import shutil
from collections.abc import Callable
from importlib import resources
from pathlib import Path

from sitesettle import results as _results
from sitesettle.site import Site

#: folder of the demonstration project in a source checkout (beside the package)
_SOURCE_DEMO = Path(__file__).resolve().parents[1] / "demo_site"


class Results(_results.Results):
    """Settlements, traces, map and checks of one analysis, with its tables as DataFrames.

    Every field of :class:`sitesettle.results.Results` is here (arrays in core
    units: settlement [m] (n_footings, n_times), ``times`` [yr], ``tilt`` [rad],
    ``net_pressure`` [kPa] …; ``ids`` the footing ids in order, ``checks`` the
    movement checks). The methods below give the tables of the results folder as
    pandas DataFrames indexed by id, with the unit in every column name: SI by
    default (m, mm, kPa, kN), US customary units with ``units="us"`` (ft, in,
    ksf, kip). They are :mod:`sitesettle.io.frames`; the CSV files of
    :func:`write_results` are written from the same calls.

    Attributes
    ----------
    total, immediate, creep, consolidation, secondary, own, neighbours : ndarray
        (n_footings, n_times) settlement [m], positive downward.
    times : ndarray
        Report times [yr]; ``times[design_life_index]`` is the design life.
    tilt : ndarray
        (n_footings,) tilt at the design life [rad].
    net_pressure : ndarray
        (n_footings,) net service pressure on the base [kPa].
    checks : Checks or None
        Pairs, lines and footings against the criteria (differential [m], angular
        distortion [-]).

    Examples
    --------
    ``results.pairs().nlargest(5, "utilisation")`` is the table of the five most
    utilised pairs; ``results.history()["total_mm"].unstack("id")`` has one column
    of settlement against time per footing.
    """

    __slots__ = ()

    @classmethod
    def of(cls, results: _results.Results) -> Results:
        """The same results, as this class (no array is copied).

        Parameters
        ----------
        results : sitesettle.results.Results
            Results of the model layer (what :func:`sitesettle.analysis.analyse`
            returns).

        Returns
        -------
        Results
            ``results`` itself when it is already a :class:`Results` (the arrays
            keep their core units, m and kPa).
        """
        if isinstance(results, cls):
            return results
        return cls(**results.__dict__)

    def footings(self, units: str = "si"):
        """Footings at the design life, indexed by id (:func:`sitesettle.io.frames.footings`).

        Parameters
        ----------
        units : {"si", "us"}, optional
            Settlement in mm or in, lengths in m or ft, pressure in kPa or ksf, force in
            kN or kip.

        Returns
        -------
        pandas.DataFrame
            The columns of footings.csv (``total_mm``, ``own_mm``, ``q_net_kPa``,
            ``tilt`` [rad], ``status`` …).
        """
        from sitesettle.io import frames

        return frames.footings(self, units)

    def pairs(self, units: str = "si"):
        """Checked pairs, indexed by ``(a, b)`` (:func:`sitesettle.io.frames.pairs`).

        Parameters
        ----------
        units : {"si", "us"}, optional
            Span in m or ft, differential settlement in mm or in.

        Returns
        -------
        pandas.DataFrame
            The columns of pairs.csv (``span_m``, ``differential_mm``,
            ``angular_distortion`` [-], ``limit``, ``utilisation`` [-], ``status`` …).
        """
        from sitesettle.io import frames

        return frames.pairs(self, units)

    def lines(self, units: str = "si"):
        """Structure lines and strips, indexed by line (:func:`sitesettle.io.frames.lines`).

        Parameters
        ----------
        units : {"si", "us"}, optional
            Length in m or ft, relative deflection in mm or in.

        Returns
        -------
        pandas.DataFrame
            The columns of lines.csv (``length_m``, ``relative_deflection_mm``,
            ``deflection_ratio`` [-], ``utilisation`` [-], ``status`` …).
        """
        from sitesettle.io import frames

        return frames.lines(self, units)

    def history(self, units: str = "si"):
        """Every footing at every time, by ``(id, time_yr)`` (:func:`sitesettle.io.frames.history`).

        Parameters
        ----------
        units : {"si", "us"}, optional
            Settlement in mm or in.

        Returns
        -------
        pandas.DataFrame
            The columns of settlement_time.csv (``total_mm``, ``consolidation_mm`` …)
            at each time [yr].
        """
        from sitesettle.io import frames

        return frames.history(self, units)

    def query_points(self, units: str = "si"):
        """Query points at every time, by ``(id, time_yr)`` (:func:`.io.frames.query_points`).

        Parameters
        ----------
        units : {"si", "us"}, optional
            Lengths in m or ft, settlement in mm or in.

        Returns
        -------
        pandas.DataFrame
            The columns of points.csv (``x_m``, ``depth_m``, ``total_mm`` …); empty
            when the site has no query points (``results.points`` is then None).
        """
        from sitesettle.io import frames

        return frames.query_points(self, units)


def analyse(
    site: Site,
    *,
    progress: Callable[[str, float], None] | None = None,
    with_map: bool = True,
    with_checks: bool = True,
    on_warning: Callable[[str], None] | None = None,
) -> Results:
    """Settlement of every footing of ``site`` over time, with traces, map and checks.

    Parameters
    ----------
    site : Site
        The project in core units: from :func:`load_site`, or changed with
        :meth:`Site.with_footing` and :meth:`Site.with_stratum`.
    progress : callable, optional
        ``progress(stage, fraction)`` is called as the work advances (fraction 0–1).
    with_map : bool, optional
        Compute the settlement map on a plan grid (default True; False is faster
        when only the footings are wanted).
    with_checks : bool, optional
        Check totals, tilts, pairs and structure lines against the site's criteria
        (default True).
    on_warning : callable, optional
        ``on_warning(text)`` is called at once, before the work starts, when the plan
        is estimated to take more than 10 minutes or most of the memory available
        (the text is also among the results' warnings). A plan estimated to need more
        than twice the machine's memory is refused with
        ``sitesettle.budget.PlanTooLarge``, an ``InputError``.

    Returns
    -------
    Results
        Settlement of every footing at every report time and at the design life
        [m, positive downward], own and neighbours' parts, tilts [rad], traces, the
        map and the checks; ``results.footings()`` and the other methods give them
        as DataFrames with units in the column names.

    Notes
    -----
    The calculation is described in docs/methods.md: Boussinesq stresses of every
    footing superposed at every sublayer, Schmertmann, elastic or Burland &
    Burbidge settlement of granular strata, consolidation with Terzaghi's theory and
    secondary compression of clay.
    """
    from sitesettle.analysis import analyse as _analyse

    return Results.of(
        _analyse(
            site,
            progress=progress,
            with_map=with_map,
            with_checks=with_checks,
            on_warning=on_warning,
        )
    )


def write_results(
    results: _results.Results,
    folder: str | os.PathLike,
    *,
    units: str = "si",
    section: bool | object = True,
    progress: Callable[[str], None] | None = None,
) -> Path:
    """Write the results folder, atomically, as ``sitesettle check`` does.

    Every file is built in a temporary folder beside ``folder`` and renamed into
    place, so the folder is always complete: the new results or, after an error or
    Ctrl-C, the old ones untouched. An existing ``folder`` must be empty or an
    earlier results folder (it is replaced as a whole).

    Parameters
    ----------
    results : Results
        What :func:`analyse` returned.
    folder : str or path-like
        The results folder.
    units : {"si", "us"}, optional
        SI (m, mm, kPa, kN; default) or US customary units (ft, in, ksf, kip) in
        the tables, GeoPackage, figures and report.
    section : bool or sitesettle.mapping.Section, optional
        True (default): section.png through the worst pair, as the command line
        draws it; False: no section; or a section of your own.
    progress : callable, optional
        Called as ``progress(file_name)`` before each file is made.

    Returns
    -------
    pathlib.Path
        The results folder (absolute). Its files are listed in docs/outputs.md; their
        columns carry their units (``total_mm``, ``span_m`` or ``total_in``, ``span_ft``).

    Raises
    ------
    OutputError
        ``folder`` is an existing file, a folder that sitesettle did not write, or
        cannot be written; nothing is written then.
    """
    from sitesettle.io.output import write_results as _write

    if section is True:
        from sitesettle.analysis import worst_pair_section

        section = worst_pair_section(results)
    elif section is False:
        section = None
    return _write(results, folder, units=units, section=section, progress=progress)


def demo_site(copy_to: str | os.PathLike | None = None) -> Path:
    """The bundled demonstration project: an invented building beside a filled mill pond.

    Parameters
    ----------
    copy_to : str or path-like, optional
        Copy the project's files into this folder (created; it must not exist or
        be empty) and return it: the installed copy may be read-only, and
        ``sitesettle check`` writes its results inside the project folder.

    Returns
    -------
    pathlib.Path
        The project folder (holding ``site.toml``), for :func:`load_site`.

    Examples
    --------
    >>> import sitesettle
    >>> (sitesettle.demo_site() / "site.toml").is_file()
    True
    """
    packaged = resources.files("sitesettle") / "_demo"
    source = Path(str(packaged)) if packaged.joinpath("site.toml").is_file() else _SOURCE_DEMO
    if not (source / "site.toml").is_file():  # pragma: no cover - a broken install
        raise FileNotFoundError(
            "the demo project is not installed with this copy of sitesettle "
            f"(looked in {packaged} and {_SOURCE_DEMO})"
        )
    if copy_to is None:
        return source
    dest = Path(copy_to)
    if dest.exists() and (not dest.is_dir() or any(dest.iterdir())):
        from sitesettle.errors import OutputError

        raise OutputError(f"cannot copy the demo to {dest}: it exists and is not an empty folder")
    dest.mkdir(parents=True, exist_ok=True)
    for item in sorted(source.iterdir()):
        if item.is_file() and item.suffix in (".csv", ".toml", ".gpkg"):
            shutil.copyfile(item, dest / item.name)
    return dest
