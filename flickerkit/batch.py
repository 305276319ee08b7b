"""Many captures at once: a pure map of ``measure_one`` over files.

The work item is a file path plus settings; the result is the assessment's
JSON object or the one-line error, so results can cross process (or machine)
boundaries and come back in input order. Local worker processes are the
default; an optional Dask distributed scheduler runs the same map across
machines (``pip install 'flickerkit[distributed]'``).
"""

from __future__ import annotations

import os
import signal
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Any, Callable, Iterable, Iterator, Sequence

from .assess import AssessSettings
from .readers import ReadOptions


@dataclass(frozen=True)
class Outcome:
    """What became of one capture.

    Attributes
    ----------
    path : str
        The capture file.
    record : dict or None
        ``Assessment.to_dict()`` when it was measured.
    error : str or None
        The error line when it was not.
    then : Any
        What the ``then`` callable of :func:`measure_one` made of the typed
        assessment in the worker (``report`` judges there), else None.
    """

    path: str
    record: dict[str, Any] | None
    error: str | None = None
    then: Any = None


def measure_one(path: str, options: ReadOptions, settings: AssessSettings,
                then: Callable[[Any], Any] | None = None) -> Outcome:
    """Read and assess one capture; project errors become ``Outcome.error``.

    Pure apart from reading the file: the same inputs give the same outcome
    in any process. ``then`` (picklable) is called with the typed assessment
    in the worker, so what needs the typed result (judging) is done where it
    is, and only plain results cross the process boundary.
    """
    from .assess import assess, assess_voltage
    from .errors import FlickerkitError
    from .readers import read_capture

    try:
        capture = read_capture(path, options)
        result = (assess_voltage if capture.quantity == "voltage" else assess)(capture, settings)
        return Outcome(path, result.to_dict(), then=None if then is None else then(result))
    except FlickerkitError as exc:
        return Outcome(path, None, str(exc))
    except MemoryError:
        return Outcome(path, None, f"{path}: not enough memory to measure this capture")


def _ignore_sigint() -> None:  # worker initialiser: the parent handles Ctrl-C
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _worker_init(parent_pid: int, workers: int) -> None:
    """Worker initialiser: the parent handles Ctrl-C, the worker dies with its parent, and
    its BLAS threads share the CPUs with the other workers."""
    _ignore_sigint()
    if hasattr(signal, "pthread_sigmask"):  # forked while the parent held Ctrl-C back
        signal.pthread_sigmask(signal.SIG_UNBLOCK, {signal.SIGINT})
    die_with_parent(parent_pid)
    limit_threads(workers)


@contextmanager
def _sigint_held() -> Iterator[None]:
    """Hold Ctrl-C back while the pool forks its workers and takes the work.

    A SIGINT that lands inside ``os.fork`` interrupts the interpreter's at-fork handlers,
    which swallow the KeyboardInterrupt ("Exception ignored"): the batch would then run to
    its end and write its output although the user interrupted it. Held back, the signal
    is delivered as the block ends, where it interrupts the batch like any other.
    """
    mask = getattr(signal, "pthread_sigmask", None)
    if mask is None:  # pragma: no cover - not on POSIX
        yield
        return
    mask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        yield
    finally:
        mask(signal.SIG_UNBLOCK, {signal.SIGINT})


def die_with_parent(parent_pid: int, *, poll_s: float = 0.5) -> None:
    """End this process when ``parent_pid`` ends, even by SIGKILL (no orphaned workers).

    On Linux the kernel sends SIGTERM at the parent's death (``prctl(PR_SET_PDEATHSIG)``
    through ctypes) when the worker was forked by it; everywhere, a daemon thread also
    checks every ``poll_s`` seconds that ``parent_pid`` still runs (and, when it is the
    direct parent, that it still is) and exits otherwise.
    """
    import sys
    import threading

    direct = os.getppid() == parent_pid
    if direct and sys.platform.startswith("linux"):
        try:
            import ctypes

            libc = ctypes.CDLL(None, use_errno=True)
            libc.prctl(1, signal.SIGTERM, 0, 0, 0)  # 1 = PR_SET_PDEATHSIG
        except (OSError, AttributeError):
            pass

    def parent_gone() -> bool:
        if direct:
            return os.getppid() != parent_pid
        try:
            os.kill(parent_pid, 0)
        except ProcessLookupError:
            return True
        except OSError:
            return False
        return False

    if parent_gone():  # the parent died before the signal was armed
        os._exit(1)

    def watch() -> None:
        import time

        while True:
            time.sleep(poll_s)
            if parent_gone():
                os._exit(1)

    threading.Thread(target=watch, name="flickerkit-parent-watch", daemon=True).start()


def limit_threads(workers: int) -> int:
    """Limit this process's BLAS/OpenMP threads so that ``workers`` of it fit the CPUs.

    Parameters
    ----------
    workers : int
        Processes sharing this machine's CPUs.

    Returns
    -------
    int
        Threads allowed per process, ``max(1, cpus // workers)``.

    Notes
    -----
    Worker processes are forked after numpy has loaded its BLAS, so environment
    variables such as ``OPENBLAS_NUM_THREADS`` come too late; threadpoolctl sets
    the limit in the loaded libraries. Without it each worker's small
    least-squares solves use every BLAS thread, and ``workers x threads``
    threads fight over the CPUs.
    """
    from threadpoolctl import threadpool_limits  # type: ignore[import-untyped]  # no stubs

    threads = max(1, default_workers() // max(1, workers))
    threadpool_limits(limits=threads)
    return threads


def _star(job: tuple[str, ReadOptions, AssessSettings, Any]) -> Outcome:
    return measure_one(*job)


def default_workers() -> int:
    """Worker processes used by default: the CPUs this process may run on."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not on Linux
        return max(1, os.cpu_count() or 1)


def measure_many(
    paths: Sequence[str],
    options: ReadOptions | Sequence[ReadOptions],
    settings: AssessSettings,
    *,
    workers: int | None = None,
    scheduler: str | None = None,
    on_result: Callable[[Outcome], None] | None = None,
    then: Sequence[Callable[[Any], Any] | None] | None = None,
) -> list[Outcome]:
    """Measure captures, in parallel, returning outcomes in input order.

    Parameters
    ----------
    paths : sequence of str
        Capture files.
    options : ReadOptions or sequence of ReadOptions
        Reading options for every path, or one per path.
    settings : AssessSettings
        Passed to every :func:`measure_one`.
    workers : int, optional
        Local worker processes; default :func:`default_workers`. 1 runs in
        this process.
    scheduler : str, optional
        Address of a Dask distributed scheduler (``tcp://host:8786``) to run
        the map on instead of local processes. Needs the ``distributed`` extra.
    on_result : callable, optional
        Called with each outcome as it arrives, in input order (for progress).
    then : sequence of callable, optional
        One per path: called in the worker with the typed assessment
        (:func:`measure_one`); its result is ``Outcome.then``.

    Returns
    -------
    list of Outcome
        One per path, in the order given, whatever the worker count.

    Raises
    ------
    KeyboardInterrupt
        Passed on after pending work is cancelled; outcomes received so far
        were handed to ``on_result``.
    """
    per_path = [options] * len(paths) if isinstance(options, ReadOptions) else list(options)
    if len(per_path) != len(paths):
        raise ValueError("give one ReadOptions, or one per path")
    after = list(then) if then is not None else [None] * len(paths)
    if len(after) != len(paths):
        raise ValueError("give one 'then' per path")
    jobs = [(str(p), o, settings, t) for p, o, t in zip(paths, per_path, after)]
    _note_inputs(jobs)
    if scheduler:
        return _on_dask(jobs, scheduler, on_result)
    n = workers if workers is not None else default_workers()
    if n <= 1 or len(jobs) <= 1:
        return list(_each(map(_star, jobs), on_result))
    from concurrent.futures import ProcessPoolExecutor

    # chunks of at most 8 captures: one worker may still hold a whole chunk when the other
    # has finished (32 short captures: up to ~0.4 s of a 1,000-capture batch), and an
    # interrupted batch waits for the chunks in hand; a chunk's messages cost well under 1 %
    chunk = max(1, min(8, len(jobs) // (4 * n)))
    pool = ProcessPoolExecutor(max_workers=min(n, len(jobs)), initializer=_worker_init,
                               initargs=(os.getpid(), min(n, len(jobs))))
    try:
        with _sigint_held():  # the pool forks its workers as the work is submitted
            results = pool.map(_star, jobs, chunksize=chunk)
        out = list(_each(results, on_result))
    except BaseException:
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown()
    return out


def _note_inputs(jobs) -> None:
    """Record the captures and dark captures (read by workers) as inputs of this run."""
    from .fileio import note_input

    for path, opt, *_ in jobs:
        note_input(path)
        if isinstance(opt.dark, str):
            note_input(opt.dark)


def _each(results: Iterable[Outcome], on_result) -> Iterable[Outcome]:
    for r in results:
        if on_result:
            on_result(r)
        yield r


def _on_dask(jobs, address: str, on_result) -> list[Outcome]:
    from .errors import SettingsError

    try:
        from distributed import Client
    except ImportError:
        raise SettingsError("--scheduler needs Dask distributed: pip install "
                            "'flickerkit[distributed]'") from None
    try:
        client = Client(address, timeout=5, set_as_default=False)
    except (OSError, TimeoutError) as exc:
        raise SettingsError(f"cannot reach the scheduler at {address} ({exc})") from None
    try:
        futures = client.map(_star, jobs, pure=False)
        return list(_each((f.result() for f in futures), on_result))
    finally:
        client.close()
