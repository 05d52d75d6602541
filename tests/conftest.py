"""Shared fixtures: a real dashboard server and a headless Chromium for browser tests."""
from __future__ import annotations

import os
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
ARTIFACTS = ROOT / "test-artifacts"
#: The shared browser-test server's autosave folder (one, once it is started).
SERVER_AUTOSAVE: list = []
CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run",
                 "--disable-quic"]


def free_port() -> int:
    """A free TCP port on the loopback interface."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def start_dashboard(port: int, log_path: Path, autosave_dir: Path | None = None
                    ) -> subprocess.Popen:
    """Start ``streamlit run dashboard/app.py`` headless on ``port``; exec so the PID is the
    server's own. With ``autosave_dir`` it autosaves there, not into the user's home."""
    cmd = (f"exec {sys.executable} -m streamlit run dashboard/app.py --server.headless true "
           f"--server.port {port} --server.address 127.0.0.1 "
           f"--browser.gatherUsageStats false --server.fileWatcherType none")
    log = open(log_path, "wb")
    env = dict(os.environ)
    if autosave_dir is not None:
        env["PERCH_AUTOSAVE_DIR"] = str(autosave_dir)
    return subprocess.Popen(["/bin/sh", "-c", cmd], cwd=ROOT, stdout=log,
                            stderr=subprocess.STDOUT, env=env)


def wait_healthy(port: int, proc: subprocess.Popen, timeout_s: float = 30.0) -> None:
    url = f"http://127.0.0.1:{port}/_stcore/health"
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            raise RuntimeError(f"the dashboard server stopped with code {proc.returncode}")
        try:
            with urllib.request.urlopen(url, timeout=1) as r:
                if r.read().strip() == b"ok":
                    return
        except OSError:
            pass
        time.sleep(0.1)
    raise RuntimeError(f"the dashboard did not answer {url} within {timeout_s} s")


def stop(proc: subprocess.Popen) -> None:
    """Stop the server by its PID."""
    if proc.poll() is None:
        proc.terminate()
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait(timeout=5)


def browser_available() -> tuple[bool, str]:
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        return False, "python playwright is not installed"
    if not (os.path.exists(CHROMIUM) or shutil.which("chromium")):
        return False, f"chromium not found at {CHROMIUM} (apt-get install chromium)"
    return True, ""


@pytest.fixture(scope="session")
def browser_required():
    """Skip browser tests with a reason when chromium is missing, unless
    PERCH_REQUIRE_BROWSER=1, where a missing browser fails the run."""
    ok, why = browser_available()
    if not ok:
        if os.environ.get("PERCH_REQUIRE_BROWSER") == "1":
            pytest.fail(f"browser tests are required (PERCH_REQUIRE_BROWSER=1) but {why}")
        pytest.skip(why)


@pytest.fixture(scope="session")
def dashboard_url(browser_required, tmp_path_factory):
    """URL of a freshly started dashboard server; stopped after the session. The server is
    started before any test's own autosave folder exists, so it gets a folder of its own."""
    ARTIFACTS.mkdir(exist_ok=True)
    port = free_port()
    folder = tmp_path_factory.mktemp("server-autosave")
    SERVER_AUTOSAVE.append(folder)
    proc = start_dashboard(port, ARTIFACTS / "dashboard-server.log", folder)
    try:
        wait_healthy(port, proc)
        yield f"http://127.0.0.1:{port}"
    finally:
        stop(proc)


@pytest.fixture(scope="session")
def chromium(browser_required):
    """A headless Debian Chromium driven by playwright."""
    from playwright.sync_api import sync_playwright
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=CHROMIUM, headless=True,
                                     args=CHROMIUM_ARGS)
        try:
            yield browser
        finally:
            browser.close()


def _forget_earlier_sessions() -> None:
    """Empty the shared server's autosave folder, so a page starts as a newcomer's would,
    not with the notice of the test before it."""
    for folder in SERVER_AUTOSAVE:
        for item in folder.iterdir():
            if item.is_dir():
                shutil.rmtree(item, ignore_errors=True)
            else:
                item.unlink(missing_ok=True)


@pytest.fixture
def page(chromium, dashboard_url):
    """A new browser page (fresh session) at the dashboard, with no earlier session's
    autosave on the server."""
    _forget_earlier_sessions()
    context = chromium.new_context(viewport={"width": 1400, "height": 1000})
    pg = context.new_page()
    pg.set_default_timeout(20000)
    try:
        yield pg
    finally:
        context.close()


@pytest.fixture(autouse=True)
def _autosave_in_tmp(tmp_path_factory, monkeypatch):
    """Each test autosaves into its own temporary folder, never into the user's home."""
    monkeypatch.setenv("PERCH_AUTOSAVE_DIR", str(tmp_path_factory.mktemp("autosave")))
