"""The site in a real browser (headless Chromium): payloads never run, our own script does,
and screenshots of the register and one dossier are kept for a reviewer's eye."""
from __future__ import annotations

import re
import shutil
import subprocess
from pathlib import Path

import pytest

import harness


def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        exe = shutil.which(name)
        if exe:
            return exe
    return "/usr/bin/chromium" if Path("/usr/bin/chromium").exists() else None


CHROMIUM = _chromium()
pytestmark = pytest.mark.skipif(CHROMIUM is None,
                                reason="Chromium is not installed: browser checks not run")


def _run(tmp_path: Path, *args: str) -> str:
    profile = tmp_path / f"profile-{len(list(tmp_path.iterdir()))}"
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           "--no-first-run", f"--user-data-dir={profile}", *args]
    proc = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr[-2000:]
    return proc.stdout


def _dom(tmp_path: Path, page: Path):
    return harness.parse(_run(tmp_path, "--dump-dom", page.as_uri()).encode("utf-8"))


@pytest.mark.parametrize("page", ["index.html", "cases/payload.html"])
def test_payloads_do_not_run_in_the_browser(tmp_path, page):
    root = harness.payload_site().root
    dom = _dom(tmp_path, root / page)
    html = dom.getroot() if hasattr(dom, "getroot") else dom
    assert html.get(harness.RAN_ATTRIBUTE) is None
    title = "".join(dom.find(".//title").itertext())
    assert title != harness.RAN_TITLE
    assert all(el.get(harness.RAN_ATTRIBUTE) is None for el in dom.iter())
    assert dom.find(".//iframe") is None and dom.find(".//object") is None
    # the payload is on the page as text
    assert "XSS-RAN" in "".join(dom.find(".//body").itertext())


def test_register_filter_script_runs_and_screenshots_are_kept(tmp_path):
    root = harness.built_site().root
    harness.ARTIFACTS.mkdir(exist_ok=True)
    shots = {"register": harness.ARTIFACTS / "register.png",
             "dossier": harness.ARTIFACTS / "dossier.png"}
    for shot in shots.values():
        shot.unlink(missing_ok=True)
    # one browser run gives the register's screenshot and its DOM after scripts ran
    dom = harness.parse(_run(tmp_path, f"--screenshot={shots['register']}",
                             "--window-size=1280,2000", "--dump-dom",
                             (root / "index.html").as_uri()).encode("utf-8"))
    box = [el for el in dom.iter() if el.get("id") == "filter-box"]
    assert box and box[0].get("hidden") is None  # our own script ran (allowed by the page policy)
    count = [el for el in dom.iter() if el.get("id") == "filter-count"][0]
    rows = [el for el in dom.iter("tr") if el.get("data-search") is not None]
    assert "".join(count.itertext()) == f"{len(rows)} of {len(rows)} cases shown"
    _run(tmp_path, f"--screenshot={shots['dossier']}", "--window-size=1280,2000",
         (root / "cases" / "hydrogenation.html").as_uri())
    for name, shot in shots.items():
        assert shot.stat().st_size > 20_000, name
        assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_register_lists_every_case_without_javascript():
    # the static page carries every row; the script only hides rows while filtering
    root = harness.built_site().root
    tree = harness.parse(root / "index.html")
    rows = [el for el in tree.iter("tr") if el.get("data-search") is not None]
    assert len(rows) == len(harness.built_site().report.built)
    assert all(el.get("hidden") is None for el in rows)


def test_register_search_lists_pages_of_the_whole_site(tmp_path):
    # the fragment fills the search box as a reader typing "hydrogen" would
    root = harness.built_site().root
    dom = harness.parse(_run(tmp_path, "--dump-dom",
                             (root / "index.html").as_uri() + "#search=hydrogen").encode("utf-8"))
    box = [el for el in dom.iter() if el.get("id") == "search-box"][0]
    assert box.get("hidden") is None
    results = [el for el in dom.iter() if el.get("id") == "search-results"][0]
    links = [a.get("href") for a in results.iter("a")]
    assert "cases/hydrogenation.html" in links  # the case (its title and reaction)
    assert "species/h2-g.html" in links  # the species record of H2(g), hydrogen
    count = [el for el in dom.iter() if el.get("id") == "search-count"][0]
    assert "".join(count.itertext()) == f"{len(links)} pages found"
    for href in links:
        assert (root / href.split("#")[0]).is_file(), href


def test_register_columns_sort_when_their_headings_are_pressed(tmp_path):
    # The register's own page with one more script that presses the "case" heading
    # twice (ascending, then descending) and the "thermal safety" heading once; the
    # page policy is left out of this copy so that the extra script may run.
    root = harness.built_site().root
    page = (root / "index.html").read_text(encoding="utf-8")
    page = re.sub(r'<meta http-equiv="Content-Security-Policy"[^>]*>', "", page)
    press = ("<script>var b = document.querySelectorAll('table.register th button');"
             "b[0].click(); b[0].click();"
             "document.body.setAttribute('data-case-sort', "
             "b[0].parentNode.getAttribute('aria-sort'));</script>")
    copy = tmp_path / "sort-check.html"
    copy.write_text(page.replace("</body>", press + "</body>"), encoding="utf-8")
    dom = harness.parse(_run(tmp_path, "--dump-dom", copy.as_uri()).encode("utf-8"))
    body = dom.find(".//body")
    assert body.get("data-case-sort") == "descending"
    table = [t for t in dom.iter("table") if t.get("class") == "register"][0]
    heads = [th for th in table.iter("th") if th.find("button") is not None]
    assert ["".join(th.itertext()) for th in heads] == [
        "case", "status and verdicts", "feasibility", "thermal safety"]
    ids = [tr.find("td").get("data-sort") for tr in table.find("tbody").iter("tr")]
    assert len(ids) >= 2 and ids == sorted(ids, reverse=True)
    static = [t for t in harness.parse(root / "index.html").iter("table")
              if t.get("class") == "register"][0]
    before = [tr.find("td").get("data-sort") for tr in static.find("tbody").iter("tr")]
    assert before == sorted(ids)  # the register's own order was the other way round
