"""The ``sitesettle`` command: arguments, progress, the API, and exit codes.

Exit codes: 0 every check passes; 1 some check fails (outputs written);
2 bad input or an unwritable results folder (one clear message, nothing written);
130 interrupted.
"""

from __future__ import annotations

import argparse
import sys
import warnings
from pathlib import Path

from sitesettle.errors import one_line

CAUTIONS = (
    "Results support, and never replace, the judgement of a licensed engineer. "
    "Local codes and the project's own acceptance criteria govern. Each method has a "
    "range of validity (Schmertmann: granular soils under static load; consolidation: "
    "saturated clay, one-dimensional; Burland & Burbidge: sand and gravel from SPT); "
    "check the inputs against the site investigation."
)


def _parser() -> argparse.ArgumentParser:
    import sitesettle

    p = argparse.ArgumentParser(
        prog="sitesettle",
        description="Settlement and movement checks for every shallow footing of a building plan.",
    )
    p.add_argument("--version", action="version", version=f"sitesettle {sitesettle.__version__}")
    sub = p.add_subparsers(dest="command", required=True)
    c = sub.add_parser("check", help="analyse a project, check it and write the results folder")
    c.add_argument("project", help="project folder with a site.toml")
    c.add_argument("--out", help="results folder (default: PROJECT/results)")
    c.add_argument("--units", choices=["si", "us"], help="output units (default: the project's)")
    c.add_argument("--quiet", action="store_true", help="print only errors and the verdict")
    e = sub.add_parser("explain", help="print the layer-by-layer calculation of one footing")
    e.add_argument("project", help="project folder with a site.toml")
    e.add_argument("footing", help="footing id")
    e.add_argument("--csv", action="store_true", help="print the sheet as CSV")
    n = sub.add_parser("new", help="create a small commented starter project")
    n.add_argument("folder", help="folder to create (must not exist or be empty)")
    return p


class _Progress:
    """A tqdm bar over the analysis stages, silent when stderr is not a terminal."""

    def __init__(self, enabled: bool) -> None:
        from tqdm import tqdm

        self.bar = tqdm(
            total=100,
            desc="analysing",
            unit="%",
            leave=False,
            disable=not (enabled and sys.stderr.isatty()),
            bar_format="{desc:<24}{bar}| {n:.0f}%",
        )
        self.last = 0

    def __call__(self, stage: str, fraction: float) -> None:
        self.bar.set_description_str(stage)
        now = int(round(100 * fraction))
        if now > self.last:
            self.bar.update(now - self.last)
            self.last = now

    def close(self) -> None:
        self.bar.close()


def _load(project: str):
    import sitesettle

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        site = sitesettle.load_site(project)
    from sitesettle.errors import InputWarning

    notes = [str(w.message) for w in caught if issubclass(w.category, InputWarning)]
    for w in caught:
        if not issubclass(w.category, InputWarning):
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    return site, notes


def _check(args) -> int:
    import sitesettle
    from sitesettle.analysis import worst_pair_section
    from sitesettle.io.output import summary_dict, write_results
    from sitesettle.io.summary import format_summary

    site, notes = _load(args.project)
    units = args.units or site.units
    out = Path(args.out) if args.out else Path(args.project) / "results"
    from sitesettle.io.output import check_target

    check_target(out.absolute())  # refuse an unwritable target before the (long) analysis
    bar = _Progress(not args.quiet)
    try:
        results = sitesettle.analyse(site, progress=bar)
        section = worst_pair_section(results)
        bar("writing results", 0.99)
        write_results(results, out, units=units, section=section)
    finally:
        bar.close()
    summary = summary_dict(results, units)
    ok = results.checks is None or results.checks.all_passed
    if not args.quiet:
        for n in notes:
            print(f"warning: {one_line(str(n))}")
        print(format_summary(results, summary, units))
        print(f"results written to {out}")
        print()
        print("Caution: " + CAUTIONS)
    else:
        print("PASS" if ok else "FAIL")
    return 0 if ok else 1


def _explain(args) -> int:
    import sitesettle
    from sitesettle.io.explain import format_sheet, trace_table

    site, notes = _load(args.project)
    if args.footing not in {f.id for f in site.footings}:
        ids = [f.id for f in site.footings]
        print(
            one_line(
                f'error: no footing "{args.footing}" in {args.project}; footings are '
                f"{', '.join(ids[:15])}{' …' if len(ids) > 15 else ''}"
            ),
            file=sys.stderr,
        )
        return 2
    results = sitesettle.analyse(site, with_map=False)
    if args.csv:
        sys.stdout.write(
            trace_table(results, args.footing).to_csv(index=False, float_format="%.6g")
        )
    else:
        print(format_sheet(results, args.footing))
        print("Caution: " + CAUTIONS)
    return 0


def _new(args) -> int:
    from importlib import resources

    dest = Path(args.folder)
    if dest.exists() and (not dest.is_dir() or any(dest.iterdir())):
        print(
            one_line(f"error: {dest} exists and is not an empty folder; choose a new folder name"),
            file=sys.stderr,
        )
        return 2
    src = resources.files("sitesettle") / "templates" / "starter"
    dest.mkdir(parents=True, exist_ok=True)
    for item in src.iterdir():
        if item.is_file():
            (dest / item.name).write_bytes(item.read_bytes())
    print(f"starter project written to {dest}; run: sitesettle check {dest}")
    return 0


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``sitesettle`` command; returns the exit code."""
    from sitesettle.errors import InputError, OutputError

    args = _parser().parse_args(argv)
    try:
        if args.command == "check":
            return _check(args)
        if args.command == "explain":
            return _explain(args)
        return _new(args)
    except (InputError, OutputError) as exc:
        print(f"error: {one_line(str(exc))}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("interrupted: nothing was written over earlier results", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
