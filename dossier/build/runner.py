"""Running units of work: in this process (one job) or in a pool of worker
processes, telling a progress callback how far each phase got.

No worker outlives the build.  The fork server lives as long as any worker
does (every worker holds its "alive" pipe), so a worker cannot wait for its
parent to die: each worker watches the building process itself, through a
pidfd (``os.pidfd_open``; polling where there is none), and kills itself
the moment that process is gone, however it ended (SIGKILL included).  It
also asks the kernel for SIGKILL when its parent dies (``PR_SET_PDEATHSIG``:
the building process itself where workers are spawned).  With the workers
gone the fork server sees its pipe close and exits, and the resource tracker
follows.  A run of one job, or of one unit, starts no process at all.
"""
from __future__ import annotations

import contextlib
import ctypes
import ctypes.util
import gc
import multiprocessing
import os
import select
import signal
import threading
from concurrent.futures import Future, ProcessPoolExecutor, as_completed
from typing import Callable, NamedTuple

Progress = Callable[[str, int, int], None]  # (phase, done, total)
Call = tuple[Callable, tuple]  # a unit function and its arguments

#: Imported once by the forkserver, so that every worker starts with them.
WORKER_MODULES = ("dossier.build.units", "dossier.assess.evaluate", "dossier.render.pages",
                  "dossier.render.figures", "matplotlib.pyplot")


_PR_SET_PDEATHSIG = 1  # from <linux/prctl.h>

#: The cyclic garbage collector's youngest-generation threshold while a build runs
#: (CPython's default: 700 container objects).  A build allocates millions of
#: short-lived objects (figures, layout boxes) on top of a large, long-lived heap
#: (matplotlib, weasyprint, sympy and numpy loaded); at the default the collector
#: ran about eight full collections over that heap in a one-case build with its
#: packets, 0.7-1.0 s of a 6 s build.  At 30,000 (and a collection of the
#: youngest generation after each unit, :func:`run_unit`) it ran none and took
#: 0.35-0.4 s.  The price is memory: cyclic garbage waits longer, so a cold
#: 10-case build with packets and 2 workers peaked at about 834 MiB (process
#: tree) against 725 MiB at the default (922 MiB without the collection after
#: each unit); garbage without cycles is freed at once whatever the threshold.
GC_THRESHOLD0 = 30_000


def _raise_threshold() -> None:
    first, *older = gc.get_threshold()
    gc.set_threshold(max(GC_THRESHOLD0, first), *older)


@contextlib.contextmanager
def fewer_collections():
    """Run the block with the collector's first threshold at :data:`GC_THRESHOLD0`
    (restored afterwards, so `dossier serve` between builds is as before)."""
    before = gc.get_threshold()
    _raise_threshold()
    try:
        yield
    finally:
        gc.set_threshold(*before)


def bind_to_parent(build_pid: int) -> None:
    """Pool initializer: die with the parent; exit now if the build is already gone.
    A worker lives only for the build, so it keeps the build's collector setting
    (:data:`GC_THRESHOLD0`) to the end."""
    _raise_threshold()
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or None, use_errno=True)
        libc.prctl(_PR_SET_PDEATHSIG, signal.SIGKILL, 0, 0, 0)
    except (OSError, AttributeError):  # not Linux: the checks below still apply
        pass
    if os.getppid() == 1 or not process_exists(build_pid):
        os._exit(1)  # the build died before this worker could watch it
    threading.Thread(target=watch_build, args=(build_pid,), name="dossier-watch-build",
                     daemon=True).start()


def watch_build(build_pid: int) -> None:
    """In a worker: wait for the building process to end, then end this worker."""
    try:
        fd = os.pidfd_open(build_pid)
    except (AttributeError, OSError):  # no pidfd (old kernel, other system): poll
        while process_exists(build_pid):
            select.select([], [], [], 0.5)
    else:
        select.select([fd], [], [])  # readable once the process has exited
    os.kill(os.getpid(), signal.SIGKILL)


def process_exists(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # exists, owned by someone else
        return True
    return True


def run_unit(fn: Callable, *args):
    """Run one unit, then collect the youngest generation: most of the cyclic
    garbage the unit left (its figures and laid-out documents) is freed before the
    next unit instead of waiting, in the older generations, for a full collection
    (see :data:`GC_THRESHOLD0`)."""
    try:
        return fn(*args)
    finally:
        gc.collect(0)


class Pending(NamedTuple):
    """Calls handed to :meth:`Runner.submit`: their futures (None: run at collect)."""

    phase: str
    calls: list[Call]
    futures: dict[Future, int] | None


class Runner:
    """Runs unit functions in order of submission; results come back in that order."""

    def __init__(self, jobs: int, progress: Progress | None, packets: bool = False):
        self.jobs = jobs
        self.progress = progress
        self.packets = packets
        self.pool: ProcessPoolExecutor | None = None

    def executor(self) -> ProcessPoolExecutor:
        if self.pool is None:
            # forkserver: workers fork from a clean server process that has the
            # heavy modules imported once (fork from a process with threads,
            # e.g. `dossier serve`, is unsafe; spawn re-imports per worker)
            methods = multiprocessing.get_all_start_methods()
            ctx = multiprocessing.get_context("forkserver" if "forkserver" in methods else "spawn")
            if "forkserver" in methods:
                ctx.set_forkserver_preload(
                    [*WORKER_MODULES, *(["weasyprint"] if self.packets else [])])
            self.pool = ProcessPoolExecutor(max_workers=self.jobs, mp_context=ctx,
                                            initializer=bind_to_parent,
                                            initargs=(os.getpid(),))
        return self.pool

    def tell(self, phase: str, done: int, total: int) -> None:
        if self.progress:
            self.progress(phase, done, total)

    def run(self, phase: str, calls: list[Call]) -> list:
        """Run ``calls`` and wait for them; one job, or one call, runs here in order."""
        return self.collect(self.submit(phase, calls, ahead=False))

    def submit(self, phase: str, calls: list[Call], ahead: bool = True) -> Pending:
        """Hand ``calls`` to the workers now, to be waited for by :meth:`collect`.

        With ``ahead`` (the default) they queue behind what was submitted before and
        fill the workers that finish it early (a phase's last units otherwise leave
        workers idle); with one job they run at :meth:`collect`, in order."""
        if self.jobs == 1 or not calls or (len(calls) == 1 and not ahead):
            return Pending(phase, calls, None)
        pool = self.executor()
        return Pending(phase, calls, {pool.submit(run_unit, fn, *args): i
                                      for i, (fn, args) in enumerate(calls)})

    def collect(self, pending: Pending) -> list:
        """The results of submitted calls, in their order, telling the progress."""
        phase, calls, futures = pending
        total = len(calls)
        self.tell(phase, 0, total)
        results: list = [None] * total
        if futures is None:
            for i, (fn, args) in enumerate(calls):
                results[i] = run_unit(fn, *args)
                self.tell(phase, i + 1, total)
            return results
        try:
            for done, fut in enumerate(as_completed(futures), 1):
                results[futures[fut]] = fut.result()
                self.tell(phase, done, total)
        except BaseException:
            for fut in futures:
                fut.cancel()
            raise
        return results

    def close(self) -> None:
        if self.pool is not None:
            self.pool.shutdown(wait=True, cancel_futures=True)
            self.pool = None


__all__ = ["Call", "GC_THRESHOLD0", "Pending", "Progress", "Runner", "WORKER_MODULES", "bind_to_parent",
           "fewer_collections", "process_exists", "run_unit", "watch_build"]
