"""Writers of small investigation files for the tests: AGS4 through python-ags4 itself,
GEF-CPT text, .xlsx through openpyxl. Every value is invented."""

from __future__ import annotations

import pathlib

import pandas as pd

#: the headings, units and types of the groups written (AGS4 v4.1 dictionary names)
GROUPS = {
    "PROJ": [("PROJ_ID", "", "ID"), ("PROJ_NAME", "", "X")],
    "TRAN": [
        ("TRAN_ISNO", "", "X"),
        ("TRAN_DATE", "yyyy-mm-dd", "DT"),
        ("TRAN_PROD", "", "X"),
        ("TRAN_STAT", "", "X"),
        ("TRAN_AGS", "", "X"),
        ("TRAN_RECV", "", "X"),
        ("TRAN_DLIM", "", "X"),
        ("TRAN_RCON", "", "X"),
    ],
    "LOCA": [
        ("LOCA_ID", "", "ID"),
        ("LOCA_TYPE", "", "PA"),
        ("LOCA_NATE", "m", "2DP"),
        ("LOCA_NATN", "m", "2DP"),
        ("LOCA_GL", "m", "2DP"),
        ("LOCA_FDEP", "m", "2DP"),
    ],
    "GEOL": [
        ("LOCA_ID", "", "ID"),
        ("GEOL_TOP", "m", "2DP"),
        ("GEOL_BASE", "m", "2DP"),
        ("GEOL_DESC", "", "X"),
        ("GEOL_LEG", "", "PA"),
    ],
    "WSTG": [
        ("LOCA_ID", "", "ID"),
        ("WSTG_DPTH", "m", "2DP"),
        ("WSTG_DTIM", "yyyy-mm-ddThh:mm", "DT"),
    ],
    "ISPT": [
        ("LOCA_ID", "", "ID"),
        ("ISPT_TOP", "m", "2DP"),
        ("ISPT_NVAL", "", "0DP"),
    ],
    "SCPG": [("LOCA_ID", "", "ID"), ("SCPG_TESN", "", "X")],
    "SCPT": [
        ("LOCA_ID", "", "ID"),
        ("SCPG_TESN", "", "X"),
        ("SCPT_DPTH", "m", "2DP"),
        ("SCPT_RES", "MN/m2", "2DP"),
        ("SCPT_FRES", "kN/m2", "0DP"),
    ],
}


def _frame(group: str, rows: list[list[str]], drop_unit: bool = False) -> pd.DataFrame:
    spec = GROUPS[group]
    data = [] if drop_unit else [["UNIT"] + [u for _, u, _ in spec]]
    data += [["TYPE"] + [t for _, _, t in spec]] + [["DATA"] + list(r) for r in rows]
    return pd.DataFrame(data, columns=["HEADING"] + [h for h, _, _ in spec])


def write_ags(
    path: pathlib.Path,
    locations: list[tuple[str, str, float, float]],
    geol: list[tuple[str, float, float, str, str]] = (),
    wstg: list[tuple[str, float]] = (),
    ispt: list[tuple[str, float, int]] = (),
    scpt: list[tuple[str, str, float, float, float]] = (),
    *,
    drop_unit: str | None = None,
    extra_heading: str | None = None,
) -> pathlib.Path:
    """Write an AGS4 file with python-ags4 (``dataframe_to_AGS4``).

    ``locations``: (id, type, easting, northing); ``geol``: (id, top, base,
    description, legend); ``wstg``: (id, depth); ``ispt``: (id, top, N);
    ``scpt``: (id, test, depth, qc [MN/m2], fs [kN/m2]). ``drop_unit`` leaves out
    the UNIT line of a group; ``extra_heading`` adds an unknown heading to GEOL.
    """
    from python_ags4 import AGS4

    units = {"m", "yyyy-mm-dd", "yyyy-mm-ddThh:mm", "MN/m2", "kN/m2"}
    types = {"ID", "X", "PA", "2DP", "0DP", "DT"}
    abbr = {("LOCA_TYPE", t) for _, t, _, _ in locations} | {("GEOL_LEG", g[4]) for g in geol}
    tables = {
        "PROJ": _frame("PROJ", [["DEMO", "Invented test site"]]),
        "TRAN": _frame(
            "TRAN", [["1", "2026-01-15", "sitesettle tests", "FINAL", "4.1", "Nobody", '"', "+"]]
        ),
        "LOCA": _frame(
            "LOCA", [[i, t, f"{x:.2f}", f"{y:.2f}", "10.00", "15.00"] for i, t, x, y in locations]
        ),
    }
    if geol:
        tables["GEOL"] = _frame(
            "GEOL",
            [[i, f"{a:.2f}", f"{b:.2f}", d, leg] for i, a, b, d, leg in geol],
            drop_unit=drop_unit == "GEOL",
        )
        if extra_heading:
            tables["GEOL"][extra_heading] = ["", "X"] + ["1"] * len(geol)
    if wstg:
        tables["WSTG"] = _frame("WSTG", [[i, f"{d:.2f}", "2026-01-10T10:00"] for i, d in wstg])
    if ispt:
        tables["ISPT"] = _frame("ISPT", [[i, f"{z:.2f}", str(n)] for i, z, n in ispt])
    if scpt:
        tests = sorted({(i, t) for i, t, *_ in scpt})
        tables["SCPG"] = _frame("SCPG", [list(k) for k in tests])
        tables["SCPT"] = _frame(
            "SCPT", [[i, t, f"{z:.2f}", f"{q:.2f}", f"{f:.0f}"] for i, t, z, q, f in scpt]
        )
    tables["ABBR"] = pd.DataFrame(
        [["UNIT", "", "", ""], ["TYPE", "X", "X", "X"]]
        + [["DATA", h, c, f"code {c}"] for h, c in sorted(abbr)],
        columns=["HEADING", "ABBR_HDNG", "ABBR_CODE", "ABBR_DESC"],
    )
    tables["UNIT"] = pd.DataFrame(
        [["UNIT", "", ""], ["TYPE", "X", "X"]] + [["DATA", u, u] for u in sorted(units)],
        columns=["HEADING", "UNIT_UNIT", "UNIT_DESC"],
    )
    tables["TYPE"] = pd.DataFrame(
        [["UNIT", "", ""], ["TYPE", "X", "X"]] + [["DATA", t, t] for t in sorted(types)],
        columns=["HEADING", "TYPE_TYPE", "TYPE_DESC"],
    )
    headings = {k: list(v.columns) for k, v in tables.items()}
    AGS4.dataframe_to_AGS4(tables, headings, str(path), warnings=False)
    return path


def write_gef(
    path: pathlib.Path,
    test_id: str,
    x: float,
    y: float,
    readings: list[tuple[float, float, float]],
    *,
    qc_unit: str = "MPa",
    fs_unit: str = "MPa",
) -> pathlib.Path:
    """Write a GEF-CPT file: (penetration length [m], qc, fs) per reading."""
    lines = [
        "#GEFID= 1, 1, 0",
        "#FILEOWNER= sitesettle tests",
        "#FILEDATE= 2026, 1, 15",
        "#PROJECTID= CPT, DEMO",
        "#COLUMN= 3",
        "#COLUMNINFO= 1, m, penetration length, 1",
        f"#COLUMNINFO= 2, {qc_unit}, cone resistance, 2",
        f"#COLUMNINFO= 3, {fs_unit}, local friction, 3",
        "#COLUMNVOID= 1, -9999.000000",
        "#COLUMNVOID= 2, -9999.000000",
        "#COLUMNVOID= 3, -9999.000000",
        f"#XYID= 00000, {x:.2f}, {y:.2f}",
        "#ZID= 00000, 0.00",
        f"#TESTID= {test_id}",
        "#PROCEDURECODE= GEF-CPT-Report, 1, 1, 2, -",
        "#REPORTCODE= GEF-CPT-Report, 1, 1, 2, -",
        "#EOH=",
    ]
    lines += [f"{z:.2f} {q:.4f} {f:.4f}" for z, q, f in readings]
    path.write_text("\n".join(lines) + "\n", encoding="ascii")
    return path


def csv_to_xlsx(text: str, path: pathlib.Path, sheet: str = "Sheet1") -> pathlib.Path:
    """The rows of a CSV text (comments kept) as an .xlsx sheet; numbers as numbers."""
    import csv
    import io

    import openpyxl

    book = openpyxl.Workbook()
    ws = book.active
    ws.title = sheet
    for cells in csv.reader(io.StringIO(text), skipinitialspace=True):
        row = []
        for c in cells:
            c = c.strip()
            try:
                row.append(float(c) if c else None)
            except ValueError:
                row.append(c)
        ws.append(row)
    book.save(path)
    return path
