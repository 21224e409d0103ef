"""A real Jupyter server and headless Debian Chromium for the browser tests (marker ``browser``).

One server per module, on 127.0.0.1 with a token and a free port, serves both
JupyterLab 4 (``/lab``) and Notebook 7 (``/notebooks``); one Chromium profile
per module, driven by Playwright's Python API. Each front end opens its own
copy of the probe notebook in its own folder (so the two never share a
kernel or a state file), and its page and kernel are closed by the fixture
that opened them. Everything started here is stopped here, even when a test
fails. In CI (``CI`` set) a missing Chromium or Playwright is a failure,
elsewhere a skip with the reason.
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
# settings overrides: no news or update toasts (BROWSER-TESTING.md)
OVERRIDES = {
    "@jupyterlab/apputils-extension:notification": {"fetchNews": "false", "checkForUpdates": False}
}
#: where screenshots go (CDFSKETCH_SHOTS, else test-artifacts/ in the checkout)
SHOTS = Path(os.environ.get("CDFSKETCH_SHOTS") or HERE.parents[1] / "test-artifacts")

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


class Server:
    """The running server and the browser context."""

    def __init__(self, base: str, token: str, root: Path, context) -> None:
        self.base, self.token, self.root, self.context = base, token, root, context

    def api(self, method: str, path: str) -> object:
        req = urllib.request.Request(
            f"{self.base}{path}", method=method, headers={"Authorization": f"token {self.token}"}
        )
        with urllib.request.urlopen(req, timeout=10) as r:
            body = r.read()
        return json.loads(body) if body else None

    def delete_sessions(self) -> None:
        """Shut down every kernel this server runs (kernels outlive their pages)."""
        for s in self.api("GET", "/api/sessions") or []:  # type: ignore[union-attr]
            self.api("DELETE", f"/api/sessions/{s['id']}")


class Page:
    """A front end (``"lab"`` or ``"notebook"``) with its probe notebook open and run."""

    def __init__(self, page, root: Path, frontend: str) -> None:
        self.page = page
        self.root = root
        self.frontend = frontend

    def state(self) -> dict:
        """The spec the notebook's editor autosaved last (the kernel's state)."""
        return json.loads((self.root / "state.json").read_text(encoding="utf-8"))

    def kernel(self) -> dict:
        """What the probe cell reports about the editor (selection, locks, message)."""
        return json.loads((self.root / "probe.json").read_text(encoding="utf-8"))

    def settle(self, timeout: float = 20.0, quiet: float = 0.5) -> dict:
        """Wait until the autosaved spec has not changed for ``quiet`` seconds."""
        end = time.monotonic() + timeout
        path = self.root / "state.json"
        last = (path.stat().st_mtime_ns, path.read_bytes())
        stable_since = time.monotonic()
        while time.monotonic() < end:
            time.sleep(0.05)
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

    def shot(self, name: str) -> Path:
        """A screenshot of the whole page, saved as ``<frontend>-<name>.png`` in SHOTS."""
        SHOTS.mkdir(parents=True, exist_ok=True)
        path = SHOTS / f"{self.frontend}-{name}.png"
        self.page.screenshot(path=str(path))
        return path


@pytest.fixture(scope="module")
def server(tmp_path_factory) -> Iterator[Server]:
    if not Path(CHROMIUM).exists():
        _missing(CHROMIUM)
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        _missing("the playwright Python package")
    root = tmp_path_factory.mktemp("jupyter-root")
    settings = tmp_path_factory.mktemp("lab-settings")
    (settings / "overrides.json").write_text(json.dumps(OVERRIDES), encoding="utf-8")
    port, token = _free_port(), os.urandom(12).hex()
    cmd = [
        sys.executable, "-m", "jupyterlab", "--no-browser", "--ip=127.0.0.1", f"--port={port}",
        "--port-retries=0", "--allow-root", f"--IdentityProvider.token={token}",
        f"--ServerApp.root_dir={root}", "--LabApp.expose_app_in_browser=True",
        "--JupyterNotebookApp.expose_app_in_browser=True",
        f"--LabApp.app_settings_dir={settings}", "--LabApp.news_url=None",
    ]  # fmt: skip
    log = open(root.parent / f"jupyter-{port}.log", "wb")  # closed in the finally below
    proc = subprocess.Popen(cmd, stdout=log, stderr=subprocess.STDOUT, cwd=root)
    base = f"http://127.0.0.1:{port}"
    try:
        for _ in range(300):
            try:
                urllib.request.urlopen(f"{base}/api/status?token={token}", timeout=1)
                break
            except OSError:
                if proc.poll() is not None:
                    raise RuntimeError("the jupyter server exited; see the log") from None
                time.sleep(0.1)
        profile = tmp_path_factory.mktemp("chromium-profile")
        with sync_playwright() as pw:
            ctx = pw.chromium.launch_persistent_context(
                str(profile), executable_path=CHROMIUM, headless=True, args=FLAGS,
                viewport={"width": 1400, "height": 900},
            )  # fmt: skip
            try:
                yield Server(base, token, root, ctx)
            finally:
                ctx.close()
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait()
        log.close()


def open_probe(server: Server, frontend: str) -> Iterator[Page]:
    """Open the probe notebook in ``frontend``, run it, yield the page; close page and kernel."""
    folder = server.root / frontend
    folder.mkdir()
    shutil.copy(HERE / "editor_probe.ipynb", folder / "editor_probe.ipynb")
    server.delete_sessions()
    page = server.context.new_page()
    page.set_viewport_size({"width": 1400, "height": 900})
    route = "lab/tree" if frontend == "lab" else "notebooks"
    try:
        page.goto(f"{server.base}/{route}/{frontend}/editor_probe.ipynb?token={server.token}")
        probe = Page(page, folder, frontend)
        _wait_kernel(probe)
        page.evaluate("() => window.jupyterapp.commands.execute('notebook:run-all-cells')")
        page.wait_for_selector(".cdfsketch-cdf .object_grp", state="attached", timeout=90_000)
        for _ in range(200):
            if (folder / "state.json").exists():
                break
            time.sleep(0.1)
        probe.settle()
        yield probe
    finally:
        page.close()
        server.delete_sessions()


@pytest.fixture(scope="class")
def lab(server) -> Iterator[Page]:
    yield from open_probe(server, "lab")


@pytest.fixture(scope="class")
def notebook7(server) -> Iterator[Page]:
    yield from open_probe(server, "notebook")


def _wait_kernel(probe: Page, timeout: float = 90.0) -> None:
    """Poll jupyterapp until the session's kernel is ready, connected, idle, same id twice."""
    end = time.monotonic() + timeout
    prev = None
    while time.monotonic() < end:
        probe.dismiss()
        try:
            info = probe.page.evaluate(WAIT_KERNEL_JS)
        except Exception:  # the page is still loading
            info = None
        ok = bool(info) and info["status"] == "idle" and info["conn"] == "connected"
        if ok and prev is not None and prev == info["id"]:
            return
        prev = info["id"] if ok else None
        time.sleep(0.25)
    raise AssertionError("the notebook's kernel did not become ready")
