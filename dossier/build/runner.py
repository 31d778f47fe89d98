"""Running units of work: in this process (one job) or in a pool of worker
processes, telling a progress callback how far each phase got."""
from __future__ import annotations

import multiprocessing
from concurrent.futures import ProcessPoolExecutor, as_completed
from typing import Callable

Progress = Callable[[str, int, int], None]  # (phase, done, total)
Call = tuple[Callable, tuple]  # a unit function and its arguments

#: Imported once by the forkserver, so that every worker starts with them.
WORKER_MODULES = ("dossier.build.units", "dossier.assess.evaluate", "dossier.render.pages",
                  "dossier.render.figures", "matplotlib.pyplot")


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
            self.pool = ProcessPoolExecutor(max_workers=self.jobs, mp_context=ctx)
        return self.pool

    def tell(self, phase: str, done: int, total: int) -> None:
        if self.progress:
            self.progress(phase, done, total)

    def run(self, phase: str, calls: list[Call]) -> list:
        total = len(calls)
        self.tell(phase, 0, total)
        if not calls:
            return []
        results: list = [None] * total
        if self.jobs == 1 or total == 1:
            for i, (fn, args) in enumerate(calls):
                results[i] = fn(*args)
                self.tell(phase, i + 1, total)
            return results
        pool = self.executor()
        futures = {pool.submit(fn, *args): i for i, (fn, args) in enumerate(calls)}
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


__all__ = ["Call", "Progress", "Runner", "WORKER_MODULES"]
