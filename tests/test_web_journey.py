"""A new user's journey through the web app alone: sign in, resolve every recheck, publish Markdown."""

from __future__ import annotations

import re
from pathlib import Path

from werkzeug.datastructures import MultiDict

from stetline import demo
from stetline.web import create_app
from stetline.workspace import open_workspace


def test_resolve_every_recheck_in_the_browser_and_publish(team_path: Path) -> None:
    ws = open_workspace(team_path)
    app = create_app(ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})
    reviewer, admin, editor = app.test_client(), app.test_client(), app.test_client()
    passwords = demo.demo_passwords(team_path)
    for client, name in ((reviewer, "reviewer"), (admin, "admin"), (editor, "editor")):
        assert client.post("/login", data={"name": name, "password": passwords[name]}).status_code == 303
    # the publish page says what blocks
    blocked = admin.get("/publish").get_data(as_text=True)
    assert "blurb/heronsford/parks-satisfaction" in blocked
    # the editor reverts the rewrite whose live field no longer renders (it cannot be approved as it is)
    broken = editor.get("/recheck?reason=render-failed").get_data(as_text=True)
    reverts = re.findall(r'action="(/statements/[^"]+/revert)"[^>]*>(.*?)</form>', broken, re.S)
    assert reverts, "the demo has a rewrite that no longer renders"
    for action, form in reverts:
        version = re.search(r'name="version" value="(\d+)"', form).group(1)  # type: ignore[union-attr]
        assert editor.post(action, data={"version": version}).status_code == 303
    assert "Nothing waits in recheck" in editor.get("/recheck?reason=render-failed").get_data(as_text=True)
    # the reviewer accepts every clean proposal, then approves the rest one by one from the queue
    page = reviewer.get("/recheck/accept-clean").get_data(as_text=True)
    count = int(re.search(r"(\d+) statements? waits? in recheck only because", page).group(1))  # type: ignore[union-attr]
    assert reviewer.post("/recheck/accept-clean", data={"count": str(count)}).status_code == 303
    for _ in range(30):
        queue = reviewer.get("/recheck").get_data(as_text=True)
        forms = re.findall(r'action="(/statements/[^"]+/approve)"[^>]*>(.*?)</form>', queue, re.S)
        if not forms:
            break
        action, form = forms[0]
        version = re.search(r'name="version" value="(\d+)"', form).group(1)  # type: ignore[union-attr]
        ticked = [("confirm_claim", v) for v in re.findall(r'name="confirm_claim" value="([^"]+)"', form)]
        if ticked:  # a claim the new data contradict: refused until each one is ticked
            assert reviewer.post(action, data={"version": version}).status_code == 400
        assert reviewer.post(action, data=MultiDict([("version", version), *ticked])).status_code == 303
    assert "Nothing waits in recheck" in reviewer.get("/recheck").get_data(as_text=True)
    # the admin publishes Markdown
    download = admin.post("/publish/download", data={"format": "md", "sections": "entity"})
    assert download.status_code == 200
    assert download.headers["Content-Disposition"].startswith("attachment")
    report = download.get_data(as_text=True)
    assert report.startswith("# Kestrel Sound Regional Council: Service Scorecard")
    assert "Heronsford residents remain among the most satisfied with their parks: 81% in 2025" in report
    ws.close()
