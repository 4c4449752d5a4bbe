"""Faults from outside the input: signals, a full disk, a race, odd files, a crash.

Each way the run can fail maps to one documented exit code (cli/main.py,
``EXIT_CODES``) and one line on stderr, and never costs an earlier results folder:

* SIGTERM while writing takes the Ctrl-C path: exit 143, old folder byte-identical,
  no temporary folder left; a SIGKILL's temporary folder is removed by the next run;
* a full disk (ENOSPC), a file too large (EFBIG), a folder that cannot be moved
  (EBUSY), an internal error, MemoryError: exit 3, one line, no traceback (unless
  ``--debug``), old folder kept;
* two runs on one results folder, the rename slowed down: the second waits for the
  first (it says so), both finish, nothing is left over;
* a FIFO named ``raft.gpkg``, a link to a 4 GB file, a GDAL virtual dataset pointing
  at a local HTTP server: refused with exit 2 before anything is read (the server
  sees no connection);
* a symlinked results folder is followed and the link kept; a dangling one refused.
"""

from __future__ import annotations

import errno
import json
import os
import pathlib
import shutil
import signal
import socket
import subprocess
import sys
import threading
import time

import pytest
from sitesettle_cli.main import EXIT_CODES, main

import sitesettle

STARTER = pathlib.Path(sitesettle.__file__).resolve().parent / "templates" / "starter"
POSIX = pytest.mark.skipif(os.name != "posix", reason="signals, FIFOs and flock need POSIX")


def _snapshot(folder: pathlib.Path) -> dict[str, bytes]:
    return {
        str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()
    }


def _leftovers(parent: pathlib.Path) -> list[str]:
    return sorted(p.name for p in parent.iterdir() if p.name.startswith(".results."))


def _quick(folder: pathlib.Path) -> None:
    """A coarse map: the run takes seconds, not tens of seconds."""
    toml = folder / "site.toml"
    toml.write_text(
        toml.read_text(encoding="utf-8").replace('map_spacing = "0 m"', 'map_spacing = "3 m"'),
        encoding="utf-8",
    )


@pytest.fixture(scope="module")
def checked(tmp_path_factory):
    """The starter project checked once (quick map); copy it before changing it."""
    project = tmp_path_factory.mktemp("faults") / "project"
    shutil.copytree(STARTER, project)
    _quick(project)
    assert main(["check", str(project), "--quiet"]) in (0, 1)
    return project


@pytest.fixture
def project(checked, tmp_path):
    dest = tmp_path / "project"
    shutil.copytree(checked, dest)
    (dest / "results" / "marker.txt").write_text("from the earlier run\n")
    return dest


def _one_line_error(err: str, pattern: str) -> None:
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert "Traceback" not in err
    assert lines[0].startswith("error: could not finish: "), err
    assert pattern in lines[0], err


def _command(*args: str, prelude: str = "") -> list[str]:
    code = (
        "import sys\n"
        + prelude
        + "\nfrom sitesettle_cli.main import main\nsys.exit(main(sys.argv[1:]))"
    )
    return [sys.executable, "-c", code, *args]


def _wait_for_tmp(child: subprocess.Popen, parent: pathlib.Path) -> None:
    deadline = time.monotonic() + 120
    while not any(n.startswith(".results.tmp-") for n in _leftovers(parent)):
        assert child.poll() is None, "the run ended before it started writing"
        assert time.monotonic() < deadline, "no temporary folder appeared"
        time.sleep(0.005)


def test_exit_codes_are_documented_in_help_and_readme(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    out = capsys.readouterr().out
    readme = (pathlib.Path(__file__).resolve().parents[1] / "README.md").read_text("utf-8")
    for code in EXIT_CODES:
        assert f"{code} " in out, code
        assert f"**{code}**" in readme, code


# ------------------------------------------------------------------ signals
@POSIX
def test_sigterm_while_writing_keeps_the_old_results(project):
    before = _snapshot(project / "results")
    child = subprocess.Popen(
        _command("check", str(project), "--quiet"),
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        _wait_for_tmp(child, project)
        child.send_signal(signal.SIGTERM)
        _, err = child.communicate(timeout=60)
    finally:
        if child.poll() is None:
            child.kill()
            child.wait()
    assert child.returncode == 143, err
    assert "Traceback" not in err and err.strip().startswith("terminated"), err
    assert _snapshot(project / "results") == before
    assert _leftovers(project) == []


@POSIX
def test_the_next_run_removes_what_a_sigkill_left(project):
    before = _snapshot(project / "results")
    child = subprocess.Popen(
        _command("check", str(project), "--quiet"),
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
    )
    try:
        _wait_for_tmp(child, project)
        child.send_signal(signal.SIGKILL)
        child.wait(timeout=60)
    finally:
        if child.poll() is None:
            child.kill()
            child.wait()
    assert any(n.startswith(".results.tmp-") for n in _leftovers(project))  # the fault is real
    assert _snapshot(project / "results") == before
    assert main(["check", str(project), "--quiet"]) in (0, 1)
    assert _leftovers(project) == []
    assert not (project / "results" / "marker.txt").exists()  # the new folder is in place


def test_a_swap_cut_between_its_renames_is_put_back(project, capsys):
    """A crash after the old folder was set aside and before the new one moved in."""
    before = _snapshot(project / "results")
    os.replace(project / "results", project / ".results.old-deadbeef")
    (project / ".results.tmp-cafef00d").mkdir()
    assert main(["check", str(project), "--quiet", "--out", str(project / "elsewhere")]) in (0, 1)
    assert _leftovers(project) == [".results.old-deadbeef", ".results.tmp-cafef00d"]  # not ours
    assert main(["check", str(project), "--quiet"]) in (0, 1)
    assert _leftovers(project) == []
    assert (project / "results" / "summary.json").is_file()
    assert not (project / "results" / "marker.txt").exists()
    assert before


# ------------------------------------------------------------ disk faults
@pytest.mark.parametrize(
    "code, words",
    [(errno.ENOSPC, "no space left"), (errno.EFBIG, "too large"), (errno.EACCES, "permission")],
)
def test_a_disk_fault_while_writing_exits_3_with_one_line(
    project, monkeypatch, capsys, code, words
):
    import sitesettle.io.output as output

    before = _snapshot(project / "results")

    def full(results, path, *args, **kwargs):
        raise OSError(code, os.strerror(code), str(path))

    monkeypatch.setattr(output, "write_geopackage", full)
    rc = main(["check", str(project), "--quiet"])
    out, err = capsys.readouterr()
    assert rc == 3, err
    _one_line_error(err, words)
    assert _snapshot(project / "results") == before
    assert _leftovers(project) == []


def test_a_results_folder_that_cannot_be_moved_exits_3(project, monkeypatch, capsys):
    import sitesettle.io.output as output

    before = _snapshot(project / "results")
    real = os.replace

    def stuck(src, dst):
        if pathlib.Path(src).name == "results":
            raise OSError(errno.EBUSY, os.strerror(errno.EBUSY), str(src))
        return real(src, dst)

    monkeypatch.setattr(output.os, "replace", stuck)
    rc = main(["check", str(project), "--quiet"])
    _, err = capsys.readouterr()
    monkeypatch.undo()
    assert rc == 3, err
    _one_line_error(err, "could not be moved")
    assert _snapshot(project / "results") == before
    assert _leftovers(project) == []


@pytest.mark.parametrize("exc", [ValueError("an unexpected state"), MemoryError()])
def test_an_internal_error_exits_3_and_debug_shows_the_traceback(project, monkeypatch, capsys, exc):
    def broken(*args, **kwargs):
        raise exc

    monkeypatch.setattr(sitesettle, "analyse", broken)
    rc = main(["check", str(project), "--quiet"])
    _, err = capsys.readouterr()
    assert rc == 3
    _one_line_error(err, "internal error" if isinstance(exc, ValueError) else "out of memory")
    rc = main(["--debug", "check", str(project), "--quiet"])
    _, err = capsys.readouterr()
    assert rc == 3 and "Traceback" in err


# ------------------------------------------------------------------- race
_SLOW_RENAME = (
    "import os, time\n"
    "_replace = os.replace\n"
    "def _slow(a, b):\n"
    "    time.sleep(0.5)\n"
    "    return _replace(a, b)\n"
    "os.replace = _slow\n"
)


def _hold_until(release: pathlib.Path) -> str:
    """A prelude: the run, once its files are written, waits for ``release`` to exist."""
    return (
        "import pathlib, time\n"
        "import sitesettle.io.output as _o\n"
        "_write_all = _o._write_all\n"
        "def _held(*a, **k):\n"
        "    _write_all(*a, **k)\n"
        f"    gate = pathlib.Path({str(release)!r})\n"
        "    t0 = time.monotonic()\n"
        "    while not gate.exists() and time.monotonic() - t0 < 120:\n"
        "        time.sleep(0.02)\n"
        "_o._write_all = _held\n"
    )


@POSIX
def test_two_runs_on_one_results_folder_do_not_race(project, tmp_path):
    """Run A holds the folder while run B arrives; renames are slowed in both."""
    release = tmp_path / "release"
    first = subprocess.Popen(
        _command("check", str(project), "--quiet", prelude=_SLOW_RENAME + _hold_until(release)),
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    second = None
    try:
        _wait_for_tmp(first, project)  # A holds the lock now
        second = subprocess.Popen(
            _command("check", str(project), "--quiet", prelude=_SLOW_RENAME),
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
        said = second.stderr.readline()  # B says whom it waits for, then waits
        assert "waiting for another sitesettle run" in said, said
        assert f"process {first.pid}" in said, said
        assert second.poll() is None
        release.touch()
        out_a, err_a = first.communicate(timeout=300)
        out_b, err_b = second.communicate(timeout=300)
    finally:
        for r in (first, second):
            if r is not None and r.poll() is None:
                r.kill()
                r.wait()
    assert first.returncode in (0, 1), err_a
    assert second.returncode in (0, 1), err_b
    assert "Traceback" not in err_a + err_b
    assert _leftovers(project) == []
    assert json.loads((project / "results" / "summary.json").read_text())["program"] == "sitesettle"
    assert not (project / "results" / "marker.txt").exists()


# ------------------------------------------------------------ odd input files
def _use_footing_files(folder: pathlib.Path, *names: str) -> None:
    toml = folder / "site.toml"
    listed = ", ".join(f'"{n}"' for n in names)
    toml.write_text(
        toml.read_text(encoding="utf-8").replace(
            'file = "footings.csv"', f'file = ["footings.csv", {listed}]'
        ),
        encoding="utf-8",
    )


def _refused(folder: pathlib.Path, capsys, pattern: str, timeout: float = 60) -> None:
    before = _snapshot(folder)
    t0 = time.monotonic()
    rc = main(["check", str(folder), "--quiet"])
    _, err = capsys.readouterr()
    assert time.monotonic() - t0 < timeout
    assert rc == 2, err
    assert len(err.strip().splitlines()) == 1 and err.startswith("error: "), err
    assert pattern in err, err
    assert _snapshot(folder) == before


@POSIX
def test_a_fifo_named_like_a_geopackage_is_refused_without_hanging(tmp_path, capsys):
    folder = tmp_path / "p"
    shutil.copytree(STARTER, folder)
    os.mkfifo(folder / "raft.gpkg")
    _use_footing_files(folder, "raft.gpkg")
    _refused(folder, capsys, "named pipe (FIFO)")


@POSIX
def test_a_fifo_as_the_boreholes_csv_is_refused_without_hanging(tmp_path, capsys):
    folder = tmp_path / "p"
    shutil.copytree(STARTER, folder)
    (folder / "boreholes.csv").unlink()
    os.mkfifo(folder / "boreholes.csv")
    _refused(folder, capsys, "named pipe (FIFO)")


def test_a_link_to_a_huge_file_is_refused_before_reading(tmp_path, capsys):
    folder = tmp_path / "p"
    shutil.copytree(STARTER, folder)
    huge = tmp_path / "huge.bin"
    with open(huge, "wb") as fh:  # sparse: 4 GB of size, no blocks on the disk
        fh.truncate(4 * 1024**3)
    (folder / "footings.csv").unlink()
    (folder / "footings.csv").symlink_to(huge)
    _refused(folder, capsys, "larger than the 200 MB")


class _Listener:
    """A TCP server on 127.0.0.1 that counts the connections it receives."""

    def __init__(self) -> None:
        self.sock = socket.socket()
        self.sock.bind(("127.0.0.1", 0))
        self.sock.listen(5)
        self.sock.settimeout(0.2)
        self.port = self.sock.getsockname()[1]
        self.hits = 0
        self.stop = False
        self.thread = threading.Thread(target=self._run, daemon=True)
        self.thread.start()

    def _run(self) -> None:
        while not self.stop:
            try:
                conn, _ = self.sock.accept()
            except OSError:
                continue
            self.hits += 1
            conn.close()

    def close(self) -> None:
        self.stop = True
        self.thread.join(timeout=5)
        self.sock.close()


def _vrt(url: str) -> str:
    return (
        '<OGRVRTDataSource><OGRVRTLayer name="raft">'
        f"<SrcDataSource>{url}</SrcDataSource>"
        "</OGRVRTLayer></OGRVRTDataSource>\n"
    )


def test_a_virtual_dataset_named_geojson_never_reaches_the_network(tmp_path, capsys):
    listener = _Listener()
    try:
        url = f"http://127.0.0.1:{listener.port}/raft.geojson"
        folder = tmp_path / "p"
        shutil.copytree(STARTER, folder)
        (folder / "raft.geojson").write_text(_vrt(f"/vsicurl/{url}"), encoding="utf-8")
        _use_footing_files(folder, "raft.geojson")
        _refused(folder, capsys, "is not GeoJSON")
        time.sleep(0.3)
        assert listener.hits == 0
    finally:
        listener.close()


def test_gdal_itself_is_kept_off_the_network(tmp_path):
    """Behind the content check, GDAL's own HTTP access is off (sitesettle.io.files)."""
    import pyogrio

    from sitesettle.io.files import disable_gdal_network

    disable_gdal_network()
    listener = _Listener()
    try:
        url = f"http://127.0.0.1:{listener.port}/raft.geojson"
        vrt = tmp_path / "raft.vrt"
        vrt.write_text(_vrt(url), encoding="utf-8")
        for source in (f"/vsicurl/{url}", url, str(vrt)):
            with pytest.raises(Exception):  # noqa: B017 - any GDAL error will do
                pyogrio.read_dataframe(source)
        time.sleep(0.3)
        assert listener.hits == 0
    finally:
        listener.close()


# --------------------------------------------------------- results symlinks
@POSIX
def test_a_symlinked_results_folder_is_followed_and_the_link_kept(project, tmp_path, capsys):
    real = tmp_path / "kept_elsewhere"
    os.replace(project / "results", real)
    (project / "results").symlink_to(real, target_is_directory=True)
    assert main(["check", str(project), "--quiet"]) in (0, 1)
    assert (project / "results").is_symlink()
    assert os.path.realpath(project / "results") == str(real)
    assert (real / "summary.json").is_file() and not (real / "marker.txt").exists()
    assert _leftovers(project) == [] and _leftovers(tmp_path) == []


@POSIX
def test_a_dangling_results_link_is_refused(project, tmp_path, capsys):
    shutil.rmtree(project / "results")
    (project / "results").symlink_to(tmp_path / "nowhere", target_is_directory=True)
    rc = main(["check", str(project), "--quiet"])
    _, err = capsys.readouterr()
    assert rc == 2 and "symbolic link" in err, err
    assert (project / "results").is_symlink() and _leftovers(project) == []
