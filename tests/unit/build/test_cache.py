"""The build cache (dossier.build.cache) and incremental rebuilds (dossier.build.pipeline.build_site).

What a rebuild made again is read from its report: ``BuildReport.made`` and
``BuildReport.taken`` count the units of work made and taken from the cache, by
kind ("assess", "view", "case", "species", "meeting", "register")."""
from __future__ import annotations

import dataclasses
import os
import shutil
from pathlib import Path

import pytest

import harness

import dossier.build.pipeline as build
from dossier.build.cache import Cache, key
from dossier.build.keys import build_settings, case_key
from dossier.casefile.load import MAX_FILE_BYTES
from dossier.review.inputs import read_case_inputs
from dossier.errors import DossierError
from dossier.build.writer import MANIFEST

GOOD = ("ammonia.md", "calcination.md", "hydrogenation.md")


# --------------------------------------------------------------------------
# The cache on its own

def test_key_depends_on_every_part_and_their_boundaries():
    assert key("a", "b") == key("a", "b")
    assert key("a", "b") != key("ab")
    assert key("a", "b") != key("b", "a")
    assert key(b"x") == key("x")
    assert len(key()) == 64


def test_entry_round_trip_and_a_corrupt_entry_is_a_reported_miss(tmp_path):
    cache = Cache(tmp_path / "c")
    k = key("unit")
    assert cache.get("case", k) is None and cache.stats.misses == 1
    cache.put("case", k, b"payload")
    assert cache.get("case", k) == b"payload" and cache.stats.hits == 1
    path = cache.entry_path("case", k)
    path.write_bytes(path.read_bytes()[:-1] + b"X")  # damage the payload
    assert cache.get("case", k) is None
    assert cache.stats.corrupt == [f"case entry {k[:12]}"]
    path.write_bytes(b"no header at all")
    assert cache.get("case", k) is None and len(cache.stats.corrupt) == 2


def test_blobs_are_named_by_their_digest_and_checked(tmp_path):
    cache = Cache(tmp_path / "c")
    d = cache.put_blob(b"<svg/>")
    assert cache.blob_path(d).read_bytes() == b"<svg/>"
    assert cache.blob_ok(d) and cache.read_blob(d) == b"<svg/>"
    cache.blob_path(d).write_bytes(b"<svg>altered</svg>")
    assert not cache.blob_ok(d) and cache.read_blob(d) is None
    assert len(cache.stats.corrupt) == 2
    assert cache.put_blob(b"<svg/>") == d and cache.blob_ok(d)  # rewritten whole


def test_cache_writes_leave_no_temporary_files(tmp_path):
    cache = Cache(tmp_path / "c")
    cache.put("assess", key("a"), b"1")
    cache.put_blob(b"2")
    names = [p.name for p in (tmp_path / "c").rglob("*") if p.is_file()]
    assert len(names) == 2 and not any(n.startswith(".tmp-") for n in names)


def test_bad_entry_names_are_refused(tmp_path):
    cache = Cache(tmp_path / "c")
    with pytest.raises(ValueError):
        cache.entry_path("case", "../../etc/passwd")
    with pytest.raises(ValueError):
        cache.blob_path("0" * 63 + "/")


# --------------------------------------------------------------------------
# Incremental builds

@pytest.fixture
def project(tmp_path):
    cases = tmp_path / "cases"
    cases.mkdir()
    for name in GOOD:
        shutil.copy(harness.CASES / name, cases / name)
    return tmp_path


def _files(site: Path) -> dict[str, bytes]:
    return {str(p.relative_to(site)): p.read_bytes() for p in sorted(site.rglob("*"))
            if p.is_file()}


def test_default_cache_is_beside_the_output_folder(project):
    report = build.build_site(project / "cases", project / "site", packets=False)
    assert report.written and report.reused == 0 and report.taken == {}
    assert report.made["assess"] == 3 and report.made["case"] == 3 and report.made["view"] == 3
    assert report.made["register"] == 1 and report.made["species"] >= 3
    assert report.rendered == sum(n for kind, n in report.made.items() if kind != "view")
    assert (project / ".dossier-cache" / "entries" / "assess").is_dir()
    assert (project / "site" / MANIFEST).is_file()


def test_a_rebuild_with_nothing_changed_renders_nothing_and_keeps_the_site(project):
    cases, out = project / "cases", project / "site"
    build.build_site(cases, out, packets=False)
    before = _files(out)
    inode = os.stat(out).st_ino
    report = build.build_site(cases, out, packets=False)
    assert report.unchanged and not report.written
    assert report.made == {} and report.rendered == 0
    assert os.stat(out).st_ino == inode  # not swapped
    assert _files(out) == before
    assert report.lines()[-1].startswith(f"nothing changed: {out} is up to date (3 of 3 cases")


def test_changing_one_case_redoes_that_case_only(project):
    cases, out = project / "cases", project / "site"
    build.build_site(cases, out, packets=False)
    before = _files(out)
    with open(cases / "calcination.md", "a", encoding="utf-8") as fh:
        fh.write("\nOne more sentence for the narrative.\n")
    report = build.build_site(cases, out, packets=False)
    assert report.written and not report.unchanged
    assert report.made["assess"] == 1 and report.made["view"] == 1 and report.made["case"] == 1
    assert report.taken["assess"] == 2 and report.taken["case"] == 2
    # the species pages show only the slug, id and key of the cases using them:
    # unchanged by the narrative, so they are reused, not redone
    assert "species" not in report.made and report.taken["species"] >= 3
    after = _files(out)
    assert after["cases/ammonia.html"] == before["cases/ammonia.html"]
    assert after["cases/calcination.html"] != before["cases/calcination.html"]
    assert report.reused > 0


def _drawn(project: Path) -> set[str]:
    """The names of the cached drawings (figures and derivation) of every case."""
    return {p.name for p in (project / ".dossier-cache" / "entries" / "drawings").rglob("*")
            if p.is_file()}


def test_a_narrative_edit_redraws_no_figure_and_a_changed_number_does(project):
    cases, out = project / "cases", project / "site"
    build.build_site(cases, out, packets=False)
    drawn, before = _drawn(project), _files(out)
    assert len(drawn) == 3  # one per case
    with open(cases / "calcination.md", "a", encoding="utf-8") as fh:
        fh.write("\nOne more sentence for the narrative.\n")
    report = build.build_site(cases, out, packets=False)
    assert report.made["view"] == 1  # the page's view is made again ...
    assert _drawn(project) == drawn  # ... from the drawings already made
    after = _files(out)
    figures = [k for k in before if k.startswith("figures/cases/calcination/")]
    assert figures and all(after[k] == before[k] for k in figures)
    assert after["cases/calcination.html"] != before["cases/calcination.html"]
    # a number the figures are drawn from: drawn again, under a new key
    text = (cases / "calcination.md").read_text(encoding="utf-8")
    (cases / "calcination.md").write_text(text.replace('"900 degC"', '"950 degC"'),
                                          encoding="utf-8")
    build.build_site(cases, out, packets=False)
    assert len(_drawn(project) - drawn) == 1
    assert _files(out)["figures/cases/calcination/gibbs.svg"] != after[
        "figures/cases/calcination/gibbs.svg"]


def test_a_template_change_re_renders_pages_but_not_assessments_or_figures(project, monkeypatch):
    cases, out = project / "cases", project / "site"
    build.build_site(cases, out, packets=False)
    real = build.build_settings
    monkeypatch.setattr(build, "build_settings", lambda *a, **k: dataclasses.replace(
        real(*a, **k), templates=key("a changed template")))
    report = build.build_site(cases, out, packets=False)
    assert report.written
    # assessments and views (figures, derivation) reused from the cache
    assert "assess" not in report.made and "view" not in report.made
    assert report.taken["assess"] == 3 and report.taken["view"] == 3
    assert report.made["case"] == 3 and report.made["species"] >= 3
    assert report.made["register"] == 1


def test_a_corrupt_cache_entry_is_rebuilt_and_reported_never_served(project):
    cases, out = project / "cases", project / "site"
    build.build_site(cases, out, packets=False)
    good = _files(out)
    cache = project / ".dossier-cache"
    for entry in (cache / "entries" / "assess").rglob("*"):
        if entry.is_file():
            entry.write_bytes(entry.read_bytes().replace(b"ammonia", b"ammonix"))
    (out / MANIFEST).unlink()  # force a rebuild (the inputs did not change)
    report = build.build_site(cases, out, packets=False)
    assert report.made["assess"] >= 1
    assert report.corrupt and any("assess entry" in c for c in report.corrupt)
    assert any("damaged cache entries" in line for line in report.lines())
    after = _files(out)
    assert {k: v for k, v in after.items() if k != MANIFEST} == \
        {k: v for k, v in good.items() if k != MANIFEST}


def test_a_damaged_blob_is_made_again(project):
    cases, out = project / "cases", project / "site"
    build.build_site(cases, out, packets=False)
    page = out / "cases" / "ammonia.html"
    good = page.read_bytes()
    blobs = Cache(project / ".dossier-cache")
    digest = __import__("hashlib").sha256(good).hexdigest()
    blob = blobs.blob_path(digest)
    blob.unlink()
    blob.write_bytes(b"<p>tampered</p>")
    # the site's own copy is a separate file now; damage it too so the no-op check sees it
    page.unlink()
    page.write_bytes(b"<p>tampered</p>")
    report = build.build_site(cases, out, packets=False)
    assert report.written and any(digest[:12] in c for c in report.corrupt)
    assert (out / "cases" / "ammonia.html").read_bytes() == good


def test_a_missing_site_file_means_a_rebuild(project):
    cases, out = project / "cases", project / "site"
    build.build_site(cases, out, packets=False)
    (out / "methods.html").unlink()
    report = build.build_site(cases, out, packets=False)
    assert report.written and (out / "methods.html").is_file()


def test_the_cache_folder_cannot_be_inside_the_site(project):
    with pytest.raises(DossierError, match="cache folder must not be inside"):
        build.build_site(project / "cases", project / "site", packets=False,
                         cache_dir=project / "site" / "cache")
    assert not (project / "site").exists()


def test_a_signature_or_kept_revision_is_part_of_the_case_key(project):
    settings = build_settings(False)
    path = project / "cases" / "ammonia.md"

    def key_now(s=settings) -> str:
        return case_key(read_case_inputs(path), s)

    k0 = key_now()
    (project / "cases" / "ammonia.signatures").write_text("x", encoding="utf-8")
    k1 = key_now()
    (project / "cases" / "trusted-keys.txt").write_text("y", encoding="utf-8")
    k2 = key_now()
    (project / "cases" / "ammonia").mkdir()
    (project / "cases" / "ammonia" / "rev-1.md").write_text("z", encoding="utf-8")
    k3 = key_now()
    assert len({k0, k1, k2, k3}) == 4
    assert key_now(dataclasses.replace(settings, library="other")) != k3
    assert key_now(dataclasses.replace(settings, methods="other")) != k3


def test_a_case_file_the_reader_refuses_is_a_failure_naming_it_and_the_others_build(project):
    cases, out = project / "cases", project / "site"
    with open(cases / "huge.md", "wb") as fh:
        fh.truncate(MAX_FILE_BYTES + 1)  # refused by the reader, before any parsing
    report = build.build_site(cases, out, packets=False)
    assert report.built == ("ammonia", "calcination", "hydrogenation")
    assert [Path(f.file).name for f in report.failed] == ["huge.md"]
    assert report.failed[0].problems[0].startswith(f"{cases / 'huge.md'}: the file is larger than")
    assert report.made["assess"] == 3  # the refused file is not assessed
    assert "huge.md" in (out / "index.html").read_text("utf-8")
