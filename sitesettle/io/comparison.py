"""Comparing two results folders: strict reading, the comparison folder, the terminal text.

:func:`compare_folders` reads two results folders written by ``sitesettle check`` (or
``size``) and returns a :class:`Comparison` of DataFrames (the arithmetic is
:mod:`sitesettle.compare`); :func:`write_comparison` writes the comparison folder
atomically, as results are written (:func:`sitesettle.io.output.write_folder`, its
marker being ``comparison.json``); :func:`format_comparison` is the terminal text of
``sitesettle compare``.

Reading is strict: a missing folder, a missing or garbled ``summary.json``,
``footings.csv`` or ``pairs.csv`` (or ``lines.csv`` when there is one), or two folders
written in different units raise :class:`~sitesettle.errors.InputError` naming the file
(and the row and column) and what is expected, before anything is written. Different
criteria or another basis (design life, checked time, load history …) are no error:
they are reported as warnings, because comparing under another criteria set is a
purpose of the command.
"""

from __future__ import annotations

import io
import json
import math
import os
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from sitesettle import compare as cmp
from sitesettle.errors import InputError

#: the marker file of a comparison folder (``"program": "sitesettle"``)
MARKER = "comparison.json"
#: every file write_comparison makes (lines_compared.csv only when a run has lines)
COMPARISON_FILES = (
    "footings_compared.csv",
    "pairs_compared.csv",
    "lines_compared.csv",
    "basis_compared.csv",
    "comparison.json",
    "comparison.html",
)
#: statuses a results folder writes
STATUSES = ("pass", "fail", "beyond range", "unchecked")
#: rows of each table shown in the terminal by default
TOP = 10
#: the widest terminal line [columns]
WIDTH = 100
#: regressions listed in the terminal before "… and N more"
MAX_LISTED = 20

_EXPECT_FOLDER = "a results folder written by sitesettle check or sitesettle size"
_UNIT_WORDS = {"mm": "mm", "in": "inches", "m": "metres", "ft": "feet"}


@dataclass(frozen=True)
class _Folder:
    """One results folder as read: its summary and tables, and the units of its columns."""

    path: Path
    summary: dict
    footings: pd.DataFrame
    pairs: pd.DataFrame
    lines: pd.DataFrame | None
    settlement: str
    length: str
    outlines: dict = field(default_factory=dict)


@dataclass(frozen=True)
class Comparison:
    """What changed from results folder A to results folder B.

    Every difference is B − A. Column names carry their units (``total_a_mm``,
    ``total_b_mm``, ``total_delta_mm``; ``_in`` and ``_ft`` for folders written in US
    units); the tables are sorted with the checks that got worse first, then by the
    size of the change (docs/outputs.md, *Comparison folder*).

    Attributes
    ----------
    a, b : pathlib.Path
        The two results folders.
    units : {"si", "us"}
        The units both folders are written in.
    footings : pandas.DataFrame
        Footing by footing: sizes, kinds, total, own and neighbours' settlement at
        the design life [mm or in] of A and B and their differences, statuses,
        ``change`` and ``regression`` (:func:`sitesettle.compare.compare_footings`).
    pairs : pandas.DataFrame
        Pair by pair (matched by the two ids in either order): differential
        settlement [mm or in] and checked angular distortion [-] of A and B and
        their differences, statuses (:func:`sitesettle.compare.compare_pairs`).
    lines : pandas.DataFrame
        Structure line and strip by line (empty when neither folder has any).
    basis : pandas.DataFrame
        The basis of A and B side by side (criteria, limits, design life [yr],
        checked time [yr], load history, what-if changes and sizes …).
    warnings : tuple of str
        One line for each basis that differs (the numbers are then held to
        different things).
    counts : dict
        Counts, regressions, improvements and the largest changes
        (:func:`sitesettle.compare.tally`).
    """

    a: Path
    b: Path
    units: str
    footings: pd.DataFrame
    pairs: pd.DataFrame
    lines: pd.DataFrame
    basis: pd.DataFrame
    warnings: tuple[str, ...]
    counts: dict
    settlement: str = "mm"
    length: str = "m"
    outlines: dict = field(default_factory=dict, repr=False)
    design_life: tuple = (None, None)

    @property
    def n_regressions(self) -> int:
        """How many checks that A passed B fails."""
        return int(self.counts["n_regressions"])

    def summary(self) -> dict:
        """The content of comparison.json."""
        return comparison_dict(self)


# ------------------------------------------------------------------ reading


def _where(path: Path) -> str:
    return str(path)


def _read_json(path: Path) -> dict:
    from sitesettle.io.files import read_bytes

    if not path.exists():
        raise InputError(
            _where(path),
            f"missing: {path.parent} is not a results folder",
            f"the summary.json of {_EXPECT_FOLDER}",
        )
    raw = read_bytes(path, "summary file")
    try:
        data = json.loads(raw.decode("utf-8"))
    except UnicodeDecodeError:
        raise InputError(
            _where(path), "is not UTF-8 text", "the summary.json sitesettle writes"
        ) from None
    except json.JSONDecodeError as exc:
        raise InputError(
            _where(path),
            f"is not valid JSON ({exc.msg} at line {exc.lineno}, column {exc.colno})",
            "the summary.json sitesettle writes",
        ) from None
    if not isinstance(data, dict) or data.get("program") != "sitesettle":
        raise InputError(
            _where(path),
            'does not say "program": "sitesettle"',
            f"the summary.json of {_EXPECT_FOLDER}",
        )
    if data.get("units") not in ("si", "us"):
        raise InputError(
            f'{_where(path)}, key "units"',
            f"is {data.get('units')!r}",
            '"si" or "us"',
        )
    return data


def _read_csv(path: Path, what: str, *, required: bool = True) -> pd.DataFrame | None:
    from sitesettle.io.files import read_bytes

    if not path.exists():
        if not required:
            return None
        raise InputError(
            _where(path),
            f"missing: {path.parent} has no {path.name}",
            f"the {path.name} of {_EXPECT_FOLDER}",
        )
    raw = read_bytes(path, what)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError(
            _where(path), "is not UTF-8 text", f"the {path.name} sitesettle writes"
        ) from None
    body = "".join(line for line in text.splitlines(keepends=True) if not line.startswith("#"))
    if not body.strip():
        raise InputError(_where(path), "is empty", f"the {path.name} sitesettle writes (a header)")
    try:
        return pd.read_csv(io.StringIO(body), dtype=str, keep_default_na=False, na_filter=False)
    except (pd.errors.ParserError, ValueError) as exc:
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise InputError(
            _where(path), f"cannot be read as CSV ({first})", f"the {path.name} sitesettle writes"
        ) from None


def _unit_of(df: pd.DataFrame, path: Path, bases: tuple[str, ...], units: tuple[str, ...]) -> str:
    """The unit suffix of the columns ``base_unit`` (one of ``units``) in ``df``."""
    for u in units:
        if f"{bases[0]}_{u}" in df.columns:
            return u
    raise InputError(
        _where(path),
        f"has no column {' or '.join(f'{bases[0]}_{u}' for u in units)}",
        f"the columns of {path.name} as sitesettle writes them (docs/outputs.md)",
    )


def _numbers(df: pd.DataFrame, path: Path, names: list[str]) -> pd.DataFrame:
    """``names`` converted to floats (empty cells: NaN); a cell that is no number is an error."""
    out = df.copy()
    for name in names:
        if name not in out.columns:
            continue
        text = out[name].astype(str).str.strip()
        values = pd.to_numeric(text.where(text != "", None), errors="coerce")
        bad = values.isna() & (text != "")
        if bad.any():
            k = int(np.flatnonzero(bad.to_numpy())[0])
            raise InputError(
                f'{_where(path)} row {k + 2}, column "{name}"',
                f"{text.iloc[k]!r} is not a number",
                "a number, or an empty cell",
            )
        out[name] = values.astype(float)
    return out


def _require(df: pd.DataFrame, path: Path, names: list[str]) -> None:
    lack = [n for n in names if n not in df.columns]
    if lack:
        raise InputError(
            _where(path),
            f"has no column {', '.join(repr(n) for n in lack)}",
            f"the columns of {path.name} as sitesettle writes them (docs/outputs.md)",
        )


def _statuses(df: pd.DataFrame, path: Path) -> None:
    bad = ~df["status"].isin(STATUSES)
    if bad.any():
        k = int(np.flatnonzero(bad.to_numpy())[0])
        raise InputError(
            f'{_where(path)} row {k + 2}, column "status"',
            f"{df['status'].iloc[k]!r} is not a status",
            " or ".join(f'"{s}"' for s in STATUSES),
        )


def _unique(key: pd.Series, path: Path, what: str) -> None:
    empty = key == ""
    if empty.any():
        k = int(np.flatnonzero(empty.to_numpy())[0])
        raise InputError(f"{_where(path)} row {k + 2}", f"the {what} is empty", f"a {what}")
    dup = key.duplicated()
    if dup.any():
        k = int(np.flatnonzero(dup.to_numpy())[0])
        raise InputError(
            f"{_where(path)} row {k + 2}",
            f"the {what} {key.iloc[k]!r} appears a second time",
            f"one row per {what}",
        )


_FOOTING_NUMBERS = ("x", "y", "width", "length", "total", "own", "neighbours", "total_limit")


def read_results_folder(path: str | os.PathLike, label: str = "results") -> _Folder:
    """Read one results folder strictly (see the module notes); raise InputError if unusable.

    Parameters
    ----------
    path : path
        A results folder written by ``sitesettle check`` or ``size``.
    label : str, optional
        How the messages name it (``"A"``, ``"B"``).
    """
    folder = Path(path)
    if not folder.exists():
        raise InputError(f"results folder {label} ({folder})", "does not exist", _EXPECT_FOLDER)
    if not folder.is_dir():
        raise InputError(
            f"results folder {label} ({folder})", "is a file, not a folder", _EXPECT_FOLDER
        )
    summary = _read_json(folder / "summary.json")
    fpath = folder / "footings.csv"
    footings = _read_csv(fpath, "footings table")
    S = _unit_of(footings, fpath, ("total",), ("mm", "in"))
    L = _unit_of(footings, fpath, ("x",), ("m", "ft"))
    expected = "in" if summary["units"] == "us" else "mm"
    if S != expected:
        raise InputError(
            _where(fpath),
            f"is written in {_UNIT_WORDS[S]} (column total_{S}) but summary.json says units "
            f"{summary['units']!r}",
            "the footings.csv and summary.json of one run",
        )
    _require(footings, fpath, ["id", f"x_{L}", f"y_{L}", f"width_{L}", f"length_{L}", "status"])
    footings = _numbers(
        footings,
        fpath,
        [f"{b}_{L}" for b in ("x", "y", "width", "length")]
        + [f"{b}_{S}" for b in ("total", "own", "neighbours", "total_limit")],
    )
    _unique(footings["id"], fpath, "footing id")
    _statuses(footings, fpath)

    ppath = folder / "pairs.csv"
    pairs = _read_csv(ppath, "pairs table")
    _require(pairs, ppath, ["a", "b", f"differential_{S}", "status"])
    if "angular_distortion_checked" not in pairs.columns:
        _require(pairs, ppath, ["angular_distortion"])
    pairs = _numbers(
        pairs,
        ppath,
        [
            f"span_{L}",
            f"differential_{S}",
            "angular_distortion",
            "angular_distortion_checked",
            "utilisation",
        ],
    )
    _unique(
        pd.Series([cmp.pair_key(x, y) for x, y in zip(pairs["a"], pairs["b"])], dtype=object),
        ppath,
        "pair",
    )
    _statuses(pairs, ppath)

    lpath = folder / "lines.csv"
    lines = _read_csv(lpath, "lines table", required=False)
    if lines is not None:
        _require(lines, lpath, ["line", f"relative_deflection_{S}", "status"])
        lines = _numbers(
            lines,
            lpath,
            [
                f"length_{L}",
                f"relative_deflection_{S}",
                "deflection_ratio",
                "angular_distortion",
                "utilisation",
            ],
        )
        _unique(pd.Series([cmp.line_key(x) for x in lines["line"]], dtype=object), lpath, "line")
        _statuses(lines, lpath)
    return _Folder(folder, summary, footings, pairs, lines, S, L, _outlines(folder, footings, L))


def _outlines(folder: Path, footings: pd.DataFrame, L: str) -> dict:
    """Footing outlines for the map: site.gpkg's layer ``footings`` when it can be read,
    else an axis-aligned rectangle of width × length at each centre."""
    out = {}
    for fid, x, y, w, ln in zip(
        footings["id"],
        footings[f"x_{L}"],
        footings[f"y_{L}"],
        footings[f"width_{L}"],
        footings[f"length_{L}"],
    ):
        if all(math.isfinite(v) for v in (x, y, w, ln)):
            out[str(fid)] = np.array(
                [
                    [x - ln / 2, y - w / 2],
                    [x + ln / 2, y - w / 2],
                    [x + ln / 2, y + w / 2],
                    [x - ln / 2, y + w / 2],
                ]
            )
    gpkg = folder / "site.gpkg"
    if not gpkg.is_file():
        return out
    try:
        import pyogrio

        from sitesettle.io.files import check_gis_content, check_input_file, disable_gdal_network

        check_input_file(gpkg, "GeoPackage")
        check_gis_content(gpkg, "GeoPackage")
        disable_gdal_network()
        layer = pyogrio.read_dataframe(gpkg, layer="footings", columns=["id"])
        for fid, geom in zip(layer["id"], layer.geometry):
            if geom is not None and geom.geom_type == "Polygon":
                out[str(fid)] = np.asarray(geom.exterior.coords, float)
    except Exception:  # noqa: BLE001 - the outlines are a drawing aid; the rectangles stay
        pass
    return out


# --------------------------------------------------------------- comparing


def compare_folders(a: str | os.PathLike, b: str | os.PathLike) -> Comparison:
    """Compare two results folders: what changed from A to B, footing by footing and pair by pair.

    Parameters
    ----------
    a : path
        The reference results folder (written by ``sitesettle check`` or ``size``).
    b : path
        The results folder compared with it; every difference is B − A.

    Returns
    -------
    Comparison
        The compared tables as DataFrames, with units in the column names (mm and m,
        or in and ft as the folders were written), the basis side by side, the
        basis warnings and the counts.

    Raises
    ------
    InputError
        A folder is missing or is not a results folder, one of its files is missing
        or garbled (the message names the file, row and column), or the two folders
        are written in different units.

    Notes
    -----
    With the demo checked and sized (docs/sizing.md)::

        c = compare_folders("demo_site/results", "demo_site/sized")
        c.footings[["id", "total_a_mm", "total_b_mm", "total_delta_mm"]].head()
    """
    fa = read_results_folder(a, "A")
    fb = read_results_folder(b, "B")
    if (fa.settlement, fa.length) != (fb.settlement, fb.length):
        raise InputError(
            f"{fb.path / 'footings.csv'}",
            f"the two results are written in different units: A ({fa.path}) in "
            f"{_UNIT_WORDS[fa.settlement]} and {_UNIT_WORDS[fa.length]} (total_{fa.settlement}), "
            f"B in {_UNIT_WORDS[fb.settlement]} and {_UNIT_WORDS[fb.length]} "
            f"(total_{fb.settlement})",
            "two results folders written in the same units (sitesettle check --units si or us)",
        )
    S, L = fa.settlement, fa.length
    kw = {"settlement": S, "length": L}
    footings = cmp.compare_footings(fa.footings, fb.footings, **kw)
    pairs = cmp.compare_pairs(fa.pairs, fb.pairs, **kw)
    lines = (
        cmp.compare_lines(fa.lines, fb.lines, **kw)
        if fa.lines is not None or fb.lines is not None
        else cmp.compare_lines(None, None, **kw).iloc[0:0]
    )
    basis, warnings = cmp.compare_basis(fa.summary, fb.summary, settlement=S)
    counts = cmp.tally(footings, pairs, lines, settlement=S)
    outlines = {**fa.outlines, **fb.outlines}
    return Comparison(
        a=fa.path,
        b=fb.path,
        units=fa.summary["units"],
        footings=footings,
        pairs=pairs,
        lines=lines,
        basis=basis,
        warnings=tuple(warnings),
        counts=counts,
        settlement=S,
        length=L,
        outlines=outlines,
        design_life=(fa.summary.get("design_life_yr"), fb.summary.get("design_life_yr")),
    )


def default_out(a: str | os.PathLike, b: str | os.PathLike) -> Path:
    """The default comparison folder: ``B/compare_to_<name of A>``."""
    name = Path(os.path.abspath(a)).name or "A"
    return Path(b) / f"compare_to_{name}"


# ----------------------------------------------------------------- writing


def comparison_dict(c: Comparison) -> dict:
    """comparison.json: the two folders, units, basis warnings, counts, regressions,
    improvements and the largest changes."""
    import sitesettle
    from sitesettle.report import CAUTIONS

    k = c.counts
    tables = {"footings": k["footings"], "pairs": k["pairs"]}
    if k["lines"] is not None:
        tables["lines"] = k["lines"]
    numbers = ("in_a", "in_b", "changed", "worse", "better")
    counts = {}
    for name, t in tables.items():
        counts[name] = {n: t[n] for n in numbers}
        counts[name].update(
            added=len(t["added"]),
            removed=len(t["removed"]),
            regressions=len(t["regressions"]),
            improvements=len(t["improvements"]),
        )
    for flag in ("size_changed", "kind_changed", "moved"):
        counts["footings"][flag] = len(k["footings"][flag])
    return {
        "program": "sitesettle",
        "kind": "comparison",
        "version": sitesettle.__version__,
        "a": str(c.a),
        "b": str(c.b),
        "units": c.units,
        "difference": "B - A",
        "basis_differs": list(c.warnings),
        "no_change": bool(k["no_change"]),
        "n_regressions": c.n_regressions,
        "counts": counts,
        "regressions": {n: t["regressions"] for n, t in tables.items()},
        "improvements": {n: t["improvements"] for n, t in tables.items()},
        "added": {n: t["added"] for n, t in tables.items()},
        "removed": {n: t["removed"] for n, t in tables.items()},
        "failing_added": {n: t["failing_added"] for n, t in tables.items()},
        "resized_footings": k["footings"]["size_changed"],
        "kind_changed_footings": k["footings"]["kind_changed"],
        "moved_footings": k["footings"]["moved"],
        "largest_changes": k["largest"],
        "cautions": list(CAUTIONS),
    }


def _csv_bytes(df: pd.DataFrame) -> bytes:
    from sitesettle.io.output import format_table, spreadsheet_safe

    out = df.copy()
    for name in out.columns:  # true/false as the results folders write them
        if out[name].dtype == bool:
            out[name] = np.where(out[name], "true", "false")
    return format_table(spreadsheet_safe(out)).to_csv(index=False, lineterminator="\n").encode()


def comparison_files(c: Comparison) -> dict[str, bytes]:
    """Every file of the comparison folder, name → bytes (lines_compared.csv only with lines)."""
    from sitesettle import plots
    from sitesettle.compare_report import render_comparison
    from sitesettle.io.output import _figure_bytes

    files = {
        "footings_compared.csv": _csv_bytes(c.footings),
        "pairs_compared.csv": _csv_bytes(c.pairs),
    }
    if len(c.lines):
        files["lines_compared.csv"] = _csv_bytes(c.lines)
    files["basis_compared.csv"] = _csv_bytes(c.basis)
    files[MARKER] = (
        json.dumps(
            comparison_dict(c), indent=2, sort_keys=True, ensure_ascii=False, allow_nan=False
        )
        + "\n"
    ).encode()
    png = _figure_bytes(
        plots.difference_map(
            c.footings, c.pairs, c.outlines, settlement=c.settlement, length=c.length
        ).figure
    )
    files["comparison.html"] = render_comparison(c, png).encode("utf-8")
    return files


def write_comparison(
    c: Comparison,
    out_dir: str | os.PathLike,
    *,
    on_wait: Callable[[str], None] | None = None,
) -> Path:
    """Write the comparison folder atomically (as results folders are written).

    Parameters
    ----------
    c : Comparison
        What :func:`compare_folders` returned.
    out_dir : path
        The comparison folder; it may exist if it is empty or an earlier comparison
        folder (its comparison.json says ``"program": "sitesettle"``), and is then
        replaced as a whole. A results folder or a folder of someone else's is refused.
    on_wait : callable, optional
        Called with a message when another run holds the folder's lock.

    Returns
    -------
    pathlib.Path
        The folder written.
    """
    from sitesettle.io.output import write_folder

    files = comparison_files(c)  # everything made before the folder is touched

    def fill(tmp: Path) -> None:
        for name, content in files.items():
            (tmp / name).write_bytes(content)

    return write_folder(out_dir, fill, marker=MARKER, what="the comparison", on_wait=on_wait)


# ----------------------------------------------------------------- terminal


def _short(text: str, n: int) -> str:
    text = str(text)
    return text if len(text) <= n else text[: n - 1] + "…"


def _size(w: float, ln: float) -> str:
    if not (math.isfinite(w) and math.isfinite(ln)):
        return "–"
    return f"{w:.2f}×{ln:.2f}"


def _num(v: float, d: int, sign: bool = False) -> str:
    """``v`` to ``d`` decimals; with ``sign`` a + or − unless it rounds to zero."""
    if not math.isfinite(v):
        return "–"
    if sign and round(v, d) != 0:
        return f"{v:+.{d}f}"
    return f"{abs(v) if round(v, d) == 0 else v:.{d}f}"


def _ratio(v: float) -> str:
    from sitesettle.io.summary import ratio_text

    return ratio_text(v) if math.isfinite(v) else "–"


def _status(row) -> str:
    if row["presence"] != "both":
        return row["presence"]
    return row["status_change"] or row["status_b"]


def _ids(names: list, n: int = 8) -> str:
    text = [n_ if isinstance(n_, str) else "–".join(n_) for n_ in names]
    more = f", … ({len(text) - n} more)" if len(text) > n else ""
    return ", ".join(text[:n]) + more


def format_comparison(c: Comparison, *, top: int = TOP) -> list[str]:
    """The terminal text of ``sitesettle compare``: every line at most 100 columns.

    A header with the two folders, the basis differences, the counts, the ``top``
    largest changes of footings and pairs (and lines), and every regression.
    """
    from sitesettle.io.summary import fit
    from sitesettle.io.text import terminal_line

    S, L = c.settlement, c.length
    d = 2 if S == "in" else 1
    k = c.counts
    fk, pk, lk = k["footings"], k["pairs"], k["lines"]
    la, lb = c.design_life
    out = [
        "sitesettle compare — differences are B − A",
        f"  A: {terminal_line(str(c.a))}",
        f"  B: {terminal_line(str(c.b))}",
        f"  settlements in {_UNIT_WORDS[S]}, sizes in {_UNIT_WORDS[L]}; totals at the design "
        + (
            f"life (A {la:g} yr, B {lb:g} yr)"
            if isinstance(la, (int, float)) and isinstance(lb, (int, float))
            else "life"
        ),
    ]
    for w in c.warnings:
        out.append(f"warning: {terminal_line(w)}")
    over = c.basis[c.basis["item"].str.startswith("what-if")]
    if len(over) and not bool(over["same"].iloc[0]):

        def n_changes(text: str) -> str:
            return "none" if text == "none" else f"{len(text.split('; '))}"

        out.append(
            f"what-if changes and sizes: A {n_changes(over['a'].iloc[0])}, "
            f"B {n_changes(over['b'].iloc[0])} (basis_compared.csv lists them)"
        )
    out.append("")
    if k["no_change"]:
        out.append("No change: every footing, pair and line is the same in A and B.")
    out.append(
        f"footings: {fk['in_a']} in A, {fk['in_b']} in B; {len(fk['added'])} added, "
        f"{len(fk['removed'])} removed, {len(fk['size_changed'])} resized, "
        f"{len(fk['kind_changed'])} of another kind, {len(fk['moved'])} moved; "
        f"{fk['changed']} changed; status {fk['worse']} worse, {fk['better']} better"
    )
    out.append(
        f"pairs: {pk['in_a']} in A, {pk['in_b']} in B; {len(pk['added'])} added, "
        f"{len(pk['removed'])} removed; {pk['changed']} changed; status {pk['worse']} worse, "
        f"{pk['better']} better"
    )
    if lk is not None:
        out.append(
            f"structure lines and strips: {lk['in_a']} in A, {lk['in_b']} in B; "
            f"{lk['changed']} changed; status {lk['worse']} worse, {lk['better']} better"
        )
    for name, t in (("footings", fk), ("pairs", pk), ("lines", lk)):
        if t is not None and t["added"]:
            out.append(f"  {name} only in B (added): {_ids(t['added'])}")
        if t is not None and t["removed"]:
            out.append(f"  {name} only in A (removed): {_ids(t['removed'])}")
        if t is not None and t["improvements"]:
            out.append(f"  {name} that got better: {_ids(t['improvements'])}")
        if t is not None and t["failing_added"]:
            out.append(f"  added {name} that fail in B: {_ids(t['failing_added'])}")

    if not k["no_change"] and top > 0:
        f = c.footings
        shown = f[f["changed"]].head(top)
        if len(shown):
            out.append("")
            out.append(f"Largest changes of footings (total at the design life, {S}):")
            out.append(
                f"  {'footing':<12} {'size A':>11}  {'size B':>11} {'total A':>8} "
                f"{'total B':>8} {'Δ':>8}  status"
            )
            for _, r in shown.iterrows():
                out.append(
                    f"  {_short(terminal_line(r['id']), 12):<12} "
                    f"{_size(r[f'width_a_{L}'], r[f'length_a_{L}']):>11}  "
                    f"{_size(r[f'width_b_{L}'], r[f'length_b_{L}']):>11} "
                    f"{_num(r[f'total_a_{S}'], d):>8} {_num(r[f'total_b_{S}'], d):>8} "
                    f"{_num(r[f'total_delta_{S}'], d, True):>8}  {_status(r)}"
                )
            rest = int(f["changed"].sum())
            if rest > len(shown):
                out.append(f"  … {rest - len(shown)} more in footings_compared.csv")
        p = c.pairs
        changed = p["changed"]
        shown = p[changed].head(top)
        if len(shown):
            basis = p["basis_b"].where(p["basis_b"] != "", p["basis_a"])
            words = basis.iloc[0] if len(basis) else "total"
            out.append("")
            out.append(f"Largest changes of pairs (checked β and differential, {words}):")
            out.append(
                f"  {'pair':<17} {'β A':>9} {'β B':>9} {'Δβ':>10} {'diff A':>8} {'diff B':>8} "
                f"{'Δ':>7}  status"
            )
            for _, r in shown.iterrows():
                name = _short(terminal_line(f"{r['a']}–{r['b']}"), 17)
                db = r["angular_distortion_checked_delta"]
                out.append(
                    f"  {name:<17} {_ratio(r['angular_distortion_checked_a']):>9} "
                    f"{_ratio(r['angular_distortion_checked_b']):>9} "
                    f"{(f'{db:+.2e}' if math.isfinite(db) else '–'):>10} "
                    f"{_num(r[f'differential_a_{S}'], d):>8} "
                    f"{_num(r[f'differential_b_{S}'], d):>8} "
                    f"{_num(r[f'differential_delta_{S}'], d, True):>7}  {_status(r)}"
                )
            if int(changed.sum()) > len(shown):
                out.append(f"  … {int(changed.sum()) - len(shown)} more in pairs_compared.csv")
    out.append("")
    if c.n_regressions:
        out.append(f"REGRESSIONS: {c.n_regressions} check(s) that A passed fail in B:")
        listed = 0
        f = c.footings[c.footings["regression"]]
        for _, r in f.iterrows():
            if listed < MAX_LISTED:
                out.append(
                    f"  footing {terminal_line(r['id'])}: total {_num(r[f'total_a_{S}'], d)} → "
                    f"{_num(r[f'total_b_{S}'], d)} {S}, {r['status_change']}"
                    + (f" ({terminal_line(r['reasons_b'])})" if r["reasons_b"] else "")
                )
            listed += 1
        for _, r in c.pairs[c.pairs["regression"]].iterrows():
            if listed < MAX_LISTED:
                out.append(
                    f"  pair {terminal_line(r['a'])}–{terminal_line(r['b'])}: β "
                    f"{_ratio(r['angular_distortion_checked_a'])} → "
                    f"{_ratio(r['angular_distortion_checked_b'])}, differential "
                    f"{_num(r[f'differential_a_{S}'], d)} → {_num(r[f'differential_b_{S}'], d)} "
                    f"{S}, {r['status_change']} ({terminal_line(r['limit_b'])})"
                )
            listed += 1
        if len(c.lines):
            for _, r in c.lines[c.lines["regression"]].iterrows():
                if listed < MAX_LISTED:
                    out.append(
                        f"  line {terminal_line(r['line'])}: {r['status_change']} "
                        f"({terminal_line(r['limit_b'])})"
                    )
                listed += 1
        if listed > MAX_LISTED:
            out.append(f"  … and {listed - MAX_LISTED} more (comparison.json, regressions)")
    else:
        out.append("No regressions: B fails no check that A passed.")
    return fit(out, WIDTH)
