"""A real JupyterLab and headless Debian Chromium for the browser tests (marker ``browser``).

One server and one browser page per module: the server runs on 127.0.0.1
with a token and a free port in a scratch root holding a copy of the probe
notebook; the page is a fresh Chromium profile driven by Playwright's
Python API. Both are stopped (by the process we started, and the context
manager) even when a test fails. In CI (``CI`` set) a missing Chromium or
Playwright is a failure, elsewhere a skip with the reason.
"""

from __future__ import annotations

import json
import os
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from collections.abc import Iterator
from pathlib import Path

import pytest

from ._chromium import CHROMIUM, FLAGS

HERE = Path(__file__).parent
ARTIFACTS = HERE.parents[1] / "test-artifacts"
# settings overrides: no news or update toasts (BROWSER-TESTING.md)
OVERRIDES = {
    "@jupyterlab/apputils-extension:notification": {"fetchNews": "false", "checkForUpdates": False}
}

WAIT_KERNEL_JS = """async () => {
  const app = window.jupyterapp;
  if (!app) return null;
  const w = app.shell.currentWidget;
  if (!w || !w.sessionContext) return null;
  const sc = w.sessionContext;
  const k = sc.session && sc.session.kernel;
  if (!sc.isReady || !k) return null;
  await k.info;
  return {id: k.id, status: k.status, conn: k.connectionStatus};
}"""


def _missing(reason: str) -> None:
    if os.environ.get("CI"):
        pytest.fail(f"browser tests need {reason} in CI (.ci/run installs Debian's chromium)")
    pytest.skip(f"browser tests skipped: {reason} not available")


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


class Lab:
    """A running JupyterLab page with the probe notebook open and run."""

    def __init__(self, page, root: Path) -> None:
        self.page = page
        self.root = root

    def state(self) -> dict:
        """The spec the notebook's editor autosaved last (the kernel's state)."""
        return json.loads((self.root / "state.json").read_text(encoding="utf-8"))

    def settle(self, timeout: float = 20.0, quiet: float = 0.8) -> dict:
        """Wait until the autosaved spec has not changed for ``quiet`` seconds."""
        end = time.monotonic() + timeout
        path = self.root / "state.json"
        last = (path.stat().st_mtime_ns, path.read_bytes())
        stable_since = time.monotonic()
        while time.monotonic() < end:
            time.sleep(0.1)
            now = (path.stat().st_mtime_ns, path.read_bytes())
            if now != last:
                last, stable_since = now, time.monotonic()
            elif time.monotonic() - stable_since >= quiet:
                return self.state()
        raise AssertionError("the kernel kept writing the spec; it did not settle")

    def dismiss(self) -> None:
        """Accept a kernel dialog and close toasts if any show (never wait them out)."""
        for sel in (
            ".jp-Dialog-button.jp-mod-accept",
            ".jp-toast-dismiss",
            ".Toastify__close-button",
        ):
            loc = self.page.locator(sel)
            for i in range(loc.count()):
                try:
                    loc.nth(i).click(timeout=500)
                except Exception:  # a toast can vanish between count and click
                    pass


@pytest.fixture(scope="module")
def lab(tmp_path_factory) -> Iterator[Lab]:
    if not Path(CHROMIUM).exists():
        _missing(CHROMIUM)
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        _missing("the playwright Python package")
    root = tmp_path_factory.mktemp("lab-root")
    shutil.copy(HERE / "editor_probe.ipynb", root / "editor_probe.ipynb")
    settings = tmp_path_factory.mktemp("lab-settings")
    (settings / "overrides.json").write_text(json.dumps(OVERRIDES), encoding="utf-8")
    port, token = _free_port(), os.urandom(12).hex()
    cmd = [
        sys.executable, "-m", "jupyterlab", "--no-browser", "--ip=127.0.0.1", f"--port={port}",
        "--port-retries=0", "--allow-root", f"--IdentityProvider.token={token}",
        f"--ServerApp.root_dir={root}", "--LabApp.expose_app_in_browser=True",
        f"--LabApp.app_settings_dir={settings}", "--LabApp.news_url=None",
    ]  # fmt: skip
    log = open(root.parent / f"lab-{port}.log", "wb")  # closed in the finally below
    server = subprocess.Popen(cmd, stdout=log, stderr=subprocess.STDOUT, cwd=root)
    base = f"http://127.0.0.1:{port}"
    try:
        for _ in range(200):
            try:
                urllib.request.urlopen(f"{base}/api/status?token={token}", timeout=1)
                break
            except OSError:
                if server.poll() is not None:
                    raise RuntimeError("jupyter lab exited; see the log") from None
                time.sleep(0.1)
        profile = tmp_path_factory.mktemp("chromium-profile")
        with sync_playwright() as pw:
            ctx = pw.chromium.launch_persistent_context(
                str(profile), executable_path=CHROMIUM, headless=True, args=FLAGS,
                viewport={"width": 1400, "height": 1100},
            )  # fmt: skip
            try:
                page = ctx.new_page()
                page.goto(f"{base}/lab/tree/editor_probe.ipynb?token={token}")
                lab = Lab(page, root)
                _wait_kernel(lab)
                page.evaluate("() => window.jupyterapp.commands.execute('notebook:run-all-cells')")
                page.wait_for_selector(".cdfsketch-cdf .object_grp", timeout=60_000)
                for _ in range(100):
                    if (root / "state.json").exists():
                        break
                    time.sleep(0.1)
                lab.settle()
                yield lab
            finally:
                ctx.close()
    finally:
        server.terminate()
        try:
            server.wait(timeout=10)
        except subprocess.TimeoutExpired:
            server.kill()
            server.wait()
        log.close()


def _wait_kernel(lab: Lab, timeout: float = 60.0) -> None:
    """Poll jupyterapp until the session's kernel is ready, connected, idle, same id twice."""
    end = time.monotonic() + timeout
    prev = None
    while time.monotonic() < end:
        lab.dismiss()
        try:
            info = lab.page.evaluate(WAIT_KERNEL_JS)
        except Exception:  # the page is still loading
            info = None
        ok = bool(info) and info["status"] == "idle" and info["conn"] == "connected"
        if ok and prev is not None and prev == info["id"]:
            return
        prev = info["id"] if ok else None
        time.sleep(0.25)
    raise AssertionError("the notebook's kernel did not become ready")
