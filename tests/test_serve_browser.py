"""`trapbook serve --read-only` in a real headless browser: the Logbook appears, writes are refused.

The browser is Debian's Chromium with its chromedriver, driven by Selenium with both
paths given (Selenium Manager must not download anything: SE_OFFLINE). The terminal is
drawn on a canvas, so the text on screen is read from what the page receives: a script
added before the page's own records every websocket message, and the test reads that
record from the page.
"""

from __future__ import annotations

import hashlib
import os
import re
import shutil
import signal
import socket
import subprocess
import sys
import time
from pathlib import Path

import pytest

CHROMIUM = "/usr/bin/chromium"
CHROMEDRIVER = "/usr/bin/chromedriver"
ROOT = Path(__file__).resolve().parents[1]

needs_chromium = pytest.mark.skipif(
    not (Path(CHROMIUM).exists() and Path(CHROMEDRIVER).exists()),
    reason="needs Debian's chromium and chromium-driver (apt-get install chromium chromium-driver)",
)

#: Records every websocket message the page receives, as text, in window.__trapbookScreen.
RECORD_SOCKET = r"""
(() => {
  window.__trapbookScreen = "";
  const decoder = new TextDecoder("utf-8");
  const Original = window.WebSocket;
  function Recorded(url, protocols) {
    const ws = protocols === undefined ? new Original(url) : new Original(url, protocols);
    ws.addEventListener("message", (event) => {
      const data = event.data;
      if (typeof data === "string") { window.__trapbookScreen += data; }
      else if (data instanceof ArrayBuffer) { window.__trapbookScreen += decoder.decode(new Uint8Array(data), {stream: true}); }
      else if (data && data.arrayBuffer) { data.arrayBuffer().then((b) => { window.__trapbookScreen += decoder.decode(new Uint8Array(b)); }); }
    });
    return ws;
  }
  Recorded.prototype = Original.prototype;
  Object.assign(Recorded, {CONNECTING: 0, OPEN: 1, CLOSING: 2, CLOSED: 3});
  window.WebSocket = Recorded;
})();
"""

ANSI = re.compile(r"\x1b\[[0-9;?<>=]*[ -/]*[@-~]|\x1b[\]P_^][^\x07\x1b]*(\x07|\x1b\\)|\x1b[()][0-9A-Za-z]|\x1b[=>]")


def _sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _wait_for(predicate, seconds: float, what: str):
    end = time.monotonic() + seconds
    while time.monotonic() < end:
        value = predicate()
        if value:
            return value
        time.sleep(0.25)
    raise AssertionError(f"gave up after {seconds:.0f} s waiting for {what}")


def _listening(port: int) -> bool:
    try:
        with socket.create_connection(("127.0.0.1", port), timeout=0.5):
            return True
    except OSError:
        return False


def _screen_text(driver) -> str:
    """What the page has been sent so far, with the terminal's escape sequences removed."""
    return ANSI.sub("", driver.execute_script("return window.__trapbookScreen || '';"))


@needs_chromium
def test_serve_read_only_shows_the_logbook_and_refuses_writes(tmp_path):
    webdriver = pytest.importorskip("selenium.webdriver", reason="needs selenium (pip install -e .[test])")
    pytest.importorskip("textual_serve", reason="needs textual-serve")
    from selenium.webdriver.chrome.service import Service
    from selenium.webdriver.common.by import By

    trapbook = [sys.executable, "-m", "trapbook"]
    db = tmp_path / "demo.sqlite"
    subprocess.run(
        trapbook + ["--db", str(db), "demo", "--no-ui", "--strain", "none"], check=True, capture_output=True, timeout=120
    )
    before = _sha(db)
    port = _free_port()
    server = subprocess.Popen(
        trapbook + ["--db", str(db), "serve", "--read-only", "--port", str(port)],
        stdout=subprocess.PIPE,
        stderr=subprocess.STDOUT,
        start_new_session=True,
    )
    driver = None
    try:
        _wait_for(lambda: _listening(port) or server.poll() is not None, 30, "the server to listen")
        assert server.poll() is None, server.stdout.read().decode(errors="replace")
        os.environ["SE_OFFLINE"] = "true"  # Selenium Manager: never download a browser or driver
        options = webdriver.ChromeOptions()
        options.binary_location = CHROMIUM
        for flag in (
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--window-size=1280,800",
            f"--user-data-dir={tmp_path / 'chromium-profile'}",
        ):
            options.add_argument(flag)
        driver = webdriver.Chrome(service=Service(executable_path=CHROMEDRIVER), options=options)
        driver.set_page_load_timeout(30)
        driver.execute_cdp_cmd("Page.addScriptToEvaluateOnNewDocument", {"source": RECORD_SOCKET})
        driver.get(f"http://127.0.0.1:{port}/")

        # The demo lab's runs (demo_lab/runs: TB-0001 … TB-0018) are listed in the Logbook.
        text = _wait_for(
            lambda: (t := _screen_text(driver)) and "TB-0001" in t and "TB-0005" in t and t,
            60,
            "the Logbook to list the demo runs",
        )
        assert "Trapbook" in text and "read-only" in text
        time.sleep(1.0)  # let the canvas paint what was received
        shot = tmp_path / "logbook.png"
        assert driver.save_screenshot(str(shot)) and shot.stat().st_size > 10_000

        # n would start a new run: in a read-only view it says so and nothing is written.
        seen = len(driver.execute_script("return window.__trapbookScreen;"))
        driver.find_element(By.CSS_SELECTOR, ".xterm-helper-textarea").send_keys("n")
        _wait_for(
            lambda: (
                "read-only: this view does not write"
                in ANSI.sub("", driver.execute_script("return window.__trapbookScreen;")[seen:])
            ),
            20,
            "the read-only notice",
        )
        assert "Workbench" not in ANSI.sub("", driver.execute_script("return window.__trapbookScreen;")[seen:])
    finally:
        if driver is not None:
            driver.quit()
        os.killpg(server.pid, signal.SIGINT)
        try:
            server.wait(timeout=15)
        except subprocess.TimeoutExpired:
            os.killpg(server.pid, signal.SIGKILL)
            server.wait(timeout=5)
    assert _sha(db) == before, "the read-only browser view changed the notebook file"
    assert not any(p.name.startswith("demo.sqlite") and p.suffix == ".part" for p in tmp_path.iterdir())
    if os.environ.get("TRAPBOOK_KEEP_SCREENSHOT"):
        shutil.copy(tmp_path / "logbook.png", os.environ["TRAPBOOK_KEEP_SCREENSHOT"])


def test_serve_listens_on_loopback_unless_told_and_warns_when_told(tmp_path, monkeypatch):
    """Which addresses count as this computer only (RFC 1122 §3.2.1.3: 127.0.0.0/8; RFC 4291: ::1),
    and the warning printed for any other; the server itself is replaced by a recorder."""
    pytest.importorskip("textual_serve", reason="needs textual-serve")
    import textual_serve.server
    from click.testing import CliRunner

    from trapbook.cli import main
    from trapbook.cli.serve import is_loopback

    assert is_loopback("127.0.0.1") and is_loopback("127.8.9.10") and is_loopback("::1") and is_loopback("localhost")
    assert not is_loopback("0.0.0.0") and not is_loopback("192.168.1.20") and not is_loopback("::")
    started = []

    class Recorder:
        def __init__(self, command, host, port, title=None):
            started.append({"command": command, "host": host, "port": port})

        def serve(self):
            return None

    monkeypatch.setattr(textual_serve.server, "Server", Recorder)
    db = tmp_path / "nb.sqlite"
    assert CliRunner().invoke(main, ["init", str(db)]).exit_code == 0
    quiet = CliRunner().invoke(main, ["--db", str(db), "serve", "--read-only", "--port", "8123"])
    assert quiet.exit_code == 0, quiet.output
    assert started[-1]["host"] == "127.0.0.1" and started[-1]["port"] == 8123 and "WARNING" not in quiet.output
    assert started[-1]["command"].endswith("open --read-only") and str(db) in started[-1]["command"]
    loud = CliRunner().invoke(main, ["--db", str(db), "serve", "--host", "0.0.0.0"])
    assert loud.exit_code == 0 and started[-1]["host"] == "0.0.0.0"
    assert "WARNING: listening on 0.0.0.0: anyone who can reach this address" in loud.output
    assert not started[-1]["command"].endswith("--read-only")
    grouped = CliRunner().invoke(main, ["--group", str(db), "serve"])  # a group is always read-only
    assert grouped.exit_code == 0 and started[-1]["command"].endswith("open --read-only") and "--group" in started[-1]["command"]
