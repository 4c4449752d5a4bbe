"""Opening input files safely: regular files only, a size cap, no GDAL virtual files, no network.

A project folder may come from someone else. Before any input file is opened,
:func:`check_input_file` makes sure that it is

* a **regular file** (after following a link): a FIFO would hang the reader, a
  device could be endless, a folder is not a table;
* not larger than :data:`MAX_INPUT_BYTES` (checked with ``stat`` before
  reading, so a link to a 4 GB file is refused instead of filling memory);
* not named with a GDAL virtual-file prefix (``/vsicurl/``, ``/vsizip/`` …) and,
  for GIS files, really of the format its suffix says (:func:`check_gis_content`):
  a "``.geojson``" that is a GDAL virtual dataset (``<OGRVRTDataSource>``) pointing
  at a URL is refused before GDAL sees it.

:func:`disable_gdal_network` turns GDAL's HTTP access off for the process as a
second line of defence (sitesettle never reads from the network).
"""

from __future__ import annotations

import os
import pathlib
import stat

from sitesettle.errors import InputError

#: largest input file read [bytes]: 200 MB. A footing schedule or a borehole log of
#: a building is a few kB to a few MB, a GeoPackage of a large plan a few tens of
#: MB; anything larger is not a project input and would only exhaust memory.
MAX_INPUT_BYTES = 200 * 1024 * 1024

#: the first bytes of each GIS format, by suffix (None: a text format, checked below)
_MAGIC: dict[str, tuple[bytes, ...] | None] = {
    ".gpkg": (b"SQLite format 3\x00",),
    ".shp": (b"\x00\x00\x27\x0a",),
    ".fgb": (b"fgb\x03",),
    ".zip": (b"PK\x03\x04",),
    ".geojson": None,
    ".json": None,
    ".gml": None,
    ".kml": None,
}

#: GDAL settings that keep it off the network: no HTTP(S) through any proxy that
#: exists (port 9 on the local machine is the discard port, nothing listens),
#: no /vsicurl/ file of any extension, no retries and a 1 s time-out
GDAL_OFFLINE = {
    "GDAL_HTTP_PROXY": "127.0.0.1:9",
    "GDAL_HTTPS_PROXY": "127.0.0.1:9",
    "GDAL_HTTP_TIMEOUT": "1",
    "GDAL_HTTP_CONNECTTIMEOUT": "1",
    "GDAL_HTTP_MAX_RETRY": "0",
    "CPL_VSIL_CURL_ALLOWED_EXTENSIONS": ".sitesettle-no-network",
    "GDAL_DISABLE_READDIR_ON_OPEN": "EMPTY_DIR",
    "OGR_GEOJSON_MAX_OBJ_SIZE": "200MB",
}


def _megabytes(n: int) -> str:
    return f"{n / 1024 / 1024:.0f} MB"


def check_path_name(path, what: str = "file", where: str | None = None) -> None:
    """Raise InputError if ``path`` holds a GDAL virtual-file prefix (``/vsicurl/`` …)."""
    text = str(path).replace("\\", "/")
    if "/vsi" in text or text.startswith("vsi"):
        raise InputError(
            where or pathlib.Path(path).name or text,
            f"the {what} {text!r} names a GDAL virtual file system",
            "a path to a file on this computer",
        )


def check_input_file(path: pathlib.Path, what: str = "file") -> int:
    """Raise InputError unless ``path`` is a regular file of a readable size; return its size.

    Parameters
    ----------
    path : pathlib.Path
        The file named in the project.
    what : str
        What the file is (``"footings file"``), for the message.
    """
    path = pathlib.Path(path)
    where = path.name or str(path)
    check_path_name(path, what)
    try:
        info = os.stat(path)  # follows links: the target is what would be read
    except FileNotFoundError:
        raise InputError(
            where,
            f"the {what} {str(path)!r} does not exist",
            "a path relative to the project folder",
        ) from None
    except OSError as exc:
        raise InputError(
            where,
            f"the {what} {str(path)!r} cannot be examined ({exc.strerror or exc})",
            "a readable file",
        ) from None
    if not stat.S_ISREG(info.st_mode):
        kind = (
            "a folder"
            if stat.S_ISDIR(info.st_mode)
            else "a named pipe (FIFO)"
            if stat.S_ISFIFO(info.st_mode)
            else "a device"
            if stat.S_ISCHR(info.st_mode) or stat.S_ISBLK(info.st_mode)
            else "a socket"
            if stat.S_ISSOCK(info.st_mode)
            else "not a regular file"
        )
        raise InputError(
            where, f"the {what} {str(path)!r} is {kind}, not a file", "a path to a regular file"
        )
    if info.st_size > MAX_INPUT_BYTES:
        raise InputError(
            where,
            f"the {what} is {_megabytes(info.st_size)}, larger than the "
            f"{_megabytes(MAX_INPUT_BYTES)} an input file may be",
            "a project file of at most 200 MB (is this the right file?)",
        )
    return info.st_size


def read_bytes(path: pathlib.Path, what: str = "file") -> bytes:
    """The bytes of an input file, after :func:`check_input_file`.

    The file is opened without blocking and checked again once open, so a file
    swapped for a FIFO between the check and the opening cannot hang the run, and
    at most :data:`MAX_INPUT_BYTES` + 1 bytes are ever read.
    """
    path = pathlib.Path(path)
    check_input_file(path, what)
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0)
    try:
        fd = os.open(path, flags)
    except OSError as exc:
        raise InputError(
            path.name, f"the {what} cannot be opened ({exc.strerror or exc})", "a readable file"
        ) from None
    with os.fdopen(fd, "rb") as fh:
        if not stat.S_ISREG(os.fstat(fd).st_mode):
            raise InputError(
                path.name, f"the {what} {str(path)!r} is not a regular file", "a regular file"
            )
        data = fh.read(MAX_INPUT_BYTES + 1)
    if len(data) > MAX_INPUT_BYTES:
        raise InputError(
            path.name,
            f"the {what} is larger than {_megabytes(MAX_INPUT_BYTES)}",
            "a project file of at most 200 MB",
        )
    return data


def check_gis_content(path: pathlib.Path, what: str = "footings file") -> None:
    """Raise InputError unless a GIS file's first bytes match the format of its suffix.

    Binary formats are recognised by their signature (GeoPackage: an SQLite
    database; shapefile: file code 9994; FlatGeobuf; zip), GeoJSON by a JSON
    object, GML and KML by an XML document that is not a GDAL virtual dataset.
    """
    path = pathlib.Path(path)
    check_input_file(path, what)
    suffix = path.suffix.lower()
    if suffix not in _MAGIC:
        raise InputError(
            path.name,
            f'the {what} has the suffix "{suffix}"',
            "a .csv, .xlsx, .dxf, .gpkg, .geojson, .json, .shp, .fgb, .gml, .kml or .zip file",
        )
    with open(path, "rb") as fh:  # a regular file (checked above)
        head = fh.read(4096)
    magic = _MAGIC[suffix]
    ok: bool
    if magic is not None:
        ok = any(head.startswith(m) for m in magic)
    else:
        text = head.decode("utf-8", errors="replace").lstrip("\ufeff \t\r\n")
        low = text.lower()
        if "ogrvrtdatasource" in low or "vrtdataset" in low or "/vsi" in low:
            ok = False
        elif suffix in (".geojson", ".json"):
            ok = text.startswith("{")
        else:
            ok = text.startswith("<")
    if not ok:
        names = {
            ".gpkg": "a GeoPackage",
            ".shp": "a shapefile",
            ".fgb": "a FlatGeobuf file",
            ".zip": "a zip archive",
            ".geojson": "GeoJSON",
            ".json": "GeoJSON",
            ".gml": "GML",
            ".kml": "KML",
        }
        raise InputError(
            path.name,
            f"the {what} is not {names[suffix]} (its content does not match its suffix "
            f'"{suffix}"; GDAL virtual datasets and links to other files are not read)',
            f"{names[suffix]} file",
        )


_OFFLINE_DONE = False


def disable_gdal_network() -> None:
    """Set :data:`GDAL_OFFLINE` in GDAL (through pyogrio), once per process."""
    global _OFFLINE_DONE
    if _OFFLINE_DONE:
        return
    import pyogrio

    pyogrio.set_gdal_config_options(dict(GDAL_OFFLINE))
    _OFFLINE_DONE = True
