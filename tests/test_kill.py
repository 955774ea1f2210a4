"""A load killed with SIGKILL at any moment leaves the workspace as it was, or fully loaded.

Twenty loads of the second demo edition are killed after delays spread from 0.05 s to beyond
the time a whole load takes (measured first), most of them around the load's end, when it
writes; six more are killed 0 to 25 ms after the load starts writing to the database, during
and just after its commit. After each kill the workspace must open, `stetline status --json`
must work, the database must pass SQLite's integrity check, and the workspace must hold either
exactly what it held before (every count, every layer, every approval) or exactly what a
completed load gives: never part of a load. Finally an ordinary `stetline load` succeeds on a
killed workspace.

Starting Python and importing the engine takes seconds, longer than the load itself, so the
killed loads run the `stetline` command in processes forked from one warm launcher process
(the command, its options and the SIGKILL are the real ones; only the start-up is shared).
The last load runs the installed `stetline` console script, as a person would.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest
from click.testing import CliRunner

from stetline import actions, demo, loading
from stetline.cli import main
from stetline.store import ops
from stetline.workspace import DB_FILE, init_workspace, open_workspace

OBS_2025 = demo.data_file("observations-2025.csv")
TRIALS = 20
WRITE_KILLS = (0.0, 0.001, 0.003, 0.006, 0.012, 0.025)  # seconds after the load starts writing


def kill_delays(duration: float) -> list[float]:
    """TRIALS delays from 0.05 s to past a whole load, densest around its end, where it writes."""
    def spread(a: float, b: float, n: int) -> list[float]:
        return [a + (b - a) * i / (n - 1) for i in range(n)]

    return (spread(0.05, 0.55 * duration, 6) + spread(0.6 * duration, 1.2 * duration, TRIALS - 8)
            + [1.6 * duration, 2.5 * duration])


# Imports the CLI once, then for each request forks a child that runs one `stetline` command,
# kills it with SIGKILL after the requested delay unless it ended first, reaps it and reports.
LAUNCHER = r"""
import json, os, signal, sys, time, traceback
from stetline.cli import main

for line in sys.stdin:
    req = json.loads(line)
    sys.stdout.flush()
    sys.stderr.flush()
    start = time.monotonic()
    pid = os.fork()
    if pid == 0:
        log = os.open(req["log"], os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o644)
        os.dup2(log, 1)
        os.dup2(log, 2)
        try:
            main(args=req["args"], prog_name="stetline", standalone_mode=True)
            code = 0
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else 1
        except BaseException:
            traceback.print_exc()
            code = 70
        sys.stdout.flush()
        sys.stderr.flush()
        os._exit(code)
    delay, watch = req["delay"], req["watch"]
    killed = timed_out = False
    while True:
        if time.monotonic() - start > 120:  # a hung command must not hang the test run
            delay, timed_out = 0.0, True
        done, status = os.waitpid(pid, os.WNOHANG)
        if done:
            break
        if watch is not None and delay is None:
            try:
                grown = os.stat(watch["file"]).st_size > 0
            except FileNotFoundError:
                grown = False
            if grown:  # the load has started writing: kill it a moment later
                delay = time.monotonic() - start + watch["after"]
        if delay is not None and time.monotonic() - start >= delay:
            os.kill(pid, signal.SIGKILL)  # our own child, not yet reaped
            killed = True
            done, status = os.waitpid(pid, 0)
            break
        time.sleep(0.002)
    elapsed = time.monotonic() - start
    signalled = os.WIFSIGNALED(status)
    print(json.dumps({
        "killed": killed and signalled, "code": None if signalled else os.WEXITSTATUS(status),
        "elapsed": elapsed, "timed_out": timed_out,
    }), flush=True)
"""


def _env() -> dict[str, str]:
    env = {k: v for k, v in os.environ.items() if not k.startswith("STETLINE_")}
    # no helper threads in the launcher, so forking it is safe
    env.update(OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1", MKL_NUM_THREADS="1")
    return env


class Launcher:
    """The warm launcher process: run a `stetline` command, killed after a delay or not."""

    def __init__(self, cwd: Path) -> None:
        self.proc = subprocess.Popen(
            [sys.executable, "-c", LAUNCHER], stdin=subprocess.PIPE, stdout=subprocess.PIPE,
            text=True, env=_env(), cwd=cwd,
        )

    def run(self, args: list[str], log: Path, delay: float | None = None,
            watch: Path | None = None, after: float = 0.0) -> dict[str, Any]:
        """Run a command; kill it ``delay`` s after its start, or ``after`` s after ``watch`` grows."""
        assert self.proc.stdin is not None and self.proc.stdout is not None
        request = {"args": args, "log": str(log), "delay": delay,
                   "watch": None if watch is None else {"file": str(watch), "after": after}}
        self.proc.stdin.write(json.dumps(request) + "\n")
        self.proc.stdin.flush()
        line = self.proc.stdout.readline()
        assert line, f"the launcher stopped: {log.read_text() if log.exists() else ''}"
        result: dict[str, Any] = json.loads(line)
        assert not result["timed_out"], f"{' '.join(args)} hung: {log.read_text()}"
        return result

    def close(self) -> None:
        assert self.proc.stdin is not None and self.proc.stdout is not None
        self.proc.stdin.close()
        self.proc.stdout.close()
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait()


def state(path: Path) -> dict[str, Any]:
    """Everything a person would check after a crash: status, counts, layers, approvals."""
    result = CliRunner().invoke(main, ["status", "--json", "-w", str(path)], catch_exceptions=False)
    assert result.exit_code == 0, result.output
    ws = open_workspace(path)
    try:
        with ws.engine.connect() as conn:
            integrity = conn.exec_driver_sql("PRAGMA integrity_check").scalar()
        with ws.session() as s:
            return {
                "status": json.loads(result.stdout),
                "integrity": integrity,
                "counts": ops.table_counts(s),
                "layers": [(x.id, x.slot_id, x.type, x.text, x.by) for x in ops.all_active_layers(s)],
                "approvals": [(a.id, a.slot_id, a.text) for a in ops.all_active_approvals(s)],
            }
    finally:
        ws.close()


@pytest.fixture(scope="module")
def base(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The first demo edition with some human work, closed (no write-ahead log beside it)."""
    path = tmp_path_factory.mktemp("kill") / "base"
    ws = init_workspace(path)
    loading.load_edition(
        ws, demo.data_file("observations-2024.csv"), demo.data_file("topics.csv"),
        demo.data_file("entities.csv"), by=demo.ADMIN,
    )
    with ws.session() as s:
        for slot, text in list(demo.REWRITES.items())[:3]:
            actions.rewrite(s, slot, text, by=demo.EDITOR)
        actions.pin(s, demo.PINS[0], by=demo.EDITOR)
        for slot, text in demo.NOTES.items():
            actions.annotate(s, slot, text, by=demo.EXPERT)
        actions.suppress(s, demo.SUPPRESS[0], by=demo.EDITOR)
        for slot in demo.APPROVALS[:3]:
            actions.approve(s, slot, by=demo.REVIEWER)
    ws.close()
    assert not Path(str(path / DB_FILE) + "-wal").exists()
    return path


def test_a_killed_load_leaves_the_workspace_whole(base: Path, tmp_path: Path) -> None:
    before = state(base)
    assert before["layers"] and before["status"]["editions"] == 1
    launcher = Launcher(tmp_path)
    try:
        # two complete loads: how long one takes, and what it leaves (the same both times)
        durations, results = [], []
        for n in range(2):
            done_path = tmp_path / f"complete-{n}"
            shutil.copytree(base, done_path)
            log = tmp_path / f"complete-{n}.log"
            full = launcher.run(["load", str(OBS_2025), "-w", str(done_path), "--by", "admin"], log)
            assert full["code"] == 0, log.read_text()
            durations.append(full["elapsed"])
            results.append(state(done_path))
        after = results[0]
        assert results[1] == after
        assert after["status"]["editions"] == 2 and after["counts"] != before["counts"]
        assert after["layers"] == before["layers"]

        # timed kills, then kills a moment after the load starts writing (mid-commit and just after)
        trials: list[tuple[str, dict[str, Any]]] = [
            (f"killed after {d:.3f} s", {"delay": d}) for d in kill_delays(min(durations))
        ] + [(f"killed {a * 1000:.0f} ms into writing", {"after": a}) for a in WRITE_KILLS]
        outcomes: list[str] = []
        reusable: Path | None = None
        for i, (what, kill) in enumerate(trials):
            path = tmp_path / f"trial-{i:02d}"
            shutil.copytree(base, path)
            log = tmp_path / f"trial-{i:02d}.log"
            wal = Path(str(path / DB_FILE) + "-wal")
            if "after" in kill:
                kill["watch"] = wal
            run = launcher.run(["load", str(OBS_2025), "-w", str(path), "--by", "admin"], log, **kill)
            opened = wal.exists()  # the load had the database open when it ended
            assert run["killed"] or run["code"] == 0, log.read_text()
            where = f"trial {i}, {what}"
            now = state(path)
            assert now["integrity"] == "ok", where
            assert now["layers"] == before["layers"], f"{where}: a layer changed or vanished"
            if now["status"]["editions"] == before["status"]["editions"]:
                assert now["counts"] == before["counts"], f"{where}: part of a load was kept"
                assert now["status"] == before["status"] and now["approvals"] == before["approvals"], where
                outcomes.append("untouched, database open" if opened and run["killed"] else "untouched")
                if opened and run["killed"]:
                    reusable = path
            else:
                assert now["status"]["editions"] == before["status"]["editions"] + 1, where
                assert now["counts"] == after["counts"], f"{where}: the load is incomplete"
                assert now["status"] == after["status"] and now["approvals"] == after["approvals"], where
                outcomes.append("loaded" + (", killed after the commit" if run["killed"] else ""))
        # the kills landed while the load ran, not only before or after it
        assert outcomes.count("untouched, database open") >= 3, outcomes
        assert any(o.startswith("loaded") for o in outcomes), outcomes
    finally:
        launcher.close()

    # a person's next ordinary load on a killed workspace succeeds and gives the complete result
    assert reusable is not None
    script = Path(sys.executable).with_name("stetline")
    run = subprocess.run(
        [str(script), "load", str(OBS_2025), "-w", str(reusable), "--by", "admin"],
        capture_output=True, text=True, env=_env(), timeout=120,
    )
    assert run.returncode == 0, run.stderr
    assert "edition 2025" in run.stdout
    final = state(reusable)
    assert final["counts"] == after["counts"] and final["status"] == after["status"]
    assert final["layers"] == before["layers"]
