"""WCAG 2.2 AA of every page type, checked by axe-core inside headless Chromium.

The engine is axe-core from the npm registry (``tools/axe/package.json`` and its
lock file; ``npm ci --prefix tools/axe`` installs it, as ``make test`` and ``.ci/run``
do), driven through Chromium's DevTools protocol by ``tools/axe/check.js``
(chrome-remote-interface; Debian's ``/usr/bin/chromium``, no browser download).
It runs the rules tagged WCAG 2.0/2.1/2.2 A and AA, with every ``<details>``
opened so that the figures' data tables are checked too.  The checks skip only
when Chromium or Node.js is absent.
"""
from __future__ import annotations

import json
import shutil
import subprocess
from pathlib import Path

import pytest

import harness

ROOT = Path(__file__).resolve().parents[2]
AXE = ROOT / "tools" / "axe"
CHROMIUM = next((p for p in (shutil.which("chromium"), shutil.which("chromium-browser"),
                             "/usr/bin/chromium") if p and Path(p).exists()), None)
NODE = shutil.which("node")

pytestmark = [
    pytest.mark.skipif(CHROMIUM is None,
                       reason="Chromium is not installed: accessibility checks not run"),
    pytest.mark.skipif(NODE is None,
                       reason="Node.js is not installed: accessibility checks not run"),
]


def axe_violations(pages: list[Path]) -> dict[str, list[dict]]:
    """page path → the violations axe-core reports on it (empty list: none)."""
    assert (AXE / "node_modules" / "axe-core").is_dir(), (
        "axe-core is not installed: run `npm ci --prefix tools/axe` (make test does)")
    proc = subprocess.run([NODE, str(AXE / "check.js"), "--chromium", CHROMIUM,
                           *map(str, pages)], capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0, proc.stderr[-2000:]
    report = json.loads(proc.stdout)
    return {p["page"]: p["violations"] for p in report["pages"]}


def described(found: dict[str, list[dict]]) -> str:
    """The violations as lines a reader can act on: page, rule, the first elements."""
    lines = []
    for page, violations in found.items():
        for v in violations:
            where = "; ".join(f"{n['target']} {n['html'][:120]}" for n in v["nodes"][:3])
            lines.append(f"{page}: {v['id']} ({v['impact']}, {v['help']}): {where}")
    return "\n".join(lines)


#: The page types of the site and the file of the fixture site that stands for each
#: (every page of the site is checked; these must be among them).
PAGE_TYPES = {"register": "index.html", "case": "cases/hydrogenation.html",
              "derivation": "cases/hydrogenation-derivation.html", "methods": "methods.html",
              "guide": "guide/index.html"}


def test_every_page_of_the_site_has_no_wcag_violation():
    root = harness.built_site().root
    pages = harness.html_files(root)
    names = {p.relative_to(root).as_posix() for p in pages}
    assert set(PAGE_TYPES.values()) <= names
    assert any(n.startswith("species/") for n in names)  # the species page type
    found = axe_violations(pages)
    assert len(found) == len(pages)
    assert described(found) == ""


def test_a_page_with_known_violations_is_caught(tmp_path):
    # The check itself shown failing: an image without a text alternative (WCAG 1.1.1,
    # axe rule image-alt), a text box without a label (1.3.1/4.1.2, rule label) and
    # grey #bbbbbb text on white, contrast 1.9:1 against the 4.5:1 of 1.4.3 (rule
    # color-contrast); the same page with those mended has none.
    img = tmp_path / "pixel.svg"
    img.write_text('<svg xmlns="http://www.w3.org/2000/svg" width="40" height="40"/>')
    bad = tmp_path / "bad.html"
    bad.write_text('<!DOCTYPE html><html lang="en"><head><meta charset="utf-8">'
                   "<title>Known violations</title></head><body><main><h1>Test page</h1>"
                   '<img src="pixel.svg"><input type="text">'
                   '<p style="color:#bbbbbb">Faint text on white.</p></main></body></html>')
    good = tmp_path / "good.html"
    good.write_text('<!DOCTYPE html><html lang="en"><head><meta charset="utf-8">'
                    "<title>No violations</title></head><body><main><h1>Test page</h1>"
                    '<img src="pixel.svg" alt="A blank square">'
                    '<label>Case id <input type="text"></label>'
                    '<p style="color:#555555">Dark text on white.</p></main></body></html>')
    found = axe_violations([bad, good])
    assert sorted(v["id"] for v in found[str(bad)]) == ["color-contrast", "image-alt", "label"]
    assert found[str(good)] == []


def test_the_register_with_search_results_shown():
    # The sort buttons, the search box and its results exist only once the page's
    # script ran; check.js lets it run, and the fragment asks for a search.
    root = harness.built_site().root
    page = f"{root / 'index.html'}#search=hydrogen"
    found = axe_violations([Path(page)])
    assert described(found) == ""
