"""The short terminal summary printed by ``sitesettle check``."""

from __future__ import annotations

import numpy as np

from sitesettle.results import Results

#: how many of the worst footings and pairs the summary lists
SHOWN = 5
_TILT_BASIS = {
    "both": "kept and removed (the larger governs)",
    "kept": "kept",
    "removed": "removed",
}


def ratio_text(ratio: float) -> str:
    """A small ratio (angular distortion, tilt) as engineers write it: ``1/389``."""
    if not np.isfinite(ratio):
        return ""
    return f"1/{1 / ratio:,.0f}" if ratio > 0 else "0"


def format_summary(results: Results, summary: dict, units: str = "si") -> str:
    """A few lines: counts, the worst footings and pairs with their limits, the verdict."""
    scale, unit = (1000.0, "mm") if units == "si" else (1000.0 / 25.4, "in")
    ids = results.ids
    total = results.at_design_life() * scale
    life = results.times[results.design_life_index]
    chk = results.checks
    out = [
        f"sitesettle — {results.site.name}",
        f"{len(ids)} footings, {summary.get('n_pairs', 0)} neighbour pairs, "
        f"design life {life:g} years",
    ]
    for a in results.site.area_loads:
        out.append(f"area load {a.name}: {a.description}")
    out.extend(b for b in results.basis if b.startswith("load history:"))
    if chk is not None:
        out.append(
            f"criteria: {chk.criteria}"
            + (
                f"; movement checked after {chk.checked_after:g} years"
                if chk.checked_after > 0
                else ""
            )
        )
        out.append(f"β checked with the building's rigid-body tilt {_TILT_BASIS[chk.rigid_tilt]}")
    beyond = chk.beyond_range if chk is not None else ()
    if beyond:
        out.append("")
        out.append(
            f"OUTSIDE THE METHODS' RANGE — bearing failure likely at {len(beyond)} footing(s) "
            "(settlement on loading > 0.1 B); the settlements below are not meaningful there:"
        )
        for i in beyond[:SHOWN]:
            out.append(f"  {ids[i]:<12} {chk.footing_reasons[i].split(';')[0]}")
        if len(beyond) > SHOWN:
            out.append(f"  … and {len(beyond) - SHOWN} more (footings.csv, status)")
    out.append("")
    out.append(f"Largest total settlements ({unit}):")
    for i in np.argsort(-total, kind="stable")[:SHOWN]:
        status = ""
        if chk is not None:
            status = "pass" if chk.footing_passed[i] else "FAIL " + chk.footing_reasons[i]
        out.append(f"  {ids[i]:<12} {total[i]:8.1f}   {results.methods[i]:<32} {status}")
    if chk is not None and len(chk.pairs.a):
        pc = chk.pairs
        out.append("")
        out.append("Most utilised pairs:")
        for k in np.argsort(-np.nan_to_num(pc.utilisation, nan=-1.0), kind="stable")[:SHOWN]:
            a, b = results.member_ids[int(pc.a[k])], results.member_ids[int(pc.b[k])]
            out.append(
                f"  {a + ' – ' + b:<22} diff {pc.differential[k] * scale:6.1f} {unit}  "
                f"β {ratio_text(pc.angular_distortion[k]):>8}  limit {pc.limit[k]} "
                f"({pc.limit_source[k]})  use {pc.utilisation[k]:.2f}  "
                f"{'pass' if pc.passed[k] else 'FAIL'}"
            )
    if results.warnings:
        out.append("")
        out.append(f"{len(results.warnings)} warning(s); the first:")
        out.extend(f"  {w}" for w in results.warnings[:3])
    out.append("")
    if chk is None:
        out.append("checks not run")
    else:
        nff = int(np.count_nonzero(~np.asarray(chk.footing_passed, bool)))
        nfp = int(np.count_nonzero(~np.asarray(chk.pairs.passed, bool)))
        if np.isfinite(chk.building_tilt_limit):
            out.append(
                f"building tilt {ratio_text(chk.building_tilt)} against "
                f"{ratio_text(chk.building_tilt_limit)} ({chk.building_tilt_source}): "
                + ("pass" if chk.building_tilt_passed else "FAIL")
            )
        verdict = (
            "PASS — every check passes"
            if chk.all_passed
            else (f"FAIL — {nff} footing(s) and {nfp} pair(s) exceed their limits")
        )
        if beyond:
            verdict = (
                f"OUTSIDE THE METHODS' RANGE at {len(beyond)} footing(s) (bearing failure "
                f"likely); {verdict}"
            )
        out.append(verdict)
    return "\n".join(out)
