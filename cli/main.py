"""The ``sitesettle`` command: arguments, progress, the API, and exit codes.

Exit codes (:data:`EXIT_CODES`, also in ``--help`` and the README):

* 0 every check passes (``compare``: results B fail no check that results A passed);
* 1 some check fails (all outputs written); ``compare``: B fails a check that A
  passed, a regression (the comparison is written);
* 2 bad input, a plan estimated to need more than twice this machine's memory, or
  a results folder that cannot be used (one message naming the file and row,
  column or key, or the estimate and what to change; nothing written);
* 3 the tool could not finish: no space left, a file too large for the file
  system, no permission, a folder that cannot be moved, an internal error. One
  line, no traceback unless ``--debug``; an earlier results folder is untouched;
* 130 interrupted (Ctrl-C), 143 terminated (SIGTERM): nothing written over
  earlier results, no temporary folder left.

Everything printed goes through :func:`sitesettle.io.text.terminal_text`: a name or
an id cannot add a line, an ANSI escape or a bidi override to the terminal.
"""

from __future__ import annotations

import argparse
import errno
import signal
import sys
import warnings
from pathlib import Path

from sitesettle.io.text import terminal_line, terminal_text

#: exit code → meaning (printed by --help)
EXIT_CODES = {
    0: "every check passes (compare: B fails no check that A passed)",
    1: "some check fails (all outputs written); compare: B fails a check that A passed",
    2: "bad input, a plan too large for this machine, or unusable results folder (one "
    "message; nothing written)",
    3: "could not finish: no space, no permission, internal error (one line; --debug "
    "shows the traceback)",
    130: "interrupted (Ctrl-C)",
    143: "terminated (SIGTERM)",
}
OK, FAILS, BAD_INPUT, NOT_FINISHED, INTERRUPTED, TERMINATED = 0, 1, 2, 3, 130, 143


class Terminated(KeyboardInterrupt):
    """SIGTERM, raised where the signal arrives so that it takes the Ctrl-C path
    (the temporary results folder is removed, the old one kept)."""


def say(text: str = "", file=None) -> None:
    """Print ``text`` with every line made safe for the terminal."""
    print(terminal_text(text), file=file if file is not None else sys.stdout)


CAUTIONS = (
    "Results support, and never replace, the judgement of a licensed engineer. "
    "Local codes and the project's own acceptance criteria govern. Each method has a "
    "range of validity (Schmertmann: granular soils under static load; consolidation: "
    "saturated clay, one-dimensional; Burland & Burbidge: sand and gravel from SPT); "
    "check the inputs against the site investigation."
)


def _what_if_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--set",
        action="append",
        default=[],
        metavar="KEY=VALUE",
        dest="changes",
        help="a what-if change, without editing the files (repeatable): "
        "footing.ID.KEY=VALUE (width, length, size keeping L/B, depth, dead_load, "
        "live_load, x, y, …), strata.NAME.KEY=VALUE, or TABLE.KEY=VALUE for analysis, "
        "checks, groundwater; e.g. --set footing.F4.size=3.0 --set "
        "'strata.clay.compression_index=0.3'. The outputs list the changes",
    )
    p.add_argument(
        "--criteria",
        metavar="NAME",
        help="check against another criteria set (as --set checks.criteria=NAME)",
    )


def _non_negative(text: str) -> int:
    """An argparse type: a whole number ≥ 0."""
    try:
        n = int(text)
    except ValueError:
        n = -1
    if n < 0:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number ≥ 0")
    return n


def _parser() -> argparse.ArgumentParser:
    import sitesettle

    p = argparse.ArgumentParser(
        prog="sitesettle",
        description="Settlement and movement checks for every shallow footing of a building plan.",
        epilog="exit codes:\n" + "\n".join(f"  {k:<4}{v}" for k, v in EXIT_CODES.items()),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("--version", action="version", version=f"sitesettle {sitesettle.__version__}")
    p.add_argument(
        "--debug",
        action="store_true",
        help="show the traceback when the tool cannot finish (exit code 3)",
    )
    sub = p.add_subparsers(dest="command", required=True)
    c = sub.add_parser("check", help="analyse a project, check it and write the results folder")
    c.add_argument("project", help="project folder with a site.toml (or the site.toml itself)")
    c.add_argument("--out", help="results folder (default: PROJECT/results)")
    c.add_argument("--units", choices=["si", "us"], help="output units (default: the project's)")
    c.add_argument("--quiet", action="store_true", help="print only errors and the verdict")
    _what_if_arguments(c)
    e = sub.add_parser("explain", help="print the layer-by-layer calculation of one footing")
    e.add_argument("project", help="project folder with a site.toml (or the site.toml itself)")
    e.add_argument("footing", help="footing id")
    e.add_argument("--csv", action="store_true", help="print the sheet as CSV")
    e.add_argument(
        "--units", choices=["si", "us"], help="units of the sheet (default: the project's)"
    )
    _what_if_arguments(e)
    z = sub.add_parser(
        "size",
        help="propose the smallest footing sizes that pass every check, and write the sized plan",
        description="Resize the pads and strips (rafts and polygons stay) to the smallest "
        "widths on a grid that pass every total, pair and line check, re-analysing the whole "
        "plan after each change (docs/sizing.md). Writes the results of the sized plan with "
        "footings_sized.csv (input format), sizing.csv (the changes) and sizing.json. Exit 0 "
        "when the sized plan passes, 1 when sizing cannot pass every check (the reasons are "
        "printed and the best plan found is written).",
    )
    z.add_argument("project", help="project folder with a site.toml (or the site.toml itself)")
    z.add_argument("--out", help="results folder of the sized plan (default: PROJECT/sized)")
    z.add_argument("--step", help='grid of the widths (default "0.1 m")')
    z.add_argument("--min-size", dest="min_width", help='smallest width B (default "0.6 m")')
    z.add_argument("--max-size", dest="max_width", help='largest width B (default "6 m")')
    z.add_argument(
        "--bearing-pressure",
        help='allowable net bearing pressure, a cap on every footing (e.g. "200 kPa"; '
        "default: none, sizes then meet the settlement checks only)",
    )
    z.add_argument(
        "--thickness", help='concrete thickness for the volumes of sizing.csv (default "0.5 m")'
    )
    z.add_argument(
        "--grow-only",
        action="store_true",
        help="never make a footing smaller than given (default: the smallest passing size, "
        "which may shrink a footing that passes as given)",
    )
    z.add_argument("--units", choices=["si", "us"], help="output units (default: the project's)")
    z.add_argument("--quiet", action="store_true", help="print only errors and the verdict")
    _what_if_arguments(z)
    m = sub.add_parser(
        "compare",
        help="what changed between two results folders, footing by footing and pair by pair",
        description="Compare results folder B with results folder A (both written by check or "
        "size, in the same units): every footing's total settlement, every pair's differential "
        "and checked angular distortion, every structure line, and their statuses, B − A, "
        "sorted by change with the checks that got worse first. Writes "
        "footings_compared.csv, pairs_compared.csv, lines_compared.csv, basis_compared.csv, "
        "comparison.json and comparison.html (with a difference map). Exit 0: B fails no "
        "check that A passed; 1: it does (a regression); 2: a folder is missing, not a "
        "results folder, garbled, or the two are in different units (nothing written).",
    )
    m.add_argument("results_a", metavar="RESULTS_A", help="the reference results folder")
    m.add_argument("results_b", metavar="RESULTS_B", help="the results folder compared with A")
    m.add_argument(
        "--out", help="comparison folder (default: RESULTS_B/compare_to_<name of RESULTS_A>)"
    )
    m.add_argument("--quiet", action="store_true", help="print only errors and the verdict")
    m.add_argument(
        "--top",
        type=_non_negative,
        default=10,
        metavar="N",
        help="rows of the largest changes shown in the terminal (default 10)",
    )
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


def _project_folder(project: str) -> str:
    """The project folder: ``project`` itself, or the folder of a site.toml given as a path."""
    p = Path(project)
    if p.suffix.lower() == ".toml" and p.is_file():
        return str(p.parent if str(p.parent) else ".")
    return project


def _load(project: str, args=None):
    import sitesettle
    from sitesettle.io.overrides import parse_overrides

    project = _project_folder(project)
    changes = (
        parse_overrides(getattr(args, "changes", ()), getattr(args, "criteria", None))
        if args is not None
        else ()
    )
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        site = sitesettle.load_site(project, overrides=changes)
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
    from sitesettle.io.summary import format_caution, format_summary, group_warnings

    site, notes = _load(args.project, args)
    units = args.units or site.units
    out = Path(args.out) if args.out else Path(_project_folder(args.project)) / "results"
    from sitesettle.io.output import check_target

    check_target(out.absolute())  # refuse an unwritable target before the (long) analysis
    bar = _Progress(not args.quiet)
    try:
        results = sitesettle.analyse(
            site,
            progress=bar,
            on_warning=None if args.quiet else lambda msg: say(f"warning: {msg}", file=sys.stderr),
        )
        section = worst_pair_section(results)
        bar("writing results", 0.99)
        write_results(
            results,
            out,
            units=units,
            section=section,
            on_wait=lambda msg: say(terminal_line(msg), file=sys.stderr),
        )
    finally:
        bar.close()
    summary = summary_dict(results, units)
    ok = results.checks is None or results.checks.all_passed
    if not args.quiet:
        for line in group_warnings([*notes, *results.warnings], units):
            say(line, file=sys.stderr)
        say(format_summary(results, summary, units))
        say(f"results written to {terminal_line(str(out))}")
        say()
        say(format_caution(CAUTIONS))
    else:
        say("PASS" if ok else "FAIL")
    return OK if ok else FAILS


def _explain(args) -> int:
    import sitesettle
    from sitesettle.io.explain import format_sheet, trace_table
    from sitesettle.io.summary import format_caution, group_warnings

    site, notes = _load(args.project, args)
    units = args.units or site.units
    for line in group_warnings(notes, units):
        say(line, file=sys.stderr)
    if args.footing not in {f.id for f in site.footings}:
        ids = [f.id for f in site.footings]
        say(
            terminal_line(
                f'error: no footing "{args.footing}" in {args.project}; footings are '
                f"{', '.join(ids[:15])}{' …' if len(ids) > 15 else ''}"
            ),
            file=sys.stderr,
        )
        return BAD_INPUT
    results = sitesettle.analyse(site, with_map=False)
    if args.csv:
        sys.stdout.write(
            terminal_text(
                trace_table(results, args.footing, units=units).to_csv(
                    index=False, float_format="%.6g"
                )
            )
        )
    else:
        say(format_sheet(results, args.footing, units=units))
        say(format_caution(CAUTIONS))
    return OK


def _size(args) -> int:
    import dataclasses

    import sitesettle
    from sitesettle.analysis import worst_pair_section
    from sitesettle.io import sized
    from sitesettle.io.output import check_target, write_results
    from sitesettle.io.summary import format_caution, group_warnings
    from sitesettle.sizing import size_footings

    site, notes = _load(args.project, args)
    limits = sized.limits_from_text(
        args.step, args.min_width, args.max_width, args.bearing_pressure, args.thickness,
        grow_only=args.grow_only,
    )
    units = args.units or site.units
    out = Path(args.out) if args.out else Path(_project_folder(args.project)) / "sized"
    check_target(out.absolute())
    bar = _Progress(not args.quiet)
    try:
        outcome = size_footings(site, limits, progress=lambda s, f: bar(s, 0.8 * f))
        plan = dataclasses.replace(
            outcome.site, overrides=site.overrides + sized.changed_overrides(outcome)
        )
        bar("analysing the sized plan", 0.85)
        results = sitesettle.analyse(plan)
        bar("writing results", 0.99)
        write_results(
            results,
            out,
            units=units,
            section=worst_pair_section(results),
            on_wait=lambda msg: say(terminal_line(msg), file=sys.stderr),
            extra_files={
                "footings_sized.csv": sized.sized_footings_csv(outcome),
                "sizing.csv": sized.changes_csv(outcome, limits),
                "sizing.json": sized.sizing_json(outcome, limits),
            },
        )
    finally:
        bar.close()
    if args.quiet:
        say("PASS" if outcome.passed else "FAIL")
    else:
        for line in group_warnings([*notes, *results.warnings], units):
            say(line, file=sys.stderr)
        say(sized.format_sizing(outcome, limits, units))
        say(f"sized plan and its results written to {terminal_line(str(out))}")
        say()
        say(format_caution(CAUTIONS))
    return OK if outcome.passed else FAILS


def _compare(args) -> int:
    from sitesettle.io.comparison import (
        compare_folders,
        default_out,
        format_comparison,
        write_comparison,
    )
    from sitesettle.io.output import check_target
    from sitesettle.io.summary import format_caution

    out = Path(args.out) if args.out else default_out(args.results_a, args.results_b)
    comparison = compare_folders(args.results_a, args.results_b)  # bad input: exit 2, no file
    check_target(out.absolute(), marker="comparison.json", what="the comparison")
    write_comparison(
        comparison, out, on_wait=lambda msg: say(terminal_line(msg), file=sys.stderr)
    )
    worse = comparison.n_regressions > 0
    if args.quiet:
        say("REGRESSION" if worse else "NO REGRESSION")
    else:
        for line in format_comparison(comparison, top=args.top):
            say(line)
        say(f"comparison written to {terminal_line(str(out))}")
        say()
        say(format_caution(CAUTIONS))
    return FAILS if worse else OK


def _new(args) -> int:
    from importlib import resources

    dest = Path(args.folder)
    if dest.exists() and (not dest.is_dir() or any(dest.iterdir())):
        say(
            terminal_line(
                f"error: {dest} exists and is not an empty folder; choose a new folder name"
            ),
            file=sys.stderr,
        )
        return BAD_INPUT
    src = resources.files("sitesettle") / "templates" / "starter"
    dest.mkdir(parents=True, exist_ok=True)
    for item in src.iterdir():
        if item.is_file():
            (dest / item.name).write_bytes(item.read_bytes())
    say(terminal_line(f"starter project written to {dest}; run: sitesettle check {dest}"))
    return OK


def _could_not_finish(exc: BaseException) -> str:
    """One line saying why the run could not finish."""
    if isinstance(exc, OSError):
        reason = {
            errno.ENOSPC: "no space left on the device",
            getattr(errno, "EDQUOT", -1): "the disk quota is exceeded",
            errno.EFBIG: "a file is too large for the file system",
            errno.EACCES: "permission denied",
            errno.EPERM: "operation not permitted",
            errno.EROFS: "the file system is read-only",
            errno.ENOTEMPTY: "a folder could not be replaced (not empty)",
            errno.EBUSY: "a folder is in use and could not be moved",
            errno.EXDEV: "the results and their temporary folder are on different file systems",
        }.get(exc.errno, exc.strerror or type(exc).__name__)
        name = f" ({exc.filename})" if exc.filename else ""
        return f"{reason}{name}"
    if isinstance(exc, MemoryError):
        return "out of memory"
    if isinstance(exc, RecursionError):
        return "internal error: recursion too deep"
    return f"internal error: {type(exc).__name__}: {exc}"


def _on_sigterm(signum, frame):  # pragma: no cover - exercised in a child process
    raise Terminated()


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``sitesettle`` command; returns the exit code (:data:`EXIT_CODES`)."""
    from sitesettle.errors import InputError, OutputError

    args = _parser().parse_args(argv)
    previous = None
    try:
        previous = signal.signal(signal.SIGTERM, _on_sigterm)
    except (ValueError, OSError, AttributeError):  # not the main thread, or no SIGTERM
        previous = None
    try:
        if args.command == "check":
            return _check(args)
        if args.command == "explain":
            return _explain(args)
        if args.command == "size":
            return _size(args)
        if args.command == "compare":
            return _compare(args)
        return _new(args)
    except (InputError, OutputError) as exc:
        say(f"error: {terminal_line(str(exc))}", file=sys.stderr)
        return BAD_INPUT
    except Terminated:
        say("terminated: nothing was written over earlier results", file=sys.stderr)
        return TERMINATED
    except KeyboardInterrupt:
        say("interrupted: nothing was written over earlier results", file=sys.stderr)
        return INTERRUPTED
    except Exception as exc:  # OSError, MemoryError, RecursionError, a bug: exit 3
        if args.debug:
            import traceback

            traceback.print_exc()
        say(
            "error: could not finish: "
            + terminal_line(_could_not_finish(exc))
            + (
                "; nothing was written over earlier results"
                if args.command in ("check", "size", "compare")
                else ""
            )
            + ("" if args.debug else " (--debug shows the traceback)"),
            file=sys.stderr,
        )
        return NOT_FINISHED
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
