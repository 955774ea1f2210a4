"""A bounded load test: concurrent clients mixing page views and saves against the app under waitress.

Serves a copy of the demo workspace (one-person, so no sign-in) with waitress on a loopback port,
then runs CLIENTS threads, each making REQUESTS requests (a fixed number: the test stops by
itself): mostly page views (overview, an entity page, a statement page, the recheck queue) and
every fourth a save (a note on a statement, with its CSRF token and version). Afterwards it
counts, in the database, the notes that were saved: every save the app acknowledged must be
there (zero lost saves), and no request may fail (a 409 for a save that lost a race with another
is a refusal the page explains, not an error, and is counted apart).

Run: ``python tests/benchmarks/load_test.py [--clients 20] [--requests 50]``.
"""

from __future__ import annotations

import argparse
import http.cookiejar
import re
import shutil
import statistics
import sys
import tempfile
import threading
import time
import urllib.error
import urllib.parse
import urllib.request
from pathlib import Path

from stetline import demo
from stetline.store import ops
from stetline.workspace import open_workspace

SLOTS = ("blurb/tidemere/recycling", "blurb/north-quay/broadband", "blurb/larkholt-vale/population",
         "roundup/recycling", "profile/cairnbrook")  # statements the demo drafts with its default kinds
PAGES = ("/", "/entities/tidemere", "/recheck", "/topics/recycling")
TOKEN = re.compile(r'name="csrf_token" value="([^"]+)"')
VERSION = re.compile(r'action="[^"]*/annotate"[^>]*>.*?name="version" value="(\d+)"', re.S)


class Client:
    """One simulated person with its own cookie jar."""

    def __init__(self, base: str) -> None:
        self.base = base
        self.opener = urllib.request.build_opener(urllib.request.HTTPCookieProcessor(http.cookiejar.CookieJar()))

    def get(self, path: str) -> tuple[int, str]:
        with self.opener.open(self.base + path, timeout=60) as r:
            return r.status, r.read().decode("utf-8")

    def post(self, path: str, data: dict[str, str]) -> int:
        req = urllib.request.Request(self.base + path, data=urllib.parse.urlencode(data).encode(), method="POST")
        try:
            with self.opener.open(req, timeout=60) as r:
                return r.status
        except urllib.error.HTTPError as exc:
            return exc.code


def run(clients: int, requests: int) -> dict[str, float]:
    """Serve the demo and run the clients; return the counts and latency figures."""
    import logging

    from waitress.server import create_server

    logging.getLogger("waitress").setLevel(logging.ERROR)  # queue-depth notices are expected here

    from stetline.web import create_app

    tmp = Path(tempfile.mkdtemp())
    path = tmp / "demo"
    demo.build(path, echo=lambda _line: None).close()
    ws = open_workspace(path)
    with ws.session() as s:  # a one-person copy: no sign-in needed
        from sqlalchemy import delete

        from stetline.store.models import Account

        s.execute(delete(Account))
    app = create_app(ws)
    server = create_server(app, host="127.0.0.1", port=0, threads=8)
    port = server.effective_port  # type: ignore[attr-defined]
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    base = f"http://127.0.0.1:{port}"
    latencies: list[float] = []
    errors: list[str] = []
    acknowledged: list[str] = []
    refused = 0
    lock = threading.Lock()

    def person(n: int) -> None:
        nonlocal refused
        c = Client(base)
        for i in range(requests):
            start = time.perf_counter()
            try:
                if i % 4 == 3:
                    slot = SLOTS[(n + i) % len(SLOTS)]
                    _status, page = c.get(f"/statements/{slot}")
                    token, version = TOKEN.search(page), VERSION.search(page)
                    if not token or not version:
                        raise RuntimeError(f"no form on {slot}")
                    note = f"load-test note {n}-{i}"
                    status = c.post(f"/statements/{slot}/annotate",
                                    {"csrf_token": token.group(1), "version": version.group(1), "text": note,
                                     "by": f"client{n}"})
                    with lock:
                        if status in (200, 303, 302):
                            acknowledged.append(note)
                        elif status == 409:
                            refused += 1
                        else:
                            errors.append(f"save {slot}: HTTP {status}")
                else:
                    status, _page = c.get(PAGES[(n + i) % len(PAGES)])
                    if status != 200:
                        with lock:
                            errors.append(f"HTTP {status}")
            except Exception as exc:  # every failure is counted, none is hidden
                with lock:
                    errors.append(f"{type(exc).__name__}: {exc}")
            with lock:
                latencies.append(time.perf_counter() - start)

    began = time.perf_counter()
    people = [threading.Thread(target=person, args=(n,)) for n in range(clients)]
    for p in people:
        p.start()
    for p in people:
        p.join()
    elapsed = time.perf_counter() - began
    server.close()
    with ws.session() as s:
        saved = {layer.text for layer in ops.all_active_layers(s) if layer.type == "annotate"}
    ws.close()
    shutil.rmtree(tmp, ignore_errors=True)
    lost = [note for note in acknowledged if note not in saved]
    ordered = sorted(latencies)
    return {
        "requests": len(latencies), "errors": len(errors), "first_errors": errors[:5], "saves": len(acknowledged),
        "refused": refused, "lost": len(lost), "throughput": len(latencies) / elapsed,
        "p50": statistics.median(ordered) * 1000, "p95": ordered[int(0.95 * (len(ordered) - 1))] * 1000,
    }


def main(argv: list[str] | None = None) -> int:
    """Run the load test and print its figures; exit 1 on any error or lost save."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--clients", type=int, default=20)
    parser.add_argument("--requests", type=int, default=50, help="requests per client")
    args = parser.parse_args(argv)
    r = run(args.clients, args.requests)
    print(f"load test: {args.clients} clients x {args.requests} requests under waitress")
    print(f"  requests: {r['requests']}, errors: {r['errors']} (target 0)")
    print(f"  saves acknowledged: {r['saves']}, lost: {r['lost']} (target 0), refused as stale: {r['refused']}")
    print(f"  throughput: {r['throughput']:.1f} requests/s; latency p50 {r['p50']:.0f} ms, p95 {r['p95']:.0f} ms")
    for e in r["first_errors"]:
        print(f"  error: {e}")
    ok = r["errors"] == 0 and r["lost"] == 0
    print("PASS" if ok else "FAIL")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
