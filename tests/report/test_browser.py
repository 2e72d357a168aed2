"""The HTML page in headless Chromium: screenshot, no network, no console errors, no script.

Chromium is Debian's package (``make browser`` installs it); these tests skip when it is
absent and never download a browser. Two methods are combined:

* a DevTools-protocol run over ``--remote-debugging-pipe`` (tests/report/browser.py, pure
  standard library) records every network request, console message, uncaught exception and
  error log entry while the page loads, and evaluates DOM queries afterwards;
* ``--dump-dom`` and ``--screenshot`` runs of the command line, as a reader's browser would
  show the page; the screenshots are kept under test-artifacts/ (git-ignored).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from tests.report.browser import chromium, dump_dom, inspect_page, screenshot
from tests.report.conftest import Case
from tests.report.pngs import assert_nontrivial_png

pytestmark = pytest.mark.skipif(
    chromium() is None,
    reason="Chromium is not installed (Debian package 'chromium'; run 'make browser'); the "
           "browser tests never download one")

ARTIFACTS = Path(__file__).resolve().parents[2] / "test-artifacts"


@pytest.fixture(scope="module")
def pages(demo: Case, hostile: Case, tmp_path_factory: pytest.TempPathFactory) -> dict[str, Path]:
    folder = tmp_path_factory.mktemp("pages")
    out = {}
    for name, case in (("demo", demo), ("hostile", hostile)):
        (path,) = case.report.save(folder / f"{name}.html")
        out[name] = path
    return out


def _allowed(url: str, page: Path) -> bool:
    return url == page.as_uri() or url.startswith("data:")


@pytest.mark.parametrize("name", ["demo", "hostile"])
def test_page_loads_nothing_and_logs_no_error(name: str, pages: dict[str, Path],
                                              tmp_path: Path) -> None:
    page = pages[name]
    run = inspect_page(page, tmp_path / "profile")
    assert run.loaded
    assert [u for u in run.requests if not _allowed(u, page)] == []
    assert page.as_uri() in run.requests  # the recorder does see requests
    assert run.exceptions == []
    assert [c for c in run.console if c.get("type") in ("error", "warning", "assert")] == []
    assert run.log_errors == []
    assert run.evaluated["scripts"] == 0 and run.evaluated["links"] == 0
    assert run.evaluated["brokenImages"] == 0
    assert all(src.startswith("data:image/png") for src in run.evaluated["images"])


def test_injected_markup_shows_as_text_and_never_runs(pages: dict[str, Path],
                                                      tmp_path: Path) -> None:
    run = inspect_page(pages["hostile"], tmp_path / "profile")
    assert run.evaluated["title"].startswith("Worked analysis")
    assert "PWNED" not in run.evaluated["title"]
    assert not run.evaluated["pwnedElement"]  # the <b id="pwned"> level made no element
    text = run.evaluated["bodyText"]
    assert "<script>document.title='PWNED'</script>" in text
    assert "<img src=x onerror=\"document.title='PWNED'\">" in text
    assert '<b id="pwned">bold</b>' in text


def test_dumped_dom_keeps_the_level_names_escaped(pages: dict[str, Path],
                                                  tmp_path: Path) -> None:
    dom = dump_dom(pages["hostile"], tmp_path / "profile")
    assert "&lt;script&gt;document.title='PWNED'&lt;/script&gt;" in dom
    assert "<script" not in dom.lower()
    assert not re.search(r'<b\s+id="pwned"', dom) and '&lt;b id="pwned"&gt;' in dom
    assert "<title>Worked analysis" in dom and "PWNED</title>" not in dom


@pytest.mark.parametrize("name", ["demo", "hostile"])
def test_screenshot_is_a_real_picture(name: str, pages: dict[str, Path], tmp_path: Path) -> None:
    ARTIFACTS.mkdir(exist_ok=True)
    out = ARTIFACTS / f"report-{name}.png"
    out.unlink(missing_ok=True)
    screenshot(pages[name], out, tmp_path / "profile")
    assert_nontrivial_png(out, width=1200, height=3000)


def test_the_recorder_sees_scripts_errors_and_requests(tmp_path: Path) -> None:
    """Control: on a page that does run a script and fetch an image (from the loopback
    address only), the recorder reports all of it, so the clean results above mean something."""
    page = tmp_path / "bad.html"
    page.write_text("<!DOCTYPE html><html><head><title>t</title></head><body>"
                    "<img src='http://127.0.0.1:9/missing.png'>"
                    "<script>document.title='PWNED'; console.error('boom'); notDefined();"
                    "</script></body></html>", encoding="utf-8")
    run = inspect_page(page, tmp_path / "profile")
    assert run.evaluated["title"] == "PWNED" and run.evaluated["scripts"] == 1
    assert any(u.startswith("http://127.0.0.1:9/") for u in run.requests)
    assert any(c.get("type") == "error" for c in run.console)
    assert run.exceptions
