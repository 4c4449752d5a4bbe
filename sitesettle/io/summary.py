"""The short terminal summary printed by ``sitesettle check``.

Every line fits :data:`WIDTH` columns (longer ones are wrapped with an indent);
settlements are in mm to 0.1 mm, or in inches to 0.01 in with ``--units us``;
ratios as 1/N to 3 significant figures (docs/outputs.md, precision rules). The
warnings are grouped (:func:`group_warnings`) and printed on stderr by the CLI.
"""

from __future__ import annotations

import re
import textwrap

import numpy as np

from sitesettle.criteria import one_in
from sitesettle.io.unit_text import in_units
from sitesettle.results import Results

#: how many of the worst footings and pairs the summary lists
SHOWN = 5
#: the widest line printed [columns]
WIDTH = 100
#: ids shown in a grouped warning before "…"
GROUP_IDS = 8
#: what "use" means, printed once
UTILISATION = "use = utilisation: the movement divided by its limit; above 1.00 fails"
_TILT_BASIS = {
    "both": "kept and removed (the larger governs)",
    "kept": "kept",
    "removed": "removed",
}


def ratio_text(ratio: float) -> str:
    """A small ratio (angular distortion, tilt) as engineers write it: ``1/389``, N to 3
    significant figures, ``< 1/10,000`` below that (docs/outputs.md); empty for NaN."""
    if not np.isfinite(ratio):
        return ""
    return one_in(float(ratio))


def fit(lines: list[str], width: int = WIDTH) -> list[str]:
    """Every line at most ``width`` characters: longer ones wrapped, continued with an indent."""
    out: list[str] = []
    for line in lines:
        if len(line) <= width:
            out.append(line)
            continue
        lead = len(line) - len(line.lstrip(" "))
        out.extend(
            textwrap.wrap(
                line,
                width=width,
                initial_indent="",
                subsequent_indent=" " * (lead + 4),
                break_on_hyphens=False,
                drop_whitespace=True,
            )
            or [line[:width]]
        )
    return out


def _short(text: str, n: int) -> str:
    return text if len(text) <= n else text[: n - 1] + "…"


_SUBJECT = re.compile(r"^(footing|borehole|sounding|point|query point|stratum) (\S+) (.+)$")


def group_warnings(warnings: list[str] | tuple[str, ...], units: str = "si") -> list[str]:
    """The warnings as terminal lines, repeated ones grouped.

    Warnings that differ only in the footing (or borehole …) they name are said
    once: ``"31 footings lie outside the boreholes' hull: its ground is extrapolated:
    A1, A2, … (all listed in summary.json)"``. Each line is prefixed ``warning:``.

    >>> group_warnings(["footing A1 lies outside the hull", "footing A2 lies outside the hull",
    ...                 "footing A3 lies outside the hull", "map coarsened"])
    ['warning: 3 footings: lies outside the hull — A1, A2, A3', 'warning: map coarsened']
    """
    groups: dict[tuple[str, str], list[str]] = {}
    order: list[tuple[str, str]] = []
    for w in warnings:
        w = in_units(str(w), units)
        m = _SUBJECT.match(w)
        key = (m.group(1), m.group(3)) if m else ("", w)
        if key not in groups:
            groups[key] = []
            order.append(key)
        if m:
            groups[key].append(m.group(2))
    out = []
    for key in order:
        kind, rest = key
        ids = groups[key]
        if not kind:
            out.append(f"warning: {rest}")
        elif len(ids) == 1:
            out.append(f"warning: {kind} {ids[0]} {rest}")
        else:
            shown = ", ".join(ids[:GROUP_IDS])
            more = (
                f", … ({len(ids)} in all, listed in summary.json)" if len(ids) > GROUP_IDS else ""
            )
            out.append(f"warning: {len(ids)} {kind}s: {rest} — {shown}{more}")
    return fit(out)


def _reason(text: str, units: str) -> str:
    """A footing's reason without its source (the sources are listed once)."""
    return re.sub(r" \([^()]*\)", "", in_units(text, units))


def _total_limits(chk, units: str) -> str:
    """The total-settlement limit of each kind of foundation on the plan, in words."""
    kinds = tuple(chk.footing_kind)
    if chk.footing_limit is None or not kinds:
        lim = in_units(f"{chk.footing_limit_total * 1000:.4g} mm", units)
        return f"a footing's total settlement ≤ {lim}"
    by_kind: dict[str, float] = {}
    for kind, value in zip(kinds, np.asarray(chk.footing_limit, float)):
        by_kind.setdefault(kind, value)
    same: dict[str, list[str]] = {}
    for kind, value in by_kind.items():
        text = in_units(f"{value * 1000:.4g} mm", units) if np.isfinite(value) else "no limit"
        same.setdefault(text, []).append(kind + "s")
    parts = [
        f"{' and '.join(k)} " + (f"≤ {t}" if t != "no limit" else "not limited")
        for t, k in same.items()
    ]
    return "total settlement of " + "; ".join(parts)


def format_summary(results: Results, summary: dict, units: str = "si") -> str:
    """A few lines: counts, the worst footings and pairs with their limits, the verdict.

    The warnings are not included (:func:`group_warnings`; the CLI prints them on stderr).
    """
    us = units == "us"
    scale, unit, dec = (1000.0 / 25.4, "in", 2) if us else (1000.0, "mm", 1)
    ids = results.ids
    k = results.design_life_index
    total = results.total[:, k] * scale
    on_load = results.immediate[:, k] * scale
    creep = np.zeros_like(on_load) if results.creep is None else results.creep[:, k] * scale
    cons = results.consolidation[:, k] * scale
    sec = results.secondary[:, k] * scale
    life = results.times[k]
    chk = results.checks
    out = [
        f"sitesettle — {results.site.name}",
        f"{len(ids)} footings, {summary.get('n_pairs', 0)} neighbour pairs, "
        f"design life {life:g} years",
    ]
    for a in results.site.area_loads:
        out.append(f"area load {a.name}: {a.description}")
    out.extend(
        b for b in results.basis if b.startswith(("load history:", "what-if changes"))
    )
    if chk is not None:
        out.append(f"criteria: {chk.criteria}; {_total_limits(chk, units)}")
        out.append(f"β checked with the building's rigid-body tilt {_TILT_BASIS[chk.rigid_tilt]}")
    beyond = chk.beyond_range if chk is not None else ()
    if beyond:
        out.append("")
        out.append(
            f"OUTSIDE THE METHODS' RANGE — bearing failure likely at {len(beyond)} footing(s) "
            "(settlement on loading > 0.1 B); the settlements below are not meaningful there:"
        )
        for i in beyond[:SHOWN]:
            out.append(
                f"  {_short(ids[i], 12):<12} {_reason(chk.footing_reasons[i].split(';')[0], units)}"
            )
        if len(beyond) > SHOWN:
            out.append(f"  … and {len(beyond) - SHOWN} more (footings.csv, status)")
    out.append("")
    out.append(f"Largest total settlements at {life:g} years ({unit}):")
    w = 6 if us else 7
    out.append(
        f"  {'footing':<12} {'total':>{w}} {'on loading':>10} {'creep':>{w}} "
        f"{'consolid.':>9} {'second.':>{w}}  status"
    )
    for i in np.argsort(-total, kind="stable")[:SHOWN]:
        status = ""
        if chk is not None:
            status = (
                "pass"
                if chk.footing_passed[i]
                else "FAIL " + _reason(chk.footing_reasons[i], units)
            )
        out.append(
            f"  {_short(ids[i], 12):<12} {total[i]:>{w}.{dec}f} {on_load[i]:>10.{dec}f} "
            f"{creep[i]:>{w}.{dec}f} {cons[i]:>9.{dec}f} {sec[i]:>{w}.{dec}f}  {status}"
        )
    out.append("  on loading: granular strata and undrained clay at once; creep: granular, in time")
    if chk is not None and len(chk.pairs.a):
        pc = chk.pairs
        basis = f"after {chk.checked_after:g} yr" if chk.checked_after > 0 else "total"
        out.append("")
        out.append(
            f"Most utilised pairs — differential Δ and angular distortion β {basis}"
            + (" (movement since then):" if chk.checked_after > 0 else ":")
        )
        out.append(
            f"  {'pair':<20} {'Δ (' + unit + ')':>8} {'β':>10}  {'limit':<28} {'use':>5}  status"
        )
        for j in np.argsort(-np.nan_to_num(pc.utilisation, nan=-1.0), kind="stable")[:SHOWN]:
            a, b = results.member_ids[int(pc.a[j])], results.member_ids[int(pc.b[j])]
            pair = _short(f"{_short(a, 9)} – {_short(b, 9)}", 20)
            out.append(
                f"  {pair:<20} {pc.differential[j] * scale:>8.{dec}f} "
                f"{ratio_text(pc.angular_distortion[j]):>10}  "
                f"{_short(in_units(pc.limit[j], units), 28):<28} {pc.utilisation[j]:>5.2f}  "
                f"{'pass' if pc.passed[j] else 'FAIL'}"
            )
        out.append(f"  {UTILISATION}")
    if chk is not None and chk.sources:
        out.append("")
        out.append("limits from: " + "; ".join(chk.sources))
    if results.warnings:
        out.append("")
        out.append(f"{len(results.warnings)} warning(s), on stderr and in summary.json")
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
    # the title keeps the project's name whole (a name is shown as written, never cut)
    return "\n".join([out[0], *fit(out[1:])])


def format_caution(text: str, width: int = WIDTH) -> str:
    """The caution wrapped to ``width`` columns."""
    return "\n".join(textwrap.wrap("Caution: " + text, width=width, break_on_hyphens=False))
