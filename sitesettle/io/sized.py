"""The edges of ``sitesettle size``: its options read with units, its files and its summary.

* :func:`limits_from_text` reads the step, the width range, the allowable bearing
  pressure and the thickness as quantities (``"0.1 m"``, ``"4 in"``, ``"200 kPa"``,
  ``"4 ksf"``; bare numbers in m and kPa);
* :func:`sized_footings_csv` is the footings file of the sized plan, in the input
  format of docs/input.md (SI units in the header), ready to replace the original;
* :func:`changes_csv` the table of changes, :func:`format_sizing` the lines printed.
"""

from __future__ import annotations

import csv
import io
import json
import textwrap

from sitesettle import units
from sitesettle.sizing import SizingLimits, SizingOutcome

#: the columns of the table of changes, in order
CHANGE_COLUMNS = (
    "id",
    "kind",
    "width_before_m",
    "length_before_m",
    "width_m",
    "length_m",
    "q_net_before_kPa",
    "q_net_kPa",
    "area_before_m2",
    "area_m2",
    "concrete_before_m3",
    "concrete_m3",
    "total_before_mm",
    "total_mm",
    "status_before",
    "status",
    "changed",
    "note",
)
_DECIMALS = {"m": 3, "kPa": 1, "m2": 3, "m3": 3, "mm": 1}


def limits_from_text(
    step=None, min_width=None, max_width=None, bearing_pressure=None, thickness=None,
    grow_only: bool = False,
) -> SizingLimits:
    """:class:`SizingLimits` from option texts (None: the default).

    Parameters
    ----------
    step, min_width, max_width, thickness : str or float, optional
        Lengths (``"0.1 m"``, ``"6 in"``; a bare number in m).
    bearing_pressure : str or float, optional
        Allowable net bearing pressure (``"200 kPa"``, ``"4 ksf"``; bare: kPa).
    grow_only : bool, optional
        Never make a footing smaller than given.

    Returns
    -------
    SizingLimits

    Raises
    ------
    InputError
        A value that is not a quantity of the right kind, or out of range; the
        message names the option.
    """
    kw = {}
    for name, value, dim in (
        ("step", step, "length"),
        ("min_width", min_width, "length"),
        ("max_width", max_width, "length"),
        ("thickness", thickness, "length"),
        ("bearing_pressure", bearing_pressure, "pressure"),
    ):
        if value is not None:
            kw[name] = units.parse(value, dim, f"--{name.replace('_', '-')}")
    return SizingLimits(**kw, grow_only=bool(grow_only))


def _text(rows: list[list], header: list[str], comments: list[str]) -> bytes:
    buf = io.StringIO()
    for c in comments:
        buf.write(f"# {c}\n")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    w.writerows(rows)
    return buf.getvalue().encode("utf-8")


def _num(x: float, d: int = 3) -> str:
    return f"{round(float(x), d):g}" if abs(x) < 1e6 else f"{x:.6g}"


def sized_footings_csv(outcome: SizingOutcome) -> bytes:
    """The sized plan's rectangles and circles as a footings CSV (docs/input.md).

    Every value in SI units named in the header; loads as forces [kN], so that a
    wider footing keeps its column load; ``kind`` written out, so that a pad
    sized to 6 m is still checked as a pad. Polygon footings are not resized and
    are not in the file: a comment names them (they stay in their own file).
    """
    site = outcome.site
    header = [
        "id",
        "shape",
        "x [m]",
        "y [m]",
        "width [m]",
        "length [m]",
        "rotation [deg]",
        "depth [m]",
        "dead_load [kN]",
        "live_load [kN]",
        "sustained_live_fraction",
        "rigid",
        "fill_unit_weight [kN/m^3]",
        "kind",
    ]
    kinds = {c["id"]: c["kind"] for c in outcome.changes}
    rows, polygons = [], []
    for f in site.footings:
        if f.shape == "polygon":
            polygons.append(f.id)
            continue
        circle = f.shape == "circle"
        rows.append(
            [
                f.id,
                f.shape,
                _num(f.x),
                _num(f.y),
                _num(f.width),
                "" if circle else _num(f.length),
                "" if circle else _num(f.rotation, 4),
                _num(f.depth),
                _num(f.dead_load, 2),
                _num(f.live_load, 2),
                _num(f.sustained_live_fraction, 4),
                "true" if f.rigid else "false",
                _num(f.fill_unit_weight, 3),
                kinds.get(f.id, f.kind),
            ]
        )
    changed = sum(1 for c in outcome.changes if c["changed"])
    comments = [
        f"Footings of {site.name} as sized by sitesettle size: {changed} of "
        f"{len(site.footings)} resized (sizing.csv lists the changes).",
        "Sizes meet the settlement and movement checks only; bearing resistance, "
        "structural design and detailing are checked separately.",
    ]
    if polygons:
        comments.append(
            "Polygon footings are not resized and are not in this file; they stay in their "
            "own file: " + ", ".join(polygons) + "."
        )
    return _text(rows, header, comments)


def changes_csv(outcome: SizingOutcome, limits: SizingLimits) -> bytes:
    """The table of changes: one row per footing, before and after."""
    rows = []
    for c in outcome.changes:
        row = []
        for col in CHANGE_COLUMNS:
            v = c[col]
            if isinstance(v, bool):
                row.append("true" if v else "false")
            elif isinstance(v, float):
                row.append(_num(v, _DECIMALS.get(col.rsplit("_", 1)[-1], 3)))
            else:
                row.append(v)
        rows.append(row)
    comments = [
        "Changes made by sitesettle size; totals at the design life, net pressures of the "
        "full service load; concrete = plan area × "
        f"{limits.thickness:g} m thickness (an assumption, --thickness).",
    ]
    if limits.grow_only:
        comments.append("--grow-only: no footing was made smaller than given.")
    return _text(rows, list(CHANGE_COLUMNS), comments)


def sizing_json(outcome: SizingOutcome, limits: SizingLimits) -> bytes:
    """How the sizing went: limits, rounds, convergence, what it cannot fix."""
    data = {
        "step_m": limits.step,
        "min_width_m": limits.min_width,
        "max_width_m": limits.max_width,
        "bearing_pressure_kPa": limits.bearing_pressure,
        "grow_only": limits.grow_only,
        "analyses": outcome.rounds,
        "converged": outcome.converged,
        "passed": outcome.passed,
        "sized_footings": list(outcome.sized),
        "resized": [c["id"] for c in outcome.changes if c["changed"]],
        "failing_by_analysis": [h[0] for h in outcome.history],
        "unresolved": [
            {
                "check": u.check,
                "footings": list(u.footings),
                "cause": u.cause,
                "passed_before_sizing": u.new,
                "reason": u.reason,
            }
            for u in outcome.unresolved
        ],
    }
    return (json.dumps(data, indent=2, ensure_ascii=False) + "\n").encode("utf-8")


def changed_overrides(outcome: SizingOutcome) -> tuple[str, ...]:
    """The sizes changed, as ``--set`` texts (the sized results record them)."""
    out = []
    for c in outcome.changes:
        if c["changed"]:
            out.append(f"footing.{c['id']}.width={_num(c['width_m'])}")
            if abs(c["length_m"] - c["width_m"]) > 1e-9:
                out.append(f"footing.{c['id']}.length={_num(c['length_m'])}")
    return tuple(out)


def format_sizing(outcome: SizingOutcome, limits: SizingLimits, units: str = "si") -> str:
    """The lines ``sitesettle size`` prints: what changed, what sizing cannot fix."""
    from sitesettle.io.text import terminal_line

    us = units == "us"
    L, lu = (1 / 0.3048, "ft") if us else (1.0, "m")
    S, su = (1000 / 25.4, "in") if us else (1000.0, "mm")
    changed = [c for c in outcome.changes if c["changed"]]
    cap = (
        f"allowable net bearing pressure {limits.bearing_pressure:g} kPa"
        if limits.bearing_pressure is not None
        else "no allowable bearing pressure given (--bearing-pressure): sizes meet the "
        "settlement checks only"
    )
    head = [
        f"widths on a {limits.step * L:g} {lu} grid, {limits.min_width * L:g}–"
        f"{limits.max_width * L:g} {lu}; {cap}",
        f"{outcome.rounds} analyses; "
        + (
            "the search settled"
            if outcome.converged
            else "stopped at the round limit (best plan kept)"
        )
        + f"; {len(changed)} of {len(outcome.changes)} footings resized",
    ]
    out = [f"sitesettle size — {terminal_line(outcome.site.name)}"]
    for line in head:
        out.extend(textwrap.wrap(line, 100, subsequent_indent="    "))
    out += [
        "",
        f"  {'footing':<10} {'before (' + lu + ')':>14} {'after (' + lu + ')':>14} "
        f"{'total ' + su:>16}  status",
    ]
    for c in sorted(changed, key=lambda c: -(c["area_m2"] - c["area_before_m2"])):
        before = f"{c['width_before_m'] * L:.2f}×{c['length_before_m'] * L:.2f}"
        after = f"{c['width_m'] * L:.2f}×{c['length_m'] * L:.2f}"
        tot = f"{c['total_before_mm'] / 1000 * S:.1f}→{c['total_mm'] / 1000 * S:.1f}"
        out.append(
            f"  {terminal_line(c['id'])[:10]:<10} {before:>14} {after:>14} {tot:>16}  "
            f"{c['status_before']}→{c['status']}"
        )
    out.append("")
    if outcome.passed:
        out.append("PASS: the sized plan passes every check.")
    else:
        out.append(
            f"NOT FIXABLE BY SIZING: {len(outcome.unresolved)} check(s) still fail; the plan "
            "written is the best found:"
        )
        for u in outcome.unresolved:
            head = terminal_line(u.check) + (" (passed before sizing)" if u.new else "")
            out.extend(textwrap.wrap(head, 100, initial_indent="  ", subsequent_indent="    "))
            out.extend(
                textwrap.wrap(
                    "why: " + terminal_line(u.reason),
                    100,
                    initial_indent="    ",
                    subsequent_indent="      ",
                )
            )
    return "\n".join(out)
