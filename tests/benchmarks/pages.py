"""Page latency at two sizes: the entity page, the topic page, the recheck queue and the statement page.

``python tests/benchmarks/pages.py --measure SMALL BIG [--requests 100]`` opens both workspaces'
web apps in this process (Flask's test client: no network, the server's own work only), asks
for each page ``--requests`` times in each after a few warm-up requests, a different entity or
topic each time, alternating between the two workspaces so that a busy moment of the machine
hits both alike, and prints the times as JSON. ``bench.py`` runs it on a 3,000-statement
workspace and the full-size one and prints the ratios of their medians and 95th percentiles;
the pages are paged (50 statements), so the ratios stay near 1 when the queries use their
indexes and grow with the workspace when they scan.

The statement page is asked for twice over: ``statement page (cold)`` shows blurbs never shown
before in the process (its two charts are drawn with matplotlib, the series one with a line for
every entity of the level, so it grows with the number of entities), then ``statement page (warm)``
shows the same blurbs again, in the same order, when their chart specs and drawings are read from
the caches keyed by the statement's digest (stetline.web.charts, stetline.charts). The two
workspaces' chart folders start empty in a benchmark run; a cold page that finds its chart file
there (a run in a kept folder) reads it instead of drawing.
"""

from __future__ import annotations

import argparse
import gc
import json
import random
import statistics
import sys
import time
from pathlib import Path

COLD, WARM = "statement page (cold)", "statement page (warm)"
PAGES = ("entity page", "topic page", "recheck queue", COLD, WARM)  # the cold page comes before the warm one
WARM_UP = 5


class _Site:
    """One workspace's web app in this process, with the pages to ask for."""

    def __init__(self, ws_path: Path, random_state: int) -> None:
        from stetline.store import ops
        from stetline.web import create_app
        from stetline.workspace import open_workspace

        self.ws = open_workspace(ws_path)
        with self.ws.reading() as s:
            self.entities = [e.key for e in ops.entity_rows(s)]
            self.topics = [t.key for t in ops.topic_rows(s)]
            self.in_recheck = ops.count_slots(s, ops.SlotFilter(status="recheck"))
        self.client = create_app(self.ws, {"TESTING": True}).test_client()
        self.rng = random.Random(random_state)
        cells = len(self.entities) * len(self.topics)
        # blurbs (drafted with the default kinds and with every kind) in an order of their own, never repeated cold
        self.fresh = iter(self.rng.sample(range(cells), cells))
        self.shown: list[str] = []
        self.again = 0

    def url(self, page: str) -> str:
        """A page's address: a different entity or topic each time; a statement never shown before
        (cold), or one shown cold before, in the order they were (warm)."""
        if page == "entity page":
            return f"/entities/{self.rng.choice(self.entities)}"
        if page == "topic page":
            return f"/topics/{self.rng.choice(self.topics)}"
        if page == COLD:
            entity, topic = divmod(next(self.fresh), len(self.topics))
            self.shown.append(f"/statements/blurb/{self.entities[entity]}/{self.topics[topic]}")
            return self.shown[-1]
        if page == WARM:
            self.again += 1
            return self.shown[(self.again - 1) % len(self.shown)]
        return "/recheck"

    def time(self, page: str) -> float:
        """Seconds to serve the page once."""
        address = self.url(page)
        start = time.perf_counter()
        response = self.client.get(address)
        took = time.perf_counter() - start
        if response.status_code != 200:
            raise SystemExit(f"{address}: HTTP {response.status_code}")
        if page in (COLD, WARM) and response.data.count(b"data:image/svg+xml") < 2:
            raise SystemExit(f"{address}: the page shows no series and ranking charts")
        return took


def measure(small_path: Path, big_path: Path, requests: int) -> dict[str, dict[str, list[float]]]:
    """Seconds per request of each page in both workspaces, ``requests`` times each after a
    warm-up, the two asked alternately so that a busy moment of the machine hits both alike."""
    sites = {"small": _Site(small_path, 11), "big": _Site(big_path, 11)}
    try:
        out: dict[str, dict[str, list[float]]] = {name: {} for name in sites}
        for page in PAGES:
            for name, site in sites.items():
                out[name][page] = []
                for _ in range(WARM_UP):
                    site.time(page)
            # What the set-up and warm-up left (modules, both apps, caches) is moved out of the
            # collector's reach: a full collection's pause grows with everything this measuring
            # process holds, not with either workspace, and would land at random on one side.
            gc.collect()
            gc.freeze()
            for _ in range(requests):
                for name, site in sites.items():
                    out[name][page].append(site.time(page))
        for name, site in sites.items():
            out[name]["_in_recheck"] = [float(site.in_recheck)]
        return out
    finally:
        for site in sites.values():
            site.ws.close()


def percentile(values: list[float], q: float) -> float:
    """The q-th percentile (0 to 100), by linear interpolation between the closest ranks
    (numpy's default method, as in ``numpy.percentile``)."""
    ordered = sorted(values)
    if len(ordered) == 1:
        return ordered[0]
    pos = (len(ordered) - 1) * q / 100
    low = int(pos)
    high = min(low + 1, len(ordered) - 1)
    return ordered[low] + (ordered[high] - ordered[low]) * (pos - low)


def summary(times: list[float]) -> tuple[float, float]:
    """Median and 95th percentile."""
    return statistics.median(times), percentile(times, 95)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--measure", type=Path, nargs=2, required=True, metavar=("SMALL", "BIG"),
                        help="the two workspace folders")
    parser.add_argument("--requests", type=int, default=100)
    args = parser.parse_args(argv)
    json.dump(measure(args.measure[0], args.measure[1], args.requests), sys.stdout)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
