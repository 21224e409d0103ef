"""How the browser tests launch Debian's Chromium (see shared BROWSER-TESTING.md)."""

from __future__ import annotations

#: Debian's chromium; a browser downloaded by a test tool is not available here.
CHROMIUM = "/usr/bin/chromium"
#: Headless flags: no sandbox as root, and no background connections on a closed network.
FLAGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]
