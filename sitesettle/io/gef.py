"""GEF cone-sounding files (GEF-CPT), read with ``pygef``.

GEF is an open text exchange format for cone penetration tests: ``#KEY= value``
header lines up to ``#EOH=``, then one line of numbers per reading. The columns
used are the GEF quantity numbers 1 (penetration length), 11 (depth corrected
for inclination, used instead of 1 when present), 2 (cone resistance qc) and 3
(local friction fs); each with the unit its ``#COLUMNINFO`` line gives, read
with pint. The position is ``#XYID`` (x, y in the project's plan coordinates,
metres), the sounding's id ``#TESTID`` (else the file name).
"""

from __future__ import annotations

import io
import math
import pathlib
import warnings

from sitesettle.errors import InputError, InputWarning
from sitesettle.io import files, geometry
from sitesettle.io.tables import Row, Table, _new_table

#: suffix of GEF files
GEF_SUFFIXES = (".gef",)
#: GEF-CPT quantity numbers used → pygef's column name and ours
QUANTITIES = {
    1: ("penetrationLength", "depth"),
    11: ("depth", "depth"),
    2: ("coneResistance", "qc"),
    3: ("localFriction", "fs"),
}


def soundings_table(path: pathlib.Path, what: str = "soundings file") -> Table:
    """The long-form soundings table (sounding, x, y, depth, qc, fs) of one GEF file.

    Rows are labelled ``reading n`` (1-based, in file order).
    """
    import pygef

    path = pathlib.Path(path)
    data = files.read_bytes(path, what)
    if not data.lstrip(b"\xef\xbb\xbf \t\r\n").startswith(b"#GEFID"):
        raise InputError(
            path.name,
            f"the {what} is not a GEF file (its content does not match its suffix)",
            "a GEF-CPT file starting with a #GEFID line",
        )
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            cpt = pygef.read_cpt(io.BytesIO(data), engine="gef", remove_pre_excavated_rows=False)
    except Exception as exc:  # pygef raises ValueError, KeyError, IndexError ...
        raise InputError(
            path.name,
            f"cannot read the file as a GEF cone sounding ({type(exc).__name__}: {exc})",
            "a GEF-CPT file (#COLUMNINFO for penetration length and cone resistance, #XYID, #EOH)",
        ) from None
    units: dict[str, str] = {}
    present: dict[str, str] = {}
    for info in cpt.raw_headers.get("COLUMNINFO", []):
        try:
            number = int(str(info[3]).strip())
        except (IndexError, ValueError):
            continue
        if number in QUANTITIES:
            theirs, ours = QUANTITIES[number]
            if number == 1 and "depth" in present:
                continue  # the inclination-corrected depth wins
            present[ours] = theirs
            unit = str(info[1]).strip()
            units[ours] = unit if unit and unit != "-" else ""
    for needed, text in (("depth", "penetration length (1)"), ("qc", "cone resistance (2)")):
        if needed not in present:
            raise InputError(
                path.name,
                f"the file has no column of {text}",
                "#COLUMNINFO lines for quantities 1 and 2 (GEF-CPT)",
            )
    loc = cpt.delivered_location
    x, y = float(getattr(loc, "x", math.nan)), float(getattr(loc, "y", math.nan))
    geometry.check_coordinate(x, f"{path.name}, #XYID")
    geometry.check_coordinate(y, f"{path.name}, #XYID")
    sid = str(cpt.alias or path.stem).strip()
    headers = ["sounding", "x", "y"] + [
        f"{c} [{units[c]}]" if units[c] else c for c in ("depth", "qc", "fs") if c in present
    ]
    table = _new_table(path.name, headers, header_label="#COLUMNINFO")
    columns = {c: cpt.data[present[c]].to_list() for c in present}
    void = []
    for i in range(len(columns["depth"])):
        cells = {"sounding": sid, "x": x, "y": y}
        for c, values in columns.items():
            v = values[i]
            cells[c] = None if v is None or (isinstance(v, float) and math.isnan(v)) else v
        if cells["qc"] is None or cells["depth"] is None:
            void.append(i + 1)
            continue
        table.rows.append(Row(f"reading {i + 1}", cells))
    if void:
        warnings.warn(
            f"{path.name} reading {void[0]}: {len(void)} reading(s) with a void depth or cone "
            "resistance (#COLUMNVOID) left out (first shown)",
            InputWarning,
            stacklevel=3,
        )
    return table
