"""Species pages are handed to the workers behind the cases (to fill workers that
finish early) and planned again from the cases that were published: a case that
fails to render leaves no species page behind that names it."""
from __future__ import annotations

import shutil
from pathlib import Path

import dossier.build.pipeline as build
import dossier.build.units as units
import harness


def _cases(tmp_path):
    folder = tmp_path / "cases"
    folder.mkdir()
    for name in ("ammonia.md", "hydrogenation.md"):
        shutil.copy(harness.CASES / name, folder / name)
    return folder


def _species_pages(site):
    return {p.name: p.read_text(encoding="utf-8") for p in (site / "species").glob("*.html")}


def test_every_species_page_is_made_once_and_counted(tmp_path):
    report = build.build_site(_cases(tmp_path), tmp_path / "site", packets=False, jobs=1,
                              cache_dir=tmp_path / "cache")
    pages = _species_pages(tmp_path / "site")
    # N2, H2, NH3 (ammonia); nitrobenzene, H2 again, aniline, water (hydrogenation)
    assert len(pages) == 6
    assert report.made["species"] == 6 and "species" not in report.taken
    # hydrogen is used by both cases, and its page names both
    assert "ammonia.html" in pages["h2-g.html"] and "hydrogenation.html" in pages["h2-g.html"]


def test_a_case_that_fails_to_render_is_named_by_no_species_page(tmp_path, monkeypatch):
    real = units.case_output

    def failing(a, slug, *args):
        if slug == "hydrogenation":
            raise RuntimeError("figure engine broke")  # a defect, not bad input
        return real(a, slug, *args)

    monkeypatch.setattr(units, "case_output", failing)
    report = build.build_site(_cases(tmp_path), tmp_path / "site", packets=False, jobs=1,
                              cache_dir=tmp_path / "cache")
    assert report.built == ("ammonia",) and [Path(f.file).name for f in report.failed] == [
        "hydrogenation.md"]
    pages = _species_pages(tmp_path / "site")
    # N2, H2, NH3: the species of the published case only
    assert sorted(pages) == ["h2-g.html", "n2-g.html", "nh3-g.html"]
    assert all("hydrogenation.html" not in text for text in pages.values())
    assert report.made["species"] == 3
