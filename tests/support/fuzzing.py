"""Shared pieces of the fuzz tests: a per-input time bound and the count of inputs tried."""
from __future__ import annotations

import contextlib
import signal
from collections import Counter


class Hang(Exception):
    """An input took longer than its bound: the code under test hung."""


PER_INPUT_SECONDS = 20


@contextlib.contextmanager
def bounded(seconds: int = PER_INPUT_SECONDS):
    """Fail (raise Hang) if the block runs longer than ``seconds``."""
    def _alarm(signum, frame):
        raise Hang(f"input took longer than {seconds} s")

    old = signal.signal(signal.SIGALRM, _alarm)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)


def report(tried: Counter, module: str) -> None:
    """Print the number of inputs tried per target (visible with -s)."""
    for target, n in sorted(tried.items()):
        print(f"\nfuzz inputs tried: {target}: {n}", end="")
    print(f"\nfuzz inputs tried in {module}: {sum(tried.values())}")
