"""Shared test set-up: import path, CoolProp warm-up, clean Streamlit caches, browser fixtures."""

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

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:  # plain `pytest` (not only `python -m pytest`) finds sim/ and ui/
    sys.path.insert(0, str(ROOT))

# CoolProp's import takes 3-4 s; pay it here, not inside an AppTest run's timeout.
import CoolProp  # noqa: E402, F401

CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update",
                 "--disable-sync"]


@pytest.fixture(autouse=True)
def _clear_streamlit_caches():
    """Cached runs and tables must not leak from one test into the next."""
    import streamlit as st

    st.cache_data.clear()
    st.cache_resource.clear()
    yield


def _free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


@pytest.fixture
def app_url(tmp_path):
    """The app served by `streamlit run` on a free local port; stopped at teardown."""
    port = _free_port()
    log = open(tmp_path / "server.log", "w")  # noqa: SIM115 - closed at teardown
    server = subprocess.Popen(
        [sys.executable, "-m", "streamlit", "run", "app.py", "--server.headless", "true",
         "--server.port", str(port), "--server.address", "127.0.0.1",
         "--browser.gatherUsageStats", "false", "--server.fileWatcherType", "none"],
        cwd=ROOT, stdout=log, stderr=subprocess.STDOUT)
    url = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + 60.0
        while True:
            try:
                with urllib.request.urlopen(url + "/_stcore/health", timeout=1) as reply:
                    if reply.read().strip() == b"ok":
                        break
            except OSError:
                pass
            if server.poll() is not None or time.monotonic() > deadline:
                log.flush()
                pytest.fail("streamlit did not come up:\n"
                            + (tmp_path / "server.log").read_text()[-2000:])
            time.sleep(0.2)
        yield url
    finally:
        server.terminate()
        try:
            server.wait(timeout=10)
        except subprocess.TimeoutExpired:
            server.kill()
            server.wait(timeout=10)
        log.close()


@pytest.fixture
def browser():
    """Headless Debian Chromium driven by Playwright (never a downloaded browser)."""
    executable = CHROMIUM if os.path.exists(CHROMIUM) else shutil.which("chromium")
    if executable is None:
        pytest.skip(f"no Chromium at {CHROMIUM} (apt-get install chromium)")
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        pytest.skip("the playwright package is not installed (pip install playwright)")
    with sync_playwright() as p:
        chromium = p.chromium.launch(executable_path=executable, args=CHROMIUM_ARGS)
        try:
            yield chromium
        finally:
            chromium.close()
