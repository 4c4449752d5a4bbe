"""Write the alternative demo set: the invented Millbrook investigation and plan as they
would be delivered (an AGS4 file, a GEF sounding, an .xlsx schedule and a DXF raft).

Run from the repository root: ``python demo_site/alt/make_alt.py``. Every number is
taken from the CSV demo one folder up (itself invented); the SPT tests are spread
around each stratum's N so that their mean is the CSV demo's value.

* ``investigation.ags`` — written by python-ags4: LOCA, GEOL (logged descriptions,
  the sand in two beds), WSTG, ISPT, SCPG/SCPT (soundings CPT1 and CPT3);
* ``CPT2.gef`` — the sounding CPT2 as a GEF-CPT file;
* ``schedule.xlsx`` — footings.csv as a workbook (sheet "Footings"), by openpyxl;
* ``core_raft.dxf`` — the raft outline of core_raft.gpkg on layer FOOTINGS with a
  block carrying its id and loads, by ezdxf.
"""

from __future__ import annotations

import csv
import io
import pathlib
import sys
import warnings

HERE = pathlib.Path(__file__).resolve().parent
DEMO = HERE.parent

#: the GEOL legend codes and logged descriptions of each stratum (invented)
LOGGED = {
    "made ground": ("MG", "Loose dark brown sandy gravelly MADE GROUND with brick fragments"),
    "sand": ("SA", "Medium dense brown fine to medium SAND"),
    "clay": ("CL", "Soft grey organic silty CLAY"),
    "gravel": ("GR", "Dense brown sandy GRAVEL"),
    "mudstone": ("MS", "Weak red MUDSTONE"),
}


def _csv_rows(path: pathlib.Path) -> list[list[str]]:
    lines = [ln for ln in path.read_text(encoding="utf-8").splitlines() if not ln.startswith("#")]
    return list(csv.reader(io.StringIO("\n".join(lines)), skipinitialspace=True))


def _frame(headings, units, types, rows):
    import pandas as pd

    data = [["UNIT", *units], ["TYPE", *types]] + [["DATA", *r] for r in rows]
    return pd.DataFrame(data, columns=["HEADING", *headings])


def write_ags(site) -> None:
    from python_ags4 import AGS4

    loca, geol, wstg, ispt = [], [], [], []
    for b in site.boreholes:
        end = b.intervals[-1].bottom
        loca.append([b.id, "CP", f"{b.x:.2f}", f"{b.y:.2f}", f"{end:.2f}"])
        wstg.append([b.id, f"{b.water_depth:.2f}", "2026-03-02T10:30"])
        for iv in b.intervals:
            code, text = LOGGED[iv.stratum]
            if iv.stratum == "sand":  # logged as two beds; sitesettle merges them
                mid = round((iv.top + iv.bottom) / 2, 2)
                geol.append(
                    [
                        b.id,
                        f"{iv.top:.2f}",
                        f"{mid:.2f}",
                        "Loose to " + text[0].lower() + text[1:],
                        code,
                    ]
                )
                geol.append([b.id, f"{mid:.2f}", f"{iv.bottom:.2f}", text, code])
            else:
                geol.append([b.id, f"{iv.top:.2f}", f"{iv.bottom:.2f}", text, code])
            n = iv.overrides.get("spt_n")
            if n and iv.bottom - iv.top > 1.5:  # two tests, N - 2 and N + 2
                z1 = iv.top + 0.3 * (iv.bottom - iv.top)
                z2 = iv.top + 0.7 * (iv.bottom - iv.top)
                ispt += [[b.id, f"{z1:.2f}", str(int(n) - 2)], [b.id, f"{z2:.2f}", str(int(n) + 2)]]
            elif n:  # a thin stratum: one test
                ispt.append([b.id, f"{(iv.top + iv.bottom) / 2:.2f}", str(int(n))])
    rows = _csv_rows(DEMO / "soundings.csv")[1:]
    scpt = [r for r in rows if r[0] in ("CPT1", "CPT3")]
    for sid in ("CPT1", "CPT3"):
        r = next(r for r in scpt if r[0] == sid)
        loca.append(
            [
                sid,
                "CPT",
                f"{float(r[1]):.2f}",
                f"{float(r[2]):.2f}",
                f"{max(float(s[3]) for s in scpt if s[0] == sid):.2f}",
            ]
        )
    tables = {
        "PROJ": _frame(["PROJ_ID", "PROJ_NAME", "PROJ_CLNT"], ["", "", ""], ["ID", "X", "X"],
                       [["DEMO-2026-014", "Millbrook Community Hub (invented)",
                         "Millbrook Parish Trust (invented)"]]),
        "TRAN": _frame(
            ["TRAN_ISNO", "TRAN_DATE", "TRAN_PROD", "TRAN_STAT", "TRAN_AGS", "TRAN_RECV",
             "TRAN_DLIM", "TRAN_RCON"],
            ["", "yyyy-mm-dd", "", "", "", "", "", ""],
            ["X", "DT", "X", "X", "X", "X", "X", "X"],
            [["1", "2026-03-20", "Invented Drilling Ltd", "FINAL", "4.1",
              "sitesettle demonstration", '"', "+"]],
        ),
        "LOCA": _frame(["LOCA_ID", "LOCA_TYPE", "LOCA_NATE", "LOCA_NATN", "LOCA_FDEP"],
                       ["", "", "m", "m", "m"], ["ID", "PA", "2DP", "2DP", "2DP"], loca),
        "GEOL": _frame(["LOCA_ID", "GEOL_TOP", "GEOL_BASE", "GEOL_DESC", "GEOL_LEG"],
                       ["", "m", "m", "", ""], ["ID", "2DP", "2DP", "X", "PA"], geol),
        "WSTG": _frame(["LOCA_ID", "WSTG_DPTH", "WSTG_DTIM"], ["", "m", "yyyy-mm-ddThh:mm"],
                       ["ID", "2DP", "DT"], wstg),
        "ISPT": _frame(["LOCA_ID", "ISPT_TOP", "ISPT_NVAL"], ["", "m", ""],
                       ["ID", "2DP", "0DP"], ispt),
        "SCPG": _frame(["LOCA_ID", "SCPG_TESN"], ["", ""], ["ID", "X"],
                       [[sid, "1"] for sid in ("CPT1", "CPT3")]),
        "SCPT": _frame(
            ["LOCA_ID", "SCPG_TESN", "SCPT_DPTH", "SCPT_RES", "SCPT_FRES"],
            ["", "", "m", "MN/m2", "kN/m2"],
            ["ID", "X", "2DP", "2DP", "0DP"],
            [[r[0], "1", f"{float(r[3]):.2f}", f"{float(r[4]):.2f}",
              f"{float(r[5]) * 1000:.0f}"] for r in scpt],
        ),
    }  # fmt: skip
    abbr = sorted({("LOCA_TYPE", r[1]) for r in loca} | {("GEOL_LEG", g[4]) for g in geol})
    tables["ABBR"] = _frame(["ABBR_HDNG", "ABBR_CODE", "ABBR_DESC"], ["", "", ""],
                            ["X", "X", "X"], [[h, c, f"code {c}"] for h, c in abbr])  # fmt: skip
    units = sorted({"m", "yyyy-mm-dd", "yyyy-mm-ddThh:mm", "MN/m2", "kN/m2"})
    tables["UNIT"] = _frame(["UNIT_UNIT", "UNIT_DESC"], ["", ""], ["X", "X"],
                            [[u, u] for u in units])  # fmt: skip
    types = ["0DP", "2DP", "DT", "ID", "PA", "X"]
    tables["TYPE"] = _frame(["TYPE_TYPE", "TYPE_DESC"], ["", ""], ["X", "X"],
                            [[t, t] for t in types])  # fmt: skip
    headings = {k: list(v.columns) for k, v in tables.items()}
    AGS4.dataframe_to_AGS4(tables, headings, str(HERE / "investigation.ags"), warnings=False)


def write_gef() -> None:
    rows = [r for r in _csv_rows(DEMO / "soundings.csv")[1:] if r[0] == "CPT2"]
    x, y = float(rows[0][1]), float(rows[0][2])
    lines = [
        "#GEFID= 1, 1, 0",
        "#FILEOWNER= Invented Cone Testing Ltd",
        "#FILEDATE= 2026, 3, 4",
        "#PROJECTID= CPT, DEMO-2026-014",
        "#COLUMN= 3",
        "#COLUMNINFO= 1, m, penetration length, 1",
        "#COLUMNINFO= 2, MPa, cone resistance, 2",
        "#COLUMNINFO= 3, MPa, local friction, 3",
        "#COLUMNVOID= 1, -9999.000000",
        "#COLUMNVOID= 2, -9999.000000",
        "#COLUMNVOID= 3, -9999.000000",
        f"#XYID= 00000, {x:.2f}, {y:.2f}",  # own system: the project's plan grid
        "#ZID= 00000, 0.00",
        "#TESTID= CPT2",
        "#PROCEDURECODE= GEF-CPT-Report, 1, 1, 2, -",
        "#REPORTCODE= GEF-CPT-Report, 1, 1, 2, -",
        "#EOH=",
    ] + [f"{float(r[3]):.2f} {float(r[4]):.3f} {float(r[5]):.4f}" for r in rows]
    (HERE / "CPT2.gef").write_text("\n".join(lines) + "\n", encoding="ascii")


def write_schedule() -> None:
    import openpyxl

    book = openpyxl.Workbook()
    ws = book.active
    ws.title = "Footings"
    text = (DEMO / "footings.csv").read_text(encoding="utf-8")
    for cells in csv.reader(io.StringIO(text), skipinitialspace=True):
        row = []
        for c in cells:
            c = c.strip()
            try:
                row.append(float(c) if c else None)
            except ValueError:
                row.append(c)
        ws.append(row)
    notes = book.create_sheet("Revisions")
    notes.append(["revision", "date", "what"])
    notes.append(["P1", "2026-02-10", "first issue (invented)"])
    book.save(HERE / "schedule.xlsx")


def write_raft() -> None:
    import ezdxf
    import geopandas

    raft = geopandas.read_file(DEMO / "core_raft.gpkg").iloc[0]
    doc = ezdxf.new("R2013")
    doc.header["$INSUNITS"] = 6
    doc.layers.add("FOOTINGS")
    doc.layers.add("GRID")
    block = doc.blocks.new("FOOTING_TAG")
    for tag in ("ID", "DEPTH", "DEAD_LOAD", "LIVE_LOAD", "RIGID"):
        block.add_attdef(tag, (0, 0), dxfattribs={"height": 0.3})
    msp = doc.modelspace()
    ring = list(raft.geometry.exterior.coords)[:-1]
    msp.add_lwpolyline(ring, close=True, dxfattribs={"layer": "FOOTINGS"})
    c = raft.geometry.representative_point()
    msp.add_blockref("FOOTING_TAG", (c.x, c.y), dxfattribs={"layer": "FOOTINGS"}).add_auto_attribs(
        {
            "ID": raft["id"],
            "DEPTH": f"{raft['depth']} m",
            "DEAD_LOAD": f"{raft['dead_load']} kN",
            "LIVE_LOAD": f"{raft['live_load']} kN",
            "RIGID": str(raft["rigid"]),
        }
    )
    msp.add_line((431250.0, 289390.0), (431250.0, 289430.0), dxfattribs={"layer": "GRID"})
    doc.saveas(HERE / "core_raft.dxf")


def copy_tables() -> None:
    for name in ("points.csv", "pairs.csv", "structure_lines.csv"):
        (HERE / name).write_bytes((DEMO / name).read_bytes())


def main() -> None:
    sys.path.insert(0, str(DEMO.parent))
    import sitesettle
    from sitesettle.errors import InputWarning

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", InputWarning)
        site = sitesettle.load_site(DEMO)
    write_ags(site)
    write_gef()
    write_schedule()
    write_raft()
    copy_tables()
    print(f"alternative demo files written to {HERE}")


if __name__ == "__main__":
    main()
