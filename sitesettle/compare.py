"""What changed between two results folders: footing by footing, pair by pair, line by line.

Pure functions on the tables of two results folders as pandas DataFrames, read as
the folders hold them (``footings.csv``, ``pairs.csv``, ``lines.csv``, the dict of
``summary.json``): no file is read or written here and no unit is converted. Reading
and writing is :mod:`sitesettle.io.comparison`; the command is ``sitesettle compare``.

Conventions of every table made here:

* ``A`` is the reference run, ``B`` the run compared with it; every difference is
  ``B − A`` (``total_delta_mm = total_b_mm − total_a_mm``), so a positive
  settlement difference means that B settles more.
* Column names carry their unit as the results folders do, the run letter before
  the unit: ``total_a_mm``, ``total_b_mm``, ``total_delta_mm``; ratios (angular
  distortion, deflection ratio, utilisation) have none. Differences of quantities
  written with fixed decimals are rounded to those decimals (the inputs have no more,
  so the rounding only removes floating-point noise); ratio differences are not
  rounded.
* ``presence`` is ``both``, ``added`` (only in B) or ``removed`` (only in A).
* ``change`` is ``worse`` or ``better`` when the status moved along
  pass → fail → beyond range, ``added`` or ``removed``, ``same`` otherwise
  (``unchecked`` compares with nothing). ``regression`` is a check that B fails and
  A passed (pass → fail or pass → beyond range); it is what makes ``sitesettle
  compare`` exit with code 1.
* ``changed`` says whether anything of the row differs: presence, status, size,
  kind or place, a non-zero difference of a quantity written with fixed decimals,
  or a ratio difference beyond the sixth significant figure the ratios are written
  with (:data:`RATIO_TOLERANCE`; a smaller one is the rounding of two writings of
  the same value).
* Rows are sorted with the status changes that got worse first, then by the size
  of the change, largest first (rows without a difference, added or removed, last);
  ties keep B's order, then A's.

Pairs are matched by their two ids whatever their order (A1–B1 is B1–A1); structure
lines by their footing ids in either direction.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd

#: status order from good to bad; "unchecked" has no place in it
STATUS_RANK = {"pass": 0, "fail": 1, "beyond range": 2}
#: statuses that fail a check
FAILING = ("fail", "beyond range")
#: decimals of the columns by unit suffix, as the results folders write them
#: (docs/outputs.md, "Reproducible")
UNIT_DECIMALS = {"mm": 3, "in": 4, "m": 3, "ft": 3, "kPa": 2, "ksf": 4, "kN": 1, "kip": 2}
#: the separator of the footing ids of a structure line in lines.csv
LINE_SEPARATOR = " → "


# ------------------------------------------------------------------- helpers


def _key_order(key_a: pd.Series, key_b: pd.Series) -> list:
    """B's keys in B's order, then the keys only A has in A's order."""
    in_b = set(key_b)
    return list(key_b) + [k for k in key_a if k not in in_b]


def _duplicates(key: pd.Series, what: str) -> None:
    dup = key[key.duplicated()]
    if len(dup):
        raise ValueError(f"{what} {dup.iloc[0]!r} appears more than once")


def _col(df: pd.DataFrame, name: str, numeric: bool) -> pd.Series:
    """A column of ``df`` (NaN or "" where the table lacks it)."""
    if name in df.columns:
        s = df[name]
        return pd.to_numeric(s, errors="coerce").astype(float) if numeric else s
    return pd.Series(np.nan if numeric else "", index=df.index, dtype=float if numeric else object)


def _text(s: pd.Series) -> pd.Series:
    return s.astype(object).where(s.notna(), "").astype(str)


def _delta(b: pd.Series, a: pd.Series, unit: str | None) -> np.ndarray:
    d = b.to_numpy(float) - a.to_numpy(float)
    if unit is not None and unit in UNIT_DECIMALS:
        d = np.round(d, UNIT_DECIMALS[unit]) + 0.0  # + 0.0: no "-0.000"
    return d


class _Joined:
    """Two tables aligned on a key: B's rows in order, then the rows only A has."""

    def __init__(self, a: pd.DataFrame, b: pd.DataFrame, key_a: pd.Series, key_b: pd.Series):
        self.keys = _key_order(key_a, key_b)
        self.a = a.set_axis(list(key_a), axis=0).reindex(self.keys)
        self.b = b.set_axis(list(key_b), axis=0).reindex(self.keys)
        idx = pd.Index(self.keys)
        in_a, in_b = idx.isin(list(key_a)), idx.isin(list(key_b))
        self.presence = np.where(in_a & in_b, "both", np.where(in_b, "added", "removed"))

    def numbers(self, out: dict, base: str, unit: str | None, *, delta: bool = True) -> None:
        """``base_a_unit``, ``base_b_unit`` (and ``base_delta_unit``) into ``out``."""
        name = base if unit is None else f"{base}_{unit}"
        sfx = "" if unit is None else f"_{unit}"
        va = _col(self.a, name, True)
        vb = _col(self.b, name, True)
        out[f"{base}_a{sfx}"] = va.to_numpy(float)
        out[f"{base}_b{sfx}"] = vb.to_numpy(float)
        if delta:
            out[f"{base}_delta{sfx}"] = _delta(vb, va, unit)

    def texts(self, out: dict, name: str) -> None:
        out[f"{name}_a"] = _text(_col(self.a, name, False)).to_numpy(object)
        out[f"{name}_b"] = _text(_col(self.b, name, False)).to_numpy(object)

    def first(self, name: str, numeric: bool) -> np.ndarray:
        """B's value, or A's where B lacks the row."""
        va, vb = _col(self.a, name, numeric), _col(self.b, name, numeric)
        return vb.where(pd.Series(self.presence != "removed", index=vb.index), va).to_numpy()


#: ratios are written to 6 significant figures, so two writings of one value differ
#: by less than 1e-5 of it: a smaller difference of a ratio is not a change
RATIO_TOLERANCE = 1e-5


def changed_column(out: dict, exact: tuple[str, ...], ratios: tuple[str, ...]) -> np.ndarray:
    """Whether each row changed: added or removed, a status change, a non-zero difference
    of a quantity with fixed decimals (``exact``: the ``*_delta_*`` columns), or a ratio
    difference (``ratios``: base names with ``_a``, ``_b``, ``_delta``) beyond
    :data:`RATIO_TOLERANCE` of the ratio, the precision it is written with."""
    m = np.asarray(out["presence"]) != "both"
    m = m | (np.asarray(out["status_change"]) != "")
    for name in exact:
        d = np.asarray(out[name], float)
        m |= np.isfinite(d) & (d != 0)
    for base in ratios:
        a, b = np.asarray(out[f"{base}_a"], float), np.asarray(out[f"{base}_b"], float)
        d = np.asarray(out[f"{base}_delta"], float)
        scale = np.fmax(np.abs(a), np.abs(b))
        with np.errstate(invalid="ignore"):
            m |= np.isfinite(d) & (np.abs(d) > RATIO_TOLERANCE * scale)
    return m


def status_columns(status_a, status_b, presence) -> dict[str, np.ndarray]:
    """``status_change`` (``"pass → fail"``, empty when equal), ``change`` and ``regression``.

    Parameters
    ----------
    status_a, status_b : array of str
        The statuses of A and B ("" where a run lacks the row).
    presence : array of str
        ``both``, ``added`` or ``removed`` for each row.

    Returns
    -------
    dict
        The three columns as arrays (see the module notes for their meaning).
    """
    sa = pd.Series(status_a, dtype=object).fillna("").astype(str)
    sb = pd.Series(status_b, dtype=object).fillna("").astype(str)
    pres = np.asarray(presence, dtype=object)
    both = pres == "both"
    ra = sa.map(STATUS_RANK).to_numpy(float)
    rb = sb.map(STATUS_RANK).to_numpy(float)
    with np.errstate(invalid="ignore"):
        worse, better = both & (rb > ra), both & (rb < ra)
    change = np.select(
        [pres == "added", pres == "removed", worse, better],
        ["added", "removed", "worse", "better"],
        "same",
    ).astype(object)
    moved = both & (sa.to_numpy() != sb.to_numpy())
    text = np.where(moved, sa.to_numpy() + LINE_SEPARATOR + sb.to_numpy(), "").astype(object)
    regression = both & (sa.to_numpy() == "pass") & sb.isin(FAILING).to_numpy()
    return {"status_change": text, "change": change, "regression": regression}


def sort_by_change(table: pd.DataFrame, magnitude: str) -> pd.DataFrame:
    """Rows that got worse first, then by ``|table[magnitude]|``, largest first.

    Rows without a value (added or removed) go last; ties keep their order.

    Parameters
    ----------
    table : pandas.DataFrame
        A compared table with a ``change`` column.
    magnitude : str
        The column whose absolute value orders the rows (a difference ``B − A``).

    Returns
    -------
    pandas.DataFrame
        The table reordered, with a fresh 0…n−1 index.
    """
    if not len(table):
        return table.reset_index(drop=True)
    worse = (table["change"] != "worse").astype(int).to_numpy()
    size = np.abs(table[magnitude].to_numpy(float))
    size = np.where(np.isfinite(size), size, -1.0)
    order = np.lexsort((np.arange(len(table)), -size, worse))
    return table.iloc[order].reset_index(drop=True)


# ------------------------------------------------------------------- tables


def compare_footings(
    a: pd.DataFrame, b: pd.DataFrame, *, settlement: str = "mm", length: str = "m"
) -> pd.DataFrame:
    """Footing by footing: size, kind, total settlement and status of A and B.

    Parameters
    ----------
    a, b : pandas.DataFrame
        The footings.csv tables of the two runs (``id``, ``x_m``, ``y_m``,
        ``width_m``, ``length_m``, ``kind``, ``total_mm``, ``own_mm``,
        ``neighbours_mm``, ``total_limit_mm``, ``status``; the unit suffixes as the
        arguments say). ``id`` is text.
    settlement : {"mm", "in"}, optional
        The settlement unit of the column names.
    length : {"m", "ft"}, optional
        The length unit of the column names.

    Returns
    -------
    pandas.DataFrame
        One row per footing of A or B: ``id``, ``presence``, ``x``/``y`` (B's, or A's
        for a removed footing), ``kind_a``, ``kind_b``, ``kind_changed``, ``width``
        and ``length`` of A and B, ``size_changed``, ``moved``, ``total``, ``own``
        and ``neighbours`` of A and B with their difference B − A
        (``total_delta_mm`` …), ``total_limit`` of A and B, ``status_a``,
        ``status_b``, ``status_change``, ``change``, ``regression`` and B's
        ``reasons``. Sorted by change (:func:`sort_by_change` on ``total_delta``).

    Raises
    ------
    ValueError
        A footing id appears twice in one table.
    """
    key_a, key_b = _text(a["id"]), _text(b["id"])
    _duplicates(key_a, "footing id")
    _duplicates(key_b, "footing id")
    j = _Joined(a, b, key_a, key_b)
    L, S = length, settlement
    out: dict = {"id": np.array(j.keys, dtype=object), "presence": j.presence}
    out[f"x_{L}"] = j.first(f"x_{L}", True).astype(float)
    out[f"y_{L}"] = j.first(f"y_{L}", True).astype(float)
    j.texts(out, "kind")
    both = j.presence == "both"
    out["kind_changed"] = both & (out["kind_a"] != out["kind_b"])
    j.numbers(out, "width", L, delta=False)
    j.numbers(out, "length", L, delta=False)
    out["size_changed"] = both & (
        (_delta(pd.Series(out[f"width_b_{L}"]), pd.Series(out[f"width_a_{L}"]), L) != 0)
        | (_delta(pd.Series(out[f"length_b_{L}"]), pd.Series(out[f"length_a_{L}"]), L) != 0)
    )
    dx = _delta(_col(j.b, f"x_{L}", True), _col(j.a, f"x_{L}", True), L)
    dy = _delta(_col(j.b, f"y_{L}", True), _col(j.a, f"y_{L}", True), L)
    out["moved"] = both & ((dx != 0) | (dy != 0))
    j.numbers(out, "total", S)
    j.numbers(out, "own", S)
    j.numbers(out, "neighbours", S)
    j.numbers(out, "total_limit", S, delta=False)
    j.texts(out, "status")
    out.update(status_columns(out["status_a"], out["status_b"], j.presence))
    out["changed"] = (
        changed_column(out, (f"total_delta_{S}", f"own_delta_{S}", f"neighbours_delta_{S}"), ())
        | out["size_changed"]
        | out["kind_changed"]
        | out["moved"]
    )
    out["reasons_b"] = _text(_col(j.b, "reasons", False)).to_numpy(object)
    return sort_by_change(pd.DataFrame(out), f"total_delta_{S}")


#: joins the ids of a key (ids never hold control characters: docs/input.md)
_KEY_JOIN = "\x1f"


def pair_key(a, b) -> str:
    """The order-free key of a pair: its two ids, sorted, as one string."""
    a, b = str(a), str(b)
    return _KEY_JOIN.join((a, b) if a <= b else (b, a))


def compare_pairs(
    a: pd.DataFrame, b: pd.DataFrame, *, settlement: str = "mm", length: str = "m"
) -> pd.DataFrame:
    """Pair by pair: differential settlement, checked angular distortion and status.

    Parameters
    ----------
    a, b : pandas.DataFrame
        The pairs.csv tables of the two runs (``a``, ``b``, ``span_m``,
        ``differential_mm``, ``angular_distortion_checked`` (or, in older folders,
        ``angular_distortion``), ``beta_basis``, ``basis``, ``limit``,
        ``utilisation``, ``status``). ``a`` and ``b`` are text.
    settlement, length : str, optional
        The units of the column names, as for :func:`compare_footings`.

    Returns
    -------
    pandas.DataFrame
        One row per pair of A or B, matched by its two ids in either order (B's
        order of the two): ``a``, ``b``, ``presence``, ``basis_a``, ``basis_b``
        (what the differential measures: "total" or "after 0.5 yr"), ``span``,
        ``differential`` and ``angular_distortion_checked`` of A and B with their
        difference B − A, ``beta_basis`` of A and B, ``utilisation`` of A and B and
        its difference, ``limit_a``, ``limit_b``, ``status_a``, ``status_b``,
        ``status_change``, ``change``, ``regression``. Sorted by change on
        ``angular_distortion_checked_delta``.

    Raises
    ------
    ValueError
        A pair appears twice in one table.
    """
    L, S = length, settlement

    def prepared(t: pd.DataFrame) -> tuple[pd.DataFrame, pd.Series]:
        t = t.copy()
        if "angular_distortion_checked" not in t.columns and "angular_distortion" in t.columns:
            t["angular_distortion_checked"] = t["angular_distortion"]
        keys = pd.Series(
            [pair_key(x, y) for x, y in zip(_text(t["a"]), _text(t["b"]))], dtype=object
        )
        return t, keys

    ta, key_a = prepared(a)
    tb, key_b = prepared(b)
    _duplicates(key_a, "pair")
    _duplicates(key_b, "pair")
    j = _Joined(ta, tb, key_a, key_b)
    out: dict = {
        "a": _text(pd.Series(j.first("a", False))).to_numpy(object),
        "b": _text(pd.Series(j.first("b", False))).to_numpy(object),
        "presence": j.presence,
    }
    j.texts(out, "basis")
    j.numbers(out, "span", L, delta=False)
    j.numbers(out, "differential", S)
    j.numbers(out, "angular_distortion_checked", None)
    j.texts(out, "beta_basis")
    j.numbers(out, "utilisation", None)
    j.texts(out, "limit")
    j.texts(out, "status")
    out.update(status_columns(out["status_a"], out["status_b"], j.presence))
    out["changed"] = changed_column(
        out, (f"differential_delta_{S}",), ("angular_distortion_checked", "utilisation")
    )
    return sort_by_change(pd.DataFrame(out), "angular_distortion_checked_delta")


def line_key(line: str) -> str:
    """The direction-free key of a structure line: its footing ids, the smaller way round."""
    ids = tuple(str(line).split(LINE_SEPARATOR))
    return _KEY_JOIN.join(min(ids, ids[::-1]))


def compare_lines(
    a: pd.DataFrame, b: pd.DataFrame, *, settlement: str = "mm", length: str = "m"
) -> pd.DataFrame:
    """Structure line by line (and strip by strip): relative deflection, ratios and status.

    Parameters
    ----------
    a, b : pandas.DataFrame
        The lines.csv tables of the two runs (``line``, ``kind``, ``length_m``,
        ``relative_deflection_mm``, ``deflection_ratio``, ``angular_distortion``,
        ``utilisation``, ``limit``, ``status``); an empty table for a run without
        lines.
    settlement, length : str, optional
        The units of the column names, as for :func:`compare_footings`.

    Returns
    -------
    pandas.DataFrame
        One row per line of A or B, matched by its footing ids in either direction:
        ``line``, ``kind``, ``presence``, ``length`` of A and B,
        ``relative_deflection``, ``deflection_ratio``, ``angular_distortion`` and
        ``utilisation`` of A and B with their differences, ``limit_a``, ``limit_b``,
        ``status_a``, ``status_b``, ``status_change``, ``change``, ``regression``.
        Sorted by change on ``relative_deflection_delta``.

    Raises
    ------
    ValueError
        A line appears twice in one table.
    """
    L, S = length, settlement
    empty = pd.DataFrame({"line": pd.Series(dtype=object)})
    ta = a if a is not None and "line" in a.columns else empty
    tb = b if b is not None and "line" in b.columns else empty
    key_a = pd.Series([line_key(x) for x in _text(ta["line"])], dtype=object)
    key_b = pd.Series([line_key(x) for x in _text(tb["line"])], dtype=object)
    _duplicates(key_a, "line")
    _duplicates(key_b, "line")
    j = _Joined(ta, tb, key_a, key_b)
    out: dict = {
        "line": _text(pd.Series(j.first("line", False), dtype=object)).to_numpy(object),
        "kind": _text(pd.Series(j.first("kind", False), dtype=object)).to_numpy(object),
        "presence": j.presence,
    }
    j.numbers(out, "length", L, delta=False)
    j.numbers(out, "relative_deflection", S)
    j.numbers(out, "deflection_ratio", None)
    j.numbers(out, "angular_distortion", None)
    j.numbers(out, "utilisation", None)
    j.texts(out, "limit")
    j.texts(out, "status")
    out.update(status_columns(out["status_a"], out["status_b"], j.presence))
    out["changed"] = changed_column(
        out,
        (f"relative_deflection_delta_{S}",),
        ("deflection_ratio", "angular_distortion", "utilisation"),
    )
    return sort_by_change(pd.DataFrame(out), f"relative_deflection_delta_{S}")


# -------------------------------------------------------------------- basis

#: the basis items of summary.json compared: (key, label, a difference is a basis warning)
BASIS_ITEMS: tuple[tuple[str, str, bool], ...] = (
    ("site", "site", True),
    ("units", "units", True),
    ("criteria", "criteria", True),
    ("criteria_sources", "criteria sources", True),
    ("footing_limit_total_{S}", "total-settlement limit of pads [{S}]", True),
    ("design_life_yr", "design life [yr]", True),
    ("checked_after_yr", "movement checked after [yr]", True),
    ("pair_basis", "basis of the pairs' differential", True),
    ("rigid_tilt", "β with the building's rigid-body tilt", True),
    ("building_tilt_limit", "limit of the building's tilt", True),
    ("stages", "load stages", True),
    ("area_loads", "area loads", True),
    ("overrides", "what-if changes (sizes …)", False),
    ("version", "sitesettle version", False),
    ("n_footings", "footings", False),
    ("n_pairs", "checked pairs", False),
    ("n_lines", "structure lines and strips", False),
    ("all_passed", "every check passes", False),
)


def basis_text(value) -> str:
    """A summary.json value as one line of text ("none" for null or absent)."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "none"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (list, tuple)):
        if not value:
            return "none"
        if all(isinstance(v, (str, int, float)) for v in value):
            return "; ".join(str(v) for v in value)
        return json.dumps(value, sort_keys=True, ensure_ascii=False)
    if isinstance(value, dict):
        return json.dumps(value, sort_keys=True, ensure_ascii=False)
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def compare_basis(a: dict, b: dict, *, settlement: str = "mm") -> tuple[pd.DataFrame, list[str]]:
    """The basis of A and B side by side, and a warning for each basis that differs.

    Parameters
    ----------
    a, b : dict
        The two summary.json dicts.
    settlement : {"mm", "in"}, optional
        The settlement unit of their keys.

    Returns
    -------
    basis : pandas.DataFrame
        ``item``, ``a``, ``b`` (as text), ``same`` (bool) and ``basis`` (True for the
        items that change what the numbers mean: criteria, limits, design life,
        checked time, load history …; False for what-if changes, version and counts).
    warnings : list of str
        One line per basis item that differs:
        ``"the basis differs: criteria: A eurocode7, B bjerrum_no_cracking"``.
    """
    rows, warnings = [], []
    for key, label, is_basis in BASIS_ITEMS:
        key, label = key.format(S=settlement), label.format(S=settlement)
        va, vb = basis_text(a.get(key)), basis_text(b.get(key))
        if key == "checked_after_yr":  # absent: the total is checked
            va = va if key in a else "none (total movement)"
            vb = vb if key in b else "none (total movement)"
        same = va == vb
        rows.append({"item": label, "a": va, "b": vb, "same": same, "basis": is_basis})
        if is_basis and not same:
            warnings.append(f"the basis differs: {label}: A {va}, B {vb}")
    return pd.DataFrame(rows), warnings


# ------------------------------------------------------------------- counts


def _largest(table: pd.DataFrame, magnitude: str, ids: tuple[str, ...], extra: tuple[str, ...]):
    if not len(table):
        return None
    size = np.abs(table[magnitude].to_numpy(float))
    if not np.isfinite(size).any() or np.nanmax(size) == 0:
        return None
    i = int(np.nanargmax(size))
    row = table.iloc[i]
    out = {k: str(row[k]) for k in ids}
    for k in (magnitude, *extra):
        v = float(row[k])
        out[k] = v if math.isfinite(v) else None
    out["status_change"] = str(row["status_change"])
    return out


def _tally_one(table: pd.DataFrame, ids: tuple[str, ...]) -> dict:
    def names(mask) -> list:
        rows = table[mask]
        if len(ids) == 1:
            return [str(v) for v in rows[ids[0]]]
        return [[str(r[k]) for k in ids] for _, r in rows.iterrows()]

    pres = table["presence"] if len(table) else pd.Series(dtype=object)
    changed = table["changed"].to_numpy(bool) if len(table) else np.zeros(0, bool)
    return {
        "in_a": int((pres != "added").sum()),
        "in_b": int((pres != "removed").sum()),
        "added": names(pres == "added"),
        "removed": names(pres == "removed"),
        "changed": int(changed.sum()),
        "worse": int((table["change"] == "worse").sum()) if len(table) else 0,
        "better": int((table["change"] == "better").sum()) if len(table) else 0,
        "regressions": names(table["regression"].astype(bool)) if len(table) else [],
        "improvements": names(table["change"] == "better") if len(table) else [],
        "failing_added": names((pres == "added") & table["status_b"].isin(FAILING))
        if len(table)
        else [],
    }


def tally(
    footings: pd.DataFrame,
    pairs: pd.DataFrame,
    lines: pd.DataFrame | None,
    *,
    settlement: str = "mm",
) -> dict:
    """Counts, regressions, improvements and the largest changes of the compared tables.

    Parameters
    ----------
    footings, pairs, lines : pandas.DataFrame
        What :func:`compare_footings`, :func:`compare_pairs` and :func:`compare_lines`
        returned (``lines`` may be None or empty).
    settlement : {"mm", "in"}, optional
        The settlement unit of the column names.

    Returns
    -------
    dict
        ``footings``, ``pairs`` and ``lines``: each with ``in_a``, ``in_b``,
        ``added``, ``removed`` (ids), ``changed`` (how many rows changed: the
        ``changed`` column, :func:`changed_column`), ``worse``, ``better``, ``regressions`` and
        ``improvements`` (ids: pass → fail, and status that got better),
        ``failing_added`` (added rows that fail in B); footings also
        ``size_changed``, ``kind_changed`` and ``moved`` (ids). ``largest``: the
        largest change of each table (its ids, its difference, None when nothing
        changed). ``n_regressions`` and ``no_change`` (nothing differs at all).
    """
    S = settlement
    lines = lines if lines is not None and len(lines) else None
    out = {
        "footings": _tally_one(footings, ("id",)),
        "pairs": _tally_one(pairs, ("a", "b")),
    }
    for flag in ("size_changed", "kind_changed", "moved"):
        out["footings"][flag] = [str(v) for v in footings.loc[footings[flag], "id"]]
    out["lines"] = _tally_one(lines, ("line",)) if lines is not None else None
    out["largest"] = {
        "footing": _largest(
            footings, f"total_delta_{S}", ("id",), (f"total_a_{S}", f"total_b_{S}")
        ),
        "pair": _largest(
            pairs,
            "angular_distortion_checked_delta",
            ("a", "b"),
            (
                "angular_distortion_checked_a",
                "angular_distortion_checked_b",
                f"differential_delta_{S}",
            ),
        ),
        "line": None
        if lines is None
        else _largest(
            lines,
            f"relative_deflection_delta_{S}",
            ("line",),
            (f"relative_deflection_a_{S}", f"relative_deflection_b_{S}"),
        ),
    }
    parts = [out["footings"], out["pairs"]] + ([out["lines"]] if out["lines"] else [])
    out["n_regressions"] = sum(len(p["regressions"]) for p in parts)
    out["no_change"] = all(
        p["changed"] == 0 and not p["added"] and not p["removed"] for p in parts
    ) and not (
        out["footings"]["size_changed"]
        or out["footings"]["kind_changed"]
        or out["footings"]["moved"]
    )
    return out
