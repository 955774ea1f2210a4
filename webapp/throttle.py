"""Slowing down repeated failed sign-ins, per account name and client address.

Five failures for one name from one address are free; after that the address must wait before
its next try for that name, 30 seconds at first, doubling with each further failure up to
fifteen minutes. Other addresses are not affected, so someone guessing an admin's password does
not lock the admin out. The counts live in the server process's memory (a restart forgets them)
and unknown names are counted like known ones, so the waiting tells nothing about which exist.
"""

from __future__ import annotations

import threading
import time
from collections.abc import Callable

FREE_TRIES = 5
FIRST_WAIT = 30.0
MAX_WAIT = 15 * 60.0
#: the most (name, address) pairs remembered; the oldest are forgotten first
MAX_KEPT = 10_000


class Throttle:
    """Failed sign-ins per (name, client address), and how long each must wait."""

    def __init__(self, clock: Callable[[], float] = time.monotonic) -> None:
        self._clock = clock
        self._lock = threading.Lock()
        self._failures: dict[tuple[str, str], tuple[int, float]] = {}  # key -> (count, wait until)

    def wait(self, name: str, client: str) -> float:
        """Seconds the client must still wait before trying this name again (0 when it may try)."""
        with self._lock:
            _count, until = self._failures.get((name, client), (0, 0.0))
        return max(0.0, until - self._clock())

    def failed(self, name: str, client: str) -> None:
        """Count a failed sign-in; from the sixth on, the client waits before its next try."""
        key = (name, client)
        with self._lock:
            count = self._failures.pop(key, (0, 0.0))[0] + 1
            until = 0.0
            if count >= FREE_TRIES:
                until = self._clock() + min(MAX_WAIT, FIRST_WAIT * 2 ** (count - FREE_TRIES))
            self._failures[key] = (count, until)
            while len(self._failures) > MAX_KEPT:
                del self._failures[next(iter(self._failures))]

    def succeeded(self, name: str, client: str) -> None:
        """Forget the client's failures for this name after a good sign-in."""
        with self._lock:
            self._failures.pop((name, client), None)
