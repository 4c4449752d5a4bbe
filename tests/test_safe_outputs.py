"""Reproducible results and nothing lost when a run is repeated, fails or is interrupted.

* The same input gives byte-identical footings.csv, pairs.csv, settlement_time.csv
  and summary.json on a second run (the starter project, two results folders).
* A run over an existing results folder keeps the old folder until the new one is
  complete: a run that fails while writing, or that is interrupted with SIGINT
  (Ctrl-C) while it writes, leaves the old folder byte-identical, no temporary
  folder behind, exit code 130 (cli/main.py) and no traceback.
"""

from __future__ import annotations

import os
import pathlib
import shutil
import signal
import subprocess
import sys
import time

import pytest
from sitesettle_cli.main import main

import sitesettle

STARTER = pathlib.Path(sitesettle.__file__).resolve().parent / "templates" / "starter"
COMPARED = ("footings.csv", "pairs.csv", "settlement_time.csv", "summary.json")


def _snapshot(folder: pathlib.Path) -> dict[str, bytes]:
    return {
        str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()
    }


def _leftovers(parent: pathlib.Path) -> list[str]:
    """Temporary or set-aside folders of a results swap (``.results.tmp-*``, ``.results.old-*``)."""
    return sorted(p.name for p in parent.iterdir() if p.name.startswith(".results."))


@pytest.fixture(scope="module")
def first_run(tmp_path_factory):
    """The starter project checked once; its results folder."""
    project = tmp_path_factory.mktemp("repro") / "project"
    shutil.copytree(STARTER, project)
    rc = main(["check", str(project), "--quiet"])
    assert rc in (0, 1)
    return project


def test_second_run_gives_byte_identical_tables(first_run, tmp_path, capsys):
    out = tmp_path / "again"
    rc = main(["check", str(first_run), "--quiet", "--out", str(out)])
    assert rc in (0, 1)
    for name in COMPARED:
        a = (first_run / "results" / name).read_bytes()
        b = (out / name).read_bytes()
        assert a == b, name
        assert len(a) > 50, name  # a real table, not an empty file


def test_a_run_that_fails_while_writing_keeps_the_old_results(
    first_run, tmp_path, monkeypatch, capsys
):
    project = tmp_path / "project"
    shutil.copytree(first_run, project)
    (project / "results" / "marker.txt").write_text("from the earlier run\n")
    before = _snapshot(project / "results")
    import sitesettle.io.output as output

    def interrupted(*args, **kwargs):  # Ctrl-C while the figures are drawn
        raise KeyboardInterrupt

    monkeypatch.setattr(output, "figure_png", interrupted)  # each figure, worker or here
    rc = main(["check", str(project), "--quiet"])
    _, err = capsys.readouterr()
    assert rc == 130
    assert "Traceback" not in err and err.strip().startswith("interrupted")
    assert _snapshot(project / "results") == before
    assert _leftovers(project) == []


@pytest.mark.skipif(os.name != "posix", reason="SIGINT to a child process needs POSIX")
def test_sigint_while_writing_keeps_the_old_results(first_run, tmp_path):
    project = tmp_path / "project"
    shutil.copytree(first_run, project)
    (project / "results" / "marker.txt").write_text("from the earlier run\n")
    before = _snapshot(project / "results")
    child = subprocess.Popen(
        [sys.executable, "-m", "sitesettle_cli.main", "check", str(project), "--quiet"],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    deadline = time.monotonic() + 120
    try:
        while not any(n.startswith(".results.tmp-") for n in _leftovers(project)):
            assert child.poll() is None, "the run ended before it started writing"
            assert time.monotonic() < deadline, "no temporary folder appeared"
            time.sleep(0.005)
        child.send_signal(signal.SIGINT)
        out, err = child.communicate(timeout=60)
    finally:
        if child.poll() is None:
            child.kill()
            child.wait()
    assert child.returncode == 130, err
    assert "Traceback" not in err
    assert err.strip().startswith("interrupted"), err
    assert _snapshot(project / "results") == before  # marker.txt and every byte kept
    assert _leftovers(project) == []
