"""Browser fixtures: Debian's Chromium driven by Playwright, and JupyterLab on 127.0.0.1.

Skipped where Chromium is not installed (``apt-get install -y chromium``; .ci/run does it).
Playwright never downloads a browser here: it launches /usr/bin/chromium, and every request
that is not to 127.0.0.1 or a local file is aborted.
"""

from __future__ import annotations

import os
import secrets
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

CHROMIUM = "/usr/bin/chromium"
ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
        "--disable-component-update", "--no-first-run", "--disable-sync"]
ARTIFACTS = Path(__file__).resolve().parents[2] / "test-artifacts"


def _need_browser():
    if not Path(CHROMIUM).exists():
        pytest.skip("Debian's chromium is not installed (apt-get install -y chromium)")
    return pytest.importorskip("playwright.sync_api")


@pytest.fixture(scope="session")
def browser():
    api = _need_browser()
    with api.sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        yield b
        b.close()


@pytest.fixture
def page(browser):
    context = browser.new_context(viewport={"width": 1280, "height": 1400})
    blocked = []

    def only_local(route):
        url = route.request.url
        if url.startswith(("http://127.0.0.1", "file://", "data:", "blob:", "ws://127.0.0.1")):
            route.continue_()
        else:
            blocked.append(url)
            route.abort()

    context.route("**/*", only_local)
    pg = context.new_page()
    pg.blocked = blocked
    yield pg
    context.close()


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="session")
def jupyterlab(tmp_path_factory):
    _need_browser()
    pytest.importorskip("jupyterlab")
    root = tmp_path_factory.mktemp("lab")
    for name in ("config", "runtime", "workspaces", "data", "notebooks"):
        (root / name).mkdir()
    token = secrets.token_hex(16)
    port = _free_port()
    env = {**os.environ, "JUPYTER_CONFIG_DIR": str(root / "config"),
           "JUPYTER_RUNTIME_DIR": str(root / "runtime"),
           "JUPYTERLAB_WORKSPACES_DIR": str(root / "workspaces")}
    cmd = [sys.executable, "-m", "jupyter", "lab", "--no-browser", "--ServerApp.ip=127.0.0.1",
           f"--ServerApp.port={port}", f"--IdentityProvider.token={token}", "--allow-root",
           f"--ServerApp.root_dir={root / 'notebooks'}",
           f"--LabApp.workspaces_dir={root / 'workspaces'}", "--ServerApp.open_browser=False"]
    log = open(root / "lab.log", "w")
    proc = subprocess.Popen(cmd, env=env, stdout=log, stderr=subprocess.STDOUT)
    url = f"http://127.0.0.1:{port}"
    deadline = time.time() + 60
    while time.time() < deadline:
        try:
            urllib.request.urlopen(f"{url}/api/status?token={token}", timeout=2)
            break
        except OSError:
            if proc.poll() is not None:
                raise RuntimeError((root / "lab.log").read_text())
            time.sleep(0.5)
    else:
        proc.terminate()
        raise RuntimeError("JupyterLab did not start within 60 s:\n" + (root / "lab.log").read_text())
    yield {"url": url, "token": token, "root": root / "notebooks"}
    proc.terminate()
    try:
        proc.wait(10)
    except subprocess.TimeoutExpired:
        proc.kill()
    log.close()
    shutil.rmtree(root / "runtime", ignore_errors=True)


def screenshot(page, name: str) -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    path = ARTIFACTS / f"{name}.png"
    page.screenshot(path=str(path), full_page=False)
    return path
