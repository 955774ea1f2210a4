"""Benchmark of a load at scale, as ratios against a floor measured in the same run.

Run as ``python tests/benchmarks/bench.py [--entities 1000 --topics 100 --periods 5]``.

Every figure is a ratio of two times taken on the same machine in the same run, so a busy or
slow machine moves both sides alike:

* ``load vs floor``: a first ``stetline load`` (the console script, in a subprocess) against a
  floor: one subprocess started the same way that imports pandas and Jinja2, reads the same
  observations file with pandas, renders one compiled template of about the size of the
  built-in ones per slot of the load, and inserts as many rows (slot id, text, JSON evidence)
  into a fresh SQLite file in one transaction;
* ``load vs bare floor``: the same first load against a barer floor: one process that imports
  pandas and Jinja2, reads the observations, renders a one-line compiled template per slot and
  inserts one row per slot (slot id, text, a two-fact JSON) into a table with one index;
* ``refresh``: loading the second edition against the first load;
* ``no-op refresh``: loading the second edition's file again as a new edition against the first
  load; no draft, layer or approval row may be written;
* ``memory``: the peak resident set size of the first load;
* ``cli help`` and ``cli status``: the median time of ``stetline --help`` and of ``stetline status``
  on the full-size workspace against a bare process that imports click and SQLAlchemy and runs
  one query on the same database (see ``startup.py``);
* ``pages``: the median and 95th-percentile times of the entity page, the topic page and the
  recheck queue on the full-size workspace (after its refresh) divided by the same on a
  workspace of about 3,000 statements (20 entities x 50 topics, refreshed the same way, with
  human work on one slot in ten so that its queue holds more than a page); see ``pages.py``.

Each line reads ``name: ratio (target ...) PASS|FAIL [raw seconds]``; with GNU time present the
raw figures include each process's CPU time, a steadier guide than wall time on a shared machine.

Between the first and the second edition some human work is added (rewrites, pins, notes,
suppressions, approvals), so the refreshes reconcile against it as a real one would.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import shutil
import sqlite3
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

HERE = Path(__file__).resolve().parent
GNU_TIME = "/usr/bin/time"
BY = "bench"

TARGET_LOAD = 2.0
TARGET_BARE = 3.0
TARGET_START = 2.0
TARGET_REFRESH = 1.5
TARGET_NOOP = 0.5
TARGET_MEMORY_MB = 2048
TARGET_REFRESH_MEMORY_MB = 1536
TARGET_PAGES = 1.5
#: the issue measures with every kind drafted, whatever a new workspace's default
ALL_KINDS = "headline,profile,roundup,blurb,standing,change,trend,leaders,movement"
SMALL = (20, 50)  # entities x topics of the 3,000-statement workspace the pages compare against

# -- the floor ------------------------------------------------------------------------------

FLOOR_TEMPLATE = """\
{#- a template shaped like the built-in ones: branches, a filter chain, joined extras -#}
{% if state == "confidential" %}
The {{ period }} figure for {{ lower_label }} in {{ name }} is withheld for confidentiality.
{% elif ev.value == "missing" %}
No {{ period }} figure for {{ lower_label }} is available for {{ name }}.
{% else %}
{% set extras = [group_text, target_text] | select | list %}
{% if p == 0 %}
{{ label }} in {{ name }} was {{ ev.value }}{{ caveat }} in {{ period }}
{%- if ranked %}, {{ rank_text }}{% endif %}
{%- if extras %}{{ "," if ranked else "" }} {{ extras | join(" and ") }}{% endif %}.
{% else %}
{% if ranked %}
{{ name }} was {{ rank_text }} for {{ lower_label }} in {{ period }}, at {{ ev.value }}{{ caveat }}
{%- else %}
{{ name }} recorded {{ ev.value }}{{ caveat }} for {{ lower_label }} in {{ period }}
{%- endif %}
{%- if extras %}, {{ extras | join(" and ") }}{% endif %}.
{% endif %}
{% endif %}
"""


def floor_main(observations: str, slots: int, db_path: str) -> None:
    """The floor's work: read, render one template per slot, insert one row per slot."""
    import jinja2
    import pandas as pd

    frame = pd.read_csv(observations)
    env = jinja2.Environment(autoescape=False, undefined=jinja2.StrictUndefined,
                             trim_blocks=True, lstrip_blocks=True)
    template = env.from_string(FLOOR_TEMPLATE)
    rows = list(frame.itertuples(index=False, name=None))
    n_rows = len(rows)
    out = []
    for i in range(slots):
        entity, topic, period, value, _margin, status = rows[i % n_rows]
        shown = f"{value:,.1f}%"
        evidence = {
            "period": {"value": str(period), "shown": str(period)},
            "status": {"value": status if isinstance(status, str) else "", "shown": "final"},
            "value": {"value": round(float(value), 10), "shown": shown},
            "rank": {"value": i % 997 + 1, "shown": f"{i % 997 + 1}th"},
            "group_mean": {"value": round(float(value) * 0.97, 10), "shown": f"{value * 0.97:,.1f}%"},
        }
        variables = {
            "name": f"Area {entity}", "label": f"Topic {topic}", "lower_label": f"topic {topic}",
            "period": period, "caveat": "", "state": "", "ranked": i % 3 != 0,
            "rank_text": f"{i % 997 + 1}th best of 1,000 areas", "group_text": f"above the group average of {shown}",
            "target_text": "" if i % 2 else "meeting the target of 75.0%",
        }
        text = template.render(variables, p=i % 2, ev={k: v["shown"] for k, v in evidence.items()})
        out.append((f"standing/{entity}/{topic}/{i}", text.strip(), json.dumps(evidence)))
    _write_floor_rows(db_path, out)


def _write_floor_rows(db_path: str, rows: list[tuple[str, str, str]]) -> None:
    """Insert the floors' drafts into a one-index table, in one transaction (what both floors write)."""
    con = sqlite3.connect(db_path, isolation_level=None)
    con.execute("CREATE TABLE draft (slot_id TEXT PRIMARY KEY, text TEXT, evidence TEXT)")
    con.execute("BEGIN")
    con.executemany("INSERT INTO draft VALUES (?, ?, ?)", rows)
    con.execute("COMMIT")
    con.close()


BARE_TEMPLATE = "{{ name }}: {{ label }} was {{ value }} in {{ period }}."


def bare_floor_main(observations: str, slots: int, db_path: str) -> None:
    """The bare floor: read, render a one-line template per slot, insert one row with a two-fact JSON."""
    import jinja2
    import pandas as pd

    frame = pd.read_csv(observations)
    template = jinja2.Environment(autoescape=False).from_string(BARE_TEMPLATE)
    rows = list(frame.itertuples(index=False, name=None))
    out = []
    for i in range(slots):
        entity, topic, period, value, _margin, _status = rows[i % len(rows)]
        text = template.render(name=entity, label=topic, value=value, period=period)
        facts = {"value": {"value": value, "shown": str(value)}, "period": {"value": period, "shown": str(period)}}
        out.append((f"standing/{entity}/{topic}/{i}", text, json.dumps(facts)))
    _write_floor_rows(db_path, out)


# -- running and timing subprocesses --------------------------------------------------------

@dataclass
class Run:
    """One timed subprocess."""

    seconds: float
    max_rss_mb: float | None
    stdout: str
    cpu_seconds: float | None = None  # user + system time, when GNU time reports it
    #: with ``memory=True``: self_mb, children_mb (rusage peaks) and together_mb (sampled PSS of the tree)
    memory: dict[str, float] = field(default_factory=dict)


def _env() -> dict[str, str]:
    env = dict(os.environ)
    env.pop("STETLINE_DATABASE_URL", None)
    env.pop("STETLINE_WORKSPACE", None)
    return env


def timed(cmd: list[str], cwd: Path, memory: bool = False) -> Run:
    """Run a command, timing it; with GNU time, also its peak RSS.

    ``memory``: ``cmd`` is a stetline command, run through memory.py for the peaks of the loading
    process and of its workers, and the process tree's memory is sampled while it runs.
    """
    import memory as memory_mod

    rss_file, mem_file = cwd / ".rss", cwd / ".memory.json"
    use_time = Path(GNU_TIME).exists()
    inner = memory_mod.wrapped(cmd[1:], mem_file) if memory else cmd
    full = [GNU_TIME, "-v", "-o", str(rss_file)] + inner if use_time else inner
    before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    start = time.perf_counter()
    with subprocess.Popen(full, cwd=cwd, env=_env(), stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                          text=True) as popen:
        sampler = memory_mod.Sampler(popen.pid) if memory else None
        while True:
            try:
                stdout, stderr = popen.communicate(timeout=memory_mod.SAMPLE_EVERY if sampler else None)
                break
            except subprocess.TimeoutExpired:
                if sampler:
                    sampler.sample()
    seconds = time.perf_counter() - start
    proc = subprocess.CompletedProcess(full, popen.returncode, stdout, stderr)
    if proc.returncode != 0:
        sys.stderr.write(proc.stdout + proc.stderr)
        raise SystemExit(f"command failed ({proc.returncode}): {' '.join(cmd)}")
    peaks: dict[str, float] = {}
    if memory:
        peaks = memory_mod.read(mem_file)
        mem_file.unlink(missing_ok=True)
        if sampler and sampler.peak_mb:
            peaks["together_mb"] = sampler.peak_mb
    rss: float | None = None
    cpu: float | None = None
    if use_time and rss_file.exists():
        for line in rss_file.read_text().splitlines():
            if "Maximum resident set size" in line:
                rss = int(line.rsplit(":", 1)[1]) / 1024
            elif "User time (seconds)" in line or "System time (seconds)" in line:
                cpu = (cpu or 0.0) + float(line.rsplit(":", 1)[1])
        rss_file.unlink()
    if rss is None:
        after = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
        rss = after / 1024 if after > before else None  # kilobytes on Linux
    return Run(seconds, rss, proc.stdout, cpu, peaks)


def stetline() -> str:
    """The console script of the interpreter running this benchmark."""
    here = Path(sys.executable).parent / "stetline"
    found = str(here) if here.exists() else shutil.which("stetline")
    if not found:
        raise SystemExit("the stetline console script is not installed (pip install -e .)")
    return found


def counts(db: Path) -> dict[str, int]:
    """Row counts of the tables a load may write."""
    con = sqlite3.connect(db)
    try:
        return {t: con.execute(f"SELECT COUNT(*) FROM {t}").fetchone()[0]
                for t in ("draft", "layer", "approval", "slot", "observation", "event")}
    finally:
        con.close()


def add_human_work(ws_path: Path, share: int) -> dict[str, int]:
    """Rewrites, pins, notes, suppressions and approvals on about one slot in ``share``."""
    import random

    from stetline import actions
    from stetline.workspace import open_workspace

    con = sqlite3.connect(ws_path / "stetline.db")
    slots = [r[0] for r in con.execute("SELECT id FROM slot ORDER BY id")]
    con.close()
    rng = random.Random(7)
    chosen = rng.sample(slots, max(5, len(slots) // share)) if len(slots) >= 5 else slots
    done = {"rewrite": 0, "pin": 0, "annotate": 0, "suppress": 0, "approve": 0}
    ws = open_workspace(ws_path)
    try:
        with ws.session() as s:
            for i, slot in enumerate(chosen):
                what = ("rewrite", "pin", "annotate", "approve", "suppress", "rewrite-approve")[i % 6]
                if what.startswith("rewrite"):
                    text = (
                        "The latest figure is {{ value }}, as the tables show." if slot.startswith("standing/")
                        else "An editor's own wording of this statement."
                    )
                    actions.rewrite(s, slot, text, by="editor")
                    done["rewrite"] += 1
                    if what == "rewrite-approve":
                        actions.approve(s, slot, by="reviewer")
                        done["approve"] += 1
                elif what == "pin":
                    actions.pin(s, slot, by="editor")
                    done["pin"] += 1
                elif what == "annotate":
                    actions.annotate(s, slot, "A note on local context.", by="expert")
                    done["annotate"] += 1
                elif what == "approve":
                    actions.approve(s, slot, by="reviewer")
                    done["approve"] += 1
                else:
                    actions.suppress(s, slot, by="editor")
                    done["suppress"] += 1
    finally:
        ws.close()
    return done


# -- the benchmark --------------------------------------------------------------------------

def verdict(ok: bool) -> str:
    return "PASS" if ok else "FAIL"


def raw(run: Run) -> str:
    """A run's wall time, with its CPU time when known (less sensitive to a busy machine)."""
    cpu = f" (cpu {run.cpu_seconds:.1f} s)" if run.cpu_seconds is not None else ""
    return f"{run.seconds:.2f} s{cpu}"


def run(args: argparse.Namespace, work: Path) -> bool:
    sys.path.insert(0, str(HERE))
    import synthetic

    for name in ("STETLINE_DATABASE_URL", "STETLINE_WORKSPACE"):  # the workspace is a SQLite file here
        os.environ.pop(name, None)

    data = work / "data"
    ws = work / "ws"
    t0 = time.perf_counter()
    paths = synthetic.write(data, args.entities, args.topics, args.periods)
    n_obs = args.entities * args.topics * args.periods
    print(f"data: {args.entities} entities x {args.topics} topics x {args.periods} periods = "
          f"{n_obs:,} observations ({time.perf_counter() - t0:.1f} s to generate)", flush=True)
    cli = stetline()
    new_workspace(cli, ws, args.kinds, work)

    load = [cli, "load", "-w", str(ws), "--by", BY, "--json"]
    first = timed(load + [str(paths["observations"]), "--topics", str(paths["topics"]),
                          "--entities", str(paths["entities"])], work, memory=True)
    summary = json.loads(first.stdout)
    slots = int(summary["slots"])
    kinds = "every kind" if args.kinds == "every" else "the default kinds"
    print(f"first load: {slots:,} statements ({kinds}), {summary['observations_written']:,} "
          f"observations in {first.seconds:.2f} s ({peaks(first)})", flush=True)

    if not args.memory_only:
        floor_db = work / "floor.db"
        floor = timed([sys.executable, str(Path(__file__).resolve()), "--floor",
                       str(paths["observations"]), str(slots), str(floor_db)], work)
        print(f"floor: {floor.seconds:.2f} s", flush=True)
        bare = timed([sys.executable, str(Path(__file__).resolve()), "--bare-floor",
                      str(paths["observations"]), str(slots), str(work / "bare-floor.db")], work)
        print(f"bare floor: {bare.seconds:.2f} s", flush=True)

    t0 = time.perf_counter()
    work_done = add_human_work(ws, args.human_share)
    print("human work: " + ", ".join(f"{k} {v}" for k, v in work_done.items())
          + f" ({time.perf_counter() - t0:.1f} s)", flush=True)

    second = timed(load + [str(paths["observations2"])], work, memory=True)
    s2 = json.loads(second.stdout)
    print(f"refresh: {s2['drafts_written']:,} drafts written, {s2['sent_to_recheck']} sent to recheck, "
          f"{s2['observations_written']:,} observations in {second.seconds:.2f} s ({peaks(second)})", flush=True)

    db = ws / "stetline.db"
    before = counts(db)
    noop = timed(load + [str(paths["observations2"])], work, memory=True)
    after = counts(db)
    s3 = json.loads(noop.stdout)
    print(f"no-op refresh: edition {s3['edition']}, {s3['drafts_written']} drafts written "
          f"in {noop.seconds:.2f} s ({peaks(noop)})", flush=True)

    ok = True
    if not args.memory_only:
        import startup

        start = startup.measure(cli, ws, timed, args.start_repeats)
        small_ws = build_small(work, args.periods, args.kinds)
        pages = measure_pages(small_ws, ws, args.page_requests)
        print()
        ok &= report_load(first, floor, bare)
        ok &= report_start(start, args.start_repeats)
    else:
        print()
    r = second.seconds / first.seconds
    ok &= r <= TARGET_REFRESH
    print(f"refresh: {r:.2f} (target <= {TARGET_REFRESH:g}) {verdict(r <= TARGET_REFRESH)} "
          f"[second edition {raw(second)}, first load {raw(first)}]")
    written = [t for t in ("draft", "layer", "approval") if after[t] != before[t]]
    ok &= not written
    print("no-op rows: " + ", ".join(f"{t} {before[t]} -> {after[t]}" for t in ("draft", "layer", "approval"))
          + f" (target equal) {verdict(not written)}")
    r = noop.seconds / first.seconds
    ok &= r <= TARGET_NOOP
    print(f"no-op refresh: {r:.2f} (target <= {TARGET_NOOP:g}) {verdict(r <= TARGET_NOOP)} "
          f"[no-op {raw(noop)}, first load {raw(first)}]")
    ok &= report_memory("memory", first, TARGET_MEMORY_MB)
    ok &= report_memory("refresh memory", second, TARGET_REFRESH_MEMORY_MB)
    if not args.memory_only:
        ok &= report_pages(pages["small"], pages["big"], counts(small_ws / "stetline.db")["slot"], slots)
    return ok


def new_workspace(cli: str, ws: Path, kinds: str, work: Path) -> None:
    """A new workspace drafting the given kinds: ``default`` (a new workspace's own) or ``every`` kind."""
    timed([cli, "init", "-w", str(ws)], work)
    if kinds == "every":
        timed([cli, "settings", "-w", str(ws), "--by", BY, "kinds", ALL_KINDS], work)


def peaks(run: Run) -> str:
    """A run's memory peaks in words."""
    m = run.memory
    parts = [f"loading process {m['self_mb']:.0f} MB" if "self_mb" in m else "",
             f"largest worker {m['children_mb']:.0f} MB" if m.get("children_mb") else "no worker",
             f"all together {m['together_mb']:.0f} MB (PSS, sampled)" if "together_mb" in m else ""]
    return "peak RSS: " + ", ".join(p for p in parts if p)


def peak_mb(run: Run) -> float | None:
    """The figure a memory target is judged on: the highest of the loading process's, its largest
    worker's and the sampled sum of the whole tree (or GNU time's peak when that is all there is)."""
    known = [v for v in (run.memory.get("self_mb"), run.memory.get("children_mb"), run.memory.get("together_mb"),
                         run.max_rss_mb) if v]
    return max(known) if known else None


def report_memory(name: str, run: Run, target_mb: int) -> bool:
    """Print a memory line; True when the peak is under its target."""
    mb = peak_mb(run)
    if mb is None:
        print(f"{name}: unknown (target < {target_mb / 1024:g} GB) FAIL [peak RSS not measurable here]")
        return False
    good = mb < target_mb
    print(f"{name}: {mb / 1024:.2f} GB (target < {target_mb / 1024:g} GB) {verdict(good)} [{peaks(run)}]")
    return good


def report_load(first: Run, floor: Run, bare: Run) -> bool:
    """Print the first load's ratios against both floors; True when both meet their targets."""
    r, rb = first.seconds / floor.seconds, first.seconds / bare.seconds
    print(f"load vs floor: {r:.2f} (target <= {TARGET_LOAD:g}) {verdict(r <= TARGET_LOAD)} "
          f"[load {raw(first)}, floor {raw(floor)}]")
    print(f"load vs bare floor: {rb:.2f} (target <= {TARGET_BARE:g}) {verdict(rb <= TARGET_BARE)} "
          f"[load {raw(first)}, bare floor {raw(bare)}]")
    return r <= TARGET_LOAD and rb <= TARGET_BARE


def report_start(start: dict[str, Any], repeats: int) -> bool:
    """Print the CLI start ratios; True when both meet their target."""
    ok = True
    for name in ("help", "status"):
        (wall, cpu), (bare_wall, bare_cpu) = start[name], start["bare"]
        r = wall / bare_wall
        ok &= r <= TARGET_START
        cpu_note = f", cpu {cpu / bare_cpu:.2f} ({cpu:.2f} s vs {bare_cpu:.2f} s)" if cpu and bare_cpu else ""
        print(f"cli {name}: {r:.2f} (target <= {TARGET_START:g}) {verdict(r <= TARGET_START)} "
              f"[median of {repeats}: {wall:.2f} s vs bare {bare_wall:.2f} s{cpu_note}]")
    return ok


def build_small(work: Path, periods: int, kinds: str) -> Path:
    """The workspace the pages are compared against (20 x 50, the same kinds), refreshed once."""
    import synthetic

    paths = synthetic.write(work / "small-data", SMALL[0], SMALL[1], periods)
    ws = work / "small-ws"
    cli = stetline()
    new_workspace(cli, ws, kinds, work)
    load = [cli, "load", "-w", str(ws), "--by", BY, "--json"]
    timed(load + [str(paths["observations"]), "--topics", str(paths["topics"]),
                  "--entities", str(paths["entities"])], work)
    add_human_work(ws, 10)
    timed(load + [str(paths["observations2"])], work)
    return ws


def measure_pages(small: Path, big: Path, requests: int) -> dict[str, dict[str, list[float]]]:
    """Page times of both workspaces, measured alternately in one process of their own."""
    cmd = [sys.executable, str(HERE / "pages.py"), "--measure", str(small), str(big), "--requests", str(requests)]
    return json.loads(timed(cmd, big.parent).stdout)


def report_pages(small: dict[str, list[float]], big: dict[str, list[float]], n_small: int, n_big: int) -> bool:
    """Print the median and p95 ratio of each page; True when every ratio meets its target."""
    from pages import PAGES, summary

    ok = True
    queues = f"in recheck: {int(small['_in_recheck'][0]):,} and {int(big['_in_recheck'][0]):,}"
    for name in PAGES:
        (m_s, p_s), (m_b, p_b) = summary(small[name]), summary(big[name])
        rm, rp = m_b / m_s, p_b / p_s
        good = rm <= TARGET_PAGES and rp <= TARGET_PAGES
        ok &= good
        print(f"{name}: median {rm:.2f}, p95 {rp:.2f} (target <= {TARGET_PAGES:g}) {verdict(good)} "
              f"[{n_small:,} statements {m_s * 1000:.0f} / {p_s * 1000:.0f} ms, "
              f"{n_big:,} statements {m_b * 1000:.0f} / {p_b * 1000:.0f} ms"
              + (f"; {queues}]" if name == "recheck queue" else "]"))
    return ok


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    if argv[:1] == ["--floor"]:
        floor_main(argv[1], int(argv[2]), argv[3])
        return 0
    if argv[:1] == ["--bare-floor"]:
        bare_floor_main(argv[1], int(argv[2]), argv[3])
        return 0
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--entities", type=int, default=1000)
    parser.add_argument("--topics", type=int, default=100)
    parser.add_argument("--periods", type=int, default=5)
    parser.add_argument("--kinds", choices=("every", "default"), default="every",
                        help="the kinds drafted: every kind (as issue 17 measures; default) or a new workspace's "
                             "default kinds")
    parser.add_argument("--memory-only", action="store_true",
                        help="only the loads and their peak memory: no floors, CLI start or pages")
    parser.add_argument("--human-share", type=int, default=500,
                        help="add human work to about one slot in this many (default 500)")
    parser.add_argument("--page-requests", type=int, default=100,
                        help="requests of each page per workspace for the page ratios (default 100)")
    parser.add_argument("--start-repeats", type=int, default=5,
                        help="runs of --help, status and the bare process for the CLI ratios (default 5)")
    parser.add_argument("--keep", type=Path, default=None,
                        help="work in this folder and keep it (default: a temporary folder, removed)")
    parser.add_argument("--strict", action="store_true", help="exit 1 when a target is missed")
    args = parser.parse_args(argv)
    if args.keep is not None:
        marker = args.keep / ".stetline-bench"
        if args.keep.exists() and any(args.keep.iterdir()):
            if not marker.exists():
                parser.error(f"{args.keep} is not empty and was not made by this benchmark")
            shutil.rmtree(args.keep)
        args.keep.mkdir(parents=True, exist_ok=True)
        marker.write_text("made by tests/benchmarks/bench.py\n")
        ok = run(args, args.keep.resolve())
    else:
        with tempfile.TemporaryDirectory(prefix="stetline-bench-") as tmp:
            ok = run(args, Path(tmp))
    return 1 if (args.strict and not ok) else 0


if __name__ == "__main__":
    sys.exit(main())
