"""Page latency at two sizes: the entity page, the topic page and the recheck queue.

``python tests/benchmarks/pages.py --measure WORKSPACE [--requests 40]`` opens the workspace's web
app in this process (Flask's test client: no network, the server's own work only), asks for each
page ``--requests`` times after a few warm-up requests, a different entity or topic each time,
and prints the times as JSON. ``bench.py`` runs it on a 3,000-statement workspace and on the
full-size one, each in its own process, and prints the ratios of their medians and 95th
percentiles; the pages are paged (50 statements), so the ratios stay near 1 when the queries
use their indexes and grow with the workspace when they scan.
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import sys
import time
from pathlib import Path

PAGES = ("entity page", "topic page", "recheck queue")
WARM_UP = 5


def measure(ws_path: Path, requests: int) -> dict[str, list[float]]:
    """Seconds per request of each page, ``requests`` times each, after warming up."""
    from engine.store import ops
    from engine.workspace import open_workspace
    from webapp import create_app

    ws = open_workspace(ws_path)
    try:
        with ws.reading() as s:
            entities = [e.key for e in ops.entity_rows(s)]
            topics = [t.key for t in ops.topic_rows(s)]
        app = create_app(ws, {"TESTING": True})
        client = app.test_client()
        rng = random.Random(11)
        urls = {
            "entity page": lambda: f"/entities/{rng.choice(entities)}",
            "topic page": lambda: f"/topics/{rng.choice(topics)}",
            "recheck queue": lambda: "/recheck",
        }
        out: dict[str, list[float]] = {}
        for name, url in urls.items():
            times = []
            for i in range(WARM_UP + requests):
                address = url()
                start = time.perf_counter()
                response = client.get(address)
                took = time.perf_counter() - start
                if response.status_code != 200:
                    raise SystemExit(f"{address}: HTTP {response.status_code}")
                if i >= WARM_UP:
                    times.append(took)
            out[name] = times
        with ws.reading() as s:
            out["_in_recheck"] = [float(ops.count_slots(s, ops.SlotFilter(status="recheck")))]
        return out
    finally:
        ws.close()


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
    parser.add_argument("--measure", type=Path, required=True, help="the workspace folder")
    parser.add_argument("--requests", type=int, default=40)
    args = parser.parse_args(argv)
    json.dump(measure(args.measure, args.requests), sys.stdout)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
