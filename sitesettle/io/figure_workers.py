"""The results folder's figures drawn in worker processes while the other files are written.

Drawing the four PNG figures is the largest part of writing a small plan's
results, and it needs nothing the other files make. :func:`rendering` forks
worker processes (POSIX ``fork``: a worker starts with the finished results in
its memory, nothing is pickled or re-imported but matplotlib) that each draw a
share of the figures and send the PNG bytes back through a pipe; meanwhile the
caller writes the tables, layers, drawing and report. Then :meth:`FigureJob.result`
collects them.

Robustness:

* a worker writes no file: the caller writes the bytes it receives into the
  temporary results folder, so atomic writing is as before;
* a worker that fails, dies or goes silent for :data:`SILENCE_LIMIT` seconds is
  killed and its figures are drawn in the calling process instead (a real error
  then surfaces there with its traceback);
* every worker is reaped before :func:`rendering` returns or raises (an error
  or Ctrl-C in the caller kills them first); on Linux a worker also dies with
  its parent (``PR_SET_PDEATHSIG``), so none outlives a killed run;
* with one usable core (or no ``fork``) everything is drawn in the calling
  process, as :func:`sitesettle.io.output.make_figures` does.

The figures are the same with or without workers (the same code draws them).
"""

from __future__ import annotations

import contextlib
import gc
import os
import pickle
import select
import signal
import struct
import sys
import time
import traceback
import warnings

#: at most this many worker processes (the figures split into this many shares). One:
#: it draws every figure while the run writes the rest, for no more CPU time than
#: drawing in the run (a second worker imports matplotlib again and copies more of
#: the run's memory: about 1 s more CPU on the demo, and no gain on two cores that
#: the run's own writing already shares)
MAX_WORKERS = 1
#: a worker that sends nothing for this long [s] is taken as hung: killed, and its
#: figures drawn in the calling process
SILENCE_LIMIT = 300.0
#: share of each figure in the drawing time (measured on the demo), to balance the workers
_WEIGHT = {"plan": 3.0, "contours": 3.0, "settlement_time": 2.0, "section": 1.0}


def usable_cores() -> int:
    """The cores this process may run on (its CPU affinity where known)."""
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def shares(names: list[str], workers: int) -> list[list[str]]:
    """``names`` split into ``workers`` shares of about equal drawing time (the heaviest first)."""
    out: list[list[str]] = [[] for _ in range(max(workers, 1))]
    load = [0.0] * len(out)
    for name in sorted(names, key=lambda n: -_WEIGHT.get(n, 1.0)):
        k = load.index(min(load))
        out[k].append(name)
        load[k] += _WEIGHT.get(name, 1.0)
    return [s for s in out if s]


def _frame(kind: bytes, payload: bytes) -> bytes:
    return kind + struct.pack("<Q", len(payload)) + payload


class _Worker:
    """One forked worker drawing ``names``; the parent's end of its pipe."""

    def __init__(self, pid: int, fd: int, names: list[str]):
        self.pid, self.fd, self.names = pid, fd, names
        self.buf = bytearray()
        self.done: dict[str, bytes] = {}
        self.finished = False  # the worker said it is done (or failed)
        self.failed = False
        self.reaped = False
        self.last = time.monotonic()

    def feed(self, data: bytes) -> None:
        self.last = time.monotonic()
        self.buf += data
        while len(self.buf) >= 9:
            kind = bytes(self.buf[:1])
            size = struct.unpack("<Q", self.buf[1:9])[0]
            if len(self.buf) < 9 + size:
                return
            payload = bytes(self.buf[9 : 9 + size])
            del self.buf[: 9 + size]
            if kind == b"F":
                name, png = pickle.loads(payload)
                self.done[name] = png
            elif kind == b"E":
                self.failed = self.finished = True
            elif kind == b"D":
                self.finished = True


#: the signals held back over fork()
_HELD = (signal.SIGINT, signal.SIGTERM)


def _block() -> None:
    """Hold back SIGINT and SIGTERM in the calling thread (where POSIX masks exist)."""
    if hasattr(signal, "pthread_sigmask"):
        signal.pthread_sigmask(signal.SIG_BLOCK, _HELD)


def _unblock() -> None:
    """Let SIGINT and SIGTERM through again; one that came meanwhile is handled now."""
    if hasattr(signal, "pthread_sigmask"):
        signal.pthread_sigmask(signal.SIG_UNBLOCK, _HELD)


class _Deferred:
    """SIGINT and SIGTERM noted, not handled, while in the block; handled as they
    would have been just after it (by the handlers that were in place).

    Blocking them in this thread is not enough: the kernel then hands a signal sent
    to the process to another thread (the stress engine's pool, say), and Python runs
    the handler in this thread at its next chance, which may be inside an at-fork
    hook. Outside the main thread (where handlers cannot be set) it only blocks.
    """

    def __enter__(self):
        self.came: list[int] = []
        self.old: dict[int, object] = {}
        try:
            for sig in _HELD:
                self.old[sig] = signal.signal(sig, lambda signum, frame: self.came.append(signum))
        except ValueError:  # not the main thread
            self._restore()
        _block()
        return self

    def _restore(self) -> None:
        for sig, handler in self.old.items():
            signal.signal(sig, handler)
        self.old = {}

    def __exit__(self, *exc):
        self._restore()
        _unblock()  # a signal held back is handled here, by the restored handler
        for sig in dict.fromkeys(self.came):  # each noted signal once, in order
            signal.raise_signal(sig)
        return False


def _child(names, fd, parent, results, units, section) -> None:
    """The worker: draw ``names``, send each as it is done, then exit (never returns)."""
    code = 0
    try:
        signal.signal(signal.SIGINT, signal.SIG_DFL)
        signal.signal(signal.SIGTERM, signal.SIG_DFL)
        _unblock()  # blocked by the parent around fork (FigureJob._start)
        with contextlib.suppress(Exception):  # Linux: die with the parent
            import ctypes

            ctypes.CDLL(None, use_errno=True).prctl(1, signal.SIGKILL)  # PR_SET_PDEATHSIG
        if os.getppid() != parent:  # the parent died before that took effect
            os._exit(1)
        from sitesettle.io.output import figure_png

        for name in names:
            png = figure_png(name, results, units=units, section=section)
            _write_all(fd, _frame(b"F", pickle.dumps((name, png))))
        _write_all(fd, _frame(b"D", b""))
    except BaseException:  # noqa: BLE001 - reported to the parent, which draws again
        code = 1
        with contextlib.suppress(BaseException):
            _write_all(fd, _frame(b"E", traceback.format_exc().encode("utf-8", "replace")))
    finally:
        os._exit(code)


def _write_all(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        n = os.write(fd, view)
        view = view[n:]


class FigureJob:
    """Figures being drawn; :meth:`result` gives them all (name → PNG bytes)."""

    def __init__(self, results, units: str, section, workers: int | None = None):
        from sitesettle.io.output import figure_names

        self._args = (results, units, section)
        self.names = figure_names(section)
        self._workers: list[_Worker] = []
        if workers is None:
            cores = usable_cores()
            workers = min(MAX_WORKERS, cores) if cores >= 2 else 0
        if workers >= 1 and hasattr(os, "fork"):
            # the objects that exist now are left out of the workers' garbage
            # collection, which would otherwise touch (and so copy) the whole heap
            gc.freeze()
            try:
                for share in shares(self.names, workers):
                    self._start(share)
            except BaseException:  # a signal, say: the workers started so far are reaped
                self.close()
                raise
            finally:
                gc.unfreeze()

    @property
    def pids(self) -> list[int]:
        """The worker processes started (for tests)."""
        return [w.pid for w in self._workers]

    def _start(self, names: list[str]) -> None:
        r, w = os.pipe()
        parent = os.getpid()
        sys.stdout.flush()
        sys.stderr.flush()
        # SIGINT and SIGTERM are deferred over the fork: Python runs the at-fork
        # hooks (logging's, for one) around fork(), and an exception that a signal
        # handler raises inside a hook is printed and dropped, so the run would go on
        # and end as if never interrupted. Deferred, the signal is handled once the
        # fork is done, in this frame.
        with _Deferred():
            try:
                with warnings.catch_warnings():
                    # Python 3.12+ warns that fork() in a process with threads may
                    # deadlock the child; the worker only draws (matplotlib, numpy) and
                    # a silent worker is killed and replaced by drawing here
                    # (SILENCE_LIMIT)
                    warnings.simplefilter("ignore", DeprecationWarning)
                    pid = os.fork()
            except OSError:  # no more processes: draw here
                os.close(r)
                os.close(w)
                return
            if pid == 0:  # pragma: no cover - the child (coverage does not follow it)
                os.close(r)
                _child(names, w, parent, *self._args)  # never returns (os._exit)
            self._workers.append(_Worker(pid, r, names))  # known before a signal ends the run
            os.close(w)

    def _collect(self) -> None:
        """Read every worker until it has finished, failed, died or gone silent."""
        live = {w.fd: w for w in self._workers}
        while live:
            ready, _, _ = select.select(list(live), [], [], 1.0)
            for fd in ready:
                w = live[fd]
                data = os.read(fd, 1 << 20)
                if data:
                    w.feed(data)
                if not data or w.finished:
                    del live[fd]
            now = time.monotonic()
            for fd, w in list(live.items()):
                if now - w.last > SILENCE_LIMIT:
                    w.failed = True
                    del live[fd]

    def result(self) -> dict[str, bytes]:
        """Every figure, in :func:`~sitesettle.io.output.figure_names` order."""
        from sitesettle.io.output import figure_png

        try:
            self._collect()
        finally:
            self.close()
        got: dict[str, bytes] = {}
        for w in self._workers:
            if not w.failed:
                got.update(w.done)
        results, units, section = self._args
        return {
            name: got[name]
            if name in got
            else figure_png(name, results, units=units, section=section)
            for name in self.names
        }

    def close(self) -> None:
        """Stop and reap every worker (a finished one exits by itself)."""
        for w in self._workers:
            if w.reaped:  # never signal a pid after it was reaped: it may be reused
                continue
            with contextlib.suppress(OSError):
                os.close(w.fd)
            try:
                if not (w.finished and not w.failed):  # not done: not wanted any more
                    with contextlib.suppress(ProcessLookupError):
                        os.kill(w.pid, signal.SIGKILL)
                os.waitpid(w.pid, 0)  # a finished worker is exiting already
            except ChildProcessError:  # reaped elsewhere
                pass
            w.reaped = True


@contextlib.contextmanager
def rendering(results, *, units: str = "si", section=None, workers: int | None = None):
    """Start drawing the figures; yields the :class:`FigureJob`; reaps every worker on exit.

    Parameters
    ----------
    results : Results
        The analysis results.
    units : {"si", "us"}, optional
        Units of the figures.
    section : sitesettle.mapping.Section, optional
        Draws section.png too when given.
    workers : int, optional
        Worker processes; default: one per usable core up to :data:`MAX_WORKERS`,
        none with one core. 0 draws everything in this process.
    """
    job = FigureJob(results, units, section, workers)
    try:
        yield job
    finally:
        job.close()
