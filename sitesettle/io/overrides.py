"""What-if changes given on the command line (``--set KEY=VALUE``, ``--criteria NAME``).

A change is one of

* ``footing.ID.KEY=VALUE``: a field of one footing (``width``, ``length``, ``size``,
  ``depth``, ``dead_load``, ``live_load``, ``x``, ``y``, ``rotation``,
  ``sustained_live_fraction``, ``fill_unit_weight``, ``rigid``, ``kind``). ``size``
  sets the width and scales the length with it, so that a pad keeps its shape
  (L/B); ``width`` alone changes only the shorter side, as a footings CSV row does.
  Applied with :meth:`sitesettle.site.Site.with_footing` after the project is read;
* ``strata.NAME.KEY=VALUE`` (or ``stratum.``): a key of the ``[[strata]]`` table
  called NAME;
* ``TABLE.KEY=VALUE`` for the tables ``analysis``, ``checks``, ``groundwater``,
  ``footings`` and ``project`` (``checks.overrides.total="40 mm"`` reaches a
  nested key).

Every change other than a footing's is made to the parsed site.toml before the
site is built, so that it passes through the same checks (units, plausible
ranges, unknown keys) as the file; a problem names the ``--set`` that caused
it. A VALUE is read as a TOML value when it is one (``0.3``, ``true``,
``"2.5 m"``) and as text otherwise (``25 yr``, ``eurocode7``); bare numbers take
the core units, as in site.toml (m, kN, kPa, years).

The changes made are kept on the site (:attr:`sitesettle.site.Site.overrides`):
the summary, summary.json and the report list them, so that a results folder
says what it was computed with.
"""

from __future__ import annotations

import tomllib
from collections.abc import Iterable
from dataclasses import dataclass

from sitesettle import units
from sitesettle.errors import InputError
from sitesettle.io.tables import suggest

#: footing keys of ``--set footing.ID.KEY`` → dimension of the value
FOOTING_KEYS: dict[str, str] = {
    "width": "length",
    "length": "length",
    "size": "length",
    "depth": "length",
    "x": "length",
    "y": "length",
    "rotation": "angle",
    "dead_load": "force",
    "live_load": "force",
    "sustained_live_fraction": "dimensionless",
    "fill_unit_weight": "unit_weight",
    "rigid": "flag",
    "kind": "text",
}
#: the first word of a change → what it changes
TARGETS = {
    "footing": "footing",
    "footings": "footing",
    "strata": "strata",
    "stratum": "strata",
    "analysis": "analysis",
    "checks": "checks",
    "groundwater": "groundwater",
    "project": "project",
}
_TABLE_EXAMPLE = (
    "footing.ID.KEY=VALUE, strata.NAME.KEY=VALUE or TABLE.KEY=VALUE "
    "(TABLE: analysis, checks, groundwater, project), e.g. footing.F4.width=3.0"
)


@dataclass(frozen=True)
class Override:
    """One what-if change.

    Attributes
    ----------
    text : str
        The change as given (``"footing.F4.width=3.0"``), for the records.
    target : str
        ``"footing"``, ``"strata"`` or a site.toml table name.
    name : str or None
        The footing id or stratum name (None for a table).
    path : tuple of str
        The key, and nested keys below it (``("overrides", "total")``).
    value : object
        The value, read as TOML where it is TOML, else the text.
    """

    text: str
    target: str
    name: str | None
    path: tuple[str, ...]
    value: object

    @property
    def where(self) -> str:
        """The change as it is named in a message."""
        return f"--set {self.text}"


def _value(raw: str) -> object:
    raw = raw.strip()
    try:
        return tomllib.loads(f"v = {raw}")["v"]
    except tomllib.TOMLDecodeError:
        return raw


def parse_override(text: str) -> Override:
    """Read one ``--set`` change.

    Parameters
    ----------
    text : str
        ``KEY=VALUE`` with a dotted key (see the module's description).

    Returns
    -------
    Override
        The change, not yet applied.

    Raises
    ------
    InputError
        No ``=``, an empty key or value, or an unknown first word.
    """
    where = f"--set {text}"
    key, sep, raw = text.partition("=")
    key = key.strip()
    if not sep or not raw.strip() or not key:
        raise InputError(where, "not KEY=VALUE", _TABLE_EXAMPLE)
    head, _, rest = key.partition(".")
    target = TARGETS.get(head.lower())
    if target is None or not rest:
        raise InputError(where, f"cannot set {key!r}" + suggest(head, TARGETS), _TABLE_EXAMPLE)
    if target in ("footing", "strata"):
        # the id or name may itself hold dots: the key is after the last one
        name, dot, field = rest.rpartition(".")
        if not dot or not name or not field:
            what = "ID" if target == "footing" else "NAME"
            raise InputError(where, f"no {what} or KEY in {key!r}", f"{head}.{what}.KEY=VALUE")
        return Override(text, target, name, (field,), _value(raw))
    path = tuple(p.strip() for p in rest.split("."))
    if any(not p for p in path):
        raise InputError(where, f"an empty key in {key!r}", _TABLE_EXAMPLE)
    return Override(text, target, None, path, _value(raw))


def parse_overrides(texts: Iterable[str], criteria: str | None = None) -> tuple[Override, ...]:
    """Read every ``--set`` change, and ``--criteria NAME`` as ``checks.criteria``.

    Parameters
    ----------
    texts : iterable of str
        The ``--set`` values in the order given (a later change of the same key wins).
    criteria : str, optional
        The ``--criteria`` value.

    Returns
    -------
    tuple of Override
    """
    out = [parse_override(t) for t in texts]
    if criteria is not None:
        out.append(Override(f"checks.criteria={criteria}", "checks", None, ("criteria",), criteria))
    return tuple(out)


def apply_to_config(config: dict, overrides: Iterable[Override]) -> dict:
    """site.toml data with the table and stratum changes made (a copy; footings later).

    Parameters
    ----------
    config : dict
        Parsed site.toml (:func:`sitesettle.io.project.read_site_toml`).
    overrides : iterable of Override

    Returns
    -------
    dict
        A changed copy; ``config`` itself is not changed.

    Raises
    ------
    InputError
        An unknown table key, or no stratum of that name (naming the ``--set``).
    """
    from sitesettle.io.project import TABLES
    from sitesettle.io.strata import ALL_KEYS

    out = {k: (dict(v) if isinstance(v, dict) else v) for k, v in config.items()}
    for ov in overrides:
        if ov.target == "footing":
            continue
        if ov.target == "strata":
            tables = [dict(t) for t in out.get("strata", [])]
            names = [str(t.get("name", "")) for t in tables]
            if ov.name not in names:
                raise InputError(
                    ov.where,
                    f"no stratum {ov.name!r}" + suggest(ov.name or "", names),
                    f"one of {', '.join(names)}",
                )
            (field,) = ov.path
            if field not in ALL_KEYS or field == "name":
                raise InputError(
                    ov.where,
                    f"{field!r} is not a stratum key" + suggest(field, ALL_KEYS),
                    f"one of {', '.join(k for k in ALL_KEYS if k != 'name')}",
                )
            tables[names.index(ov.name)][field] = ov.value
            out["strata"] = tables
            continue
        known = TABLES[ov.target]
        if ov.path[0] not in known:
            raise InputError(
                ov.where,
                f"[{ov.target}] has no key {ov.path[0]!r}" + suggest(ov.path[0], known),
                f"one of {', '.join(known)}",
            )
        table = out.setdefault(ov.target, {})
        for part in ov.path[:-1]:
            inner = table.get(part)
            table[part] = inner = dict(inner) if isinstance(inner, dict) else {}
            table = inner
        table[ov.path[-1]] = ov.value
    return out


def _footing_value(ov: Override) -> object:
    (field,) = ov.path
    dim = FOOTING_KEYS.get(field)
    if dim is None:
        raise InputError(
            ov.where,
            f"{field!r} is not a footing key that can be set" + suggest(field, FOOTING_KEYS),
            f"one of {', '.join(FOOTING_KEYS)}",
        )
    if dim == "flag":
        if isinstance(ov.value, bool):
            return ov.value
        raise InputError(ov.where, f"{ov.value!r} is not true or false", "true or false")
    if dim == "text":
        return str(ov.value).strip().lower()
    if isinstance(ov.value, bool):
        raise InputError(ov.where, f"{ov.value!r} is not a quantity", f"a {dim}")
    return units.parse(ov.value, dim, ov.where)


def apply_to_site(site, overrides: Iterable[Override]):
    """The site with the footing changes made, and every change recorded on it.

    Parameters
    ----------
    site : Site
        The site built from the changed site.toml (:func:`apply_to_config`).
    overrides : iterable of Override

    Returns
    -------
    Site
        A copy with each footing change made through :meth:`Site.with_footing`
        (``size`` keeps the footing's L/B) and ``overrides`` holding the text of
        every change.

    Raises
    ------
    InputError
        An unknown footing id or key, a value of the wrong kind, or a change that
        :meth:`Site.with_footing` refuses (naming the ``--set``).
    """
    import dataclasses

    overrides = tuple(overrides)
    changes: dict[str, dict[str, object]] = {}
    sources: dict[str, list[Override]] = {}
    ids = [f.id for f in site.footings]
    for ov in overrides:
        if ov.target != "footing":
            continue
        if ov.name not in ids:
            raise InputError(
                ov.where,
                f"no footing {ov.name!r}" + suggest(ov.name or "", ids),
                f"the id of a footing, such as {', '.join(ids[:8])}",
            )
        changes.setdefault(ov.name, {})[ov.path[0]] = _footing_value(ov)
        sources.setdefault(ov.name, []).append(ov)
    for fid, change in changes.items():
        change = dict(change)
        if "size" in change:
            old = site.footing(fid)
            b = float(change.pop("size"))
            if not b > 0:
                raise InputError(sources[fid][-1].where, "the size is not positive", "a size > 0 m")
            change.setdefault("width", b)
            if old.shape == "rectangle":
                change.setdefault("length", b * old.length / old.width)
        try:
            site = site.with_footing(fid, **change)
        except InputError as exc:
            names = " and ".join(ov.where for ov in sources[fid])
            raise InputError(names, exc.problem, exc.expected) from None
    return dataclasses.replace(site, overrides=tuple(ov.text for ov in overrides))


def blame(exc: InputError, overrides: Iterable[Override]) -> InputError:
    """``exc`` naming the ``--set`` whose table and key it is about, when there is one.

    Parameters
    ----------
    exc : InputError
        Raised while building the site from the changed site.toml.
    overrides : iterable of Override

    Returns
    -------
    InputError
        A new error whose place starts with the ``--set``, or ``exc`` itself when no
        change is named in its place.
    """
    for ov in reversed(tuple(overrides)):
        if ov.target == "footing":
            continue
        if ov.target == "strata":
            hit = repr(ov.name) in exc.where or str(ov.name) in exc.where
        else:
            hit = f"[{ov.target}]" in exc.where
        if hit and ov.path[-1] in exc.where:
            return InputError(f"{ov.where} ({exc.where})", exc.problem, exc.expected)
    return exc
