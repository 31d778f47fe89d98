"""Hostile names: case ids, species names and file names never write outside the site.

One build of a cases folder full of hostile names: dot names, Windows-reserved
names, very long names, unicode look-alikes of '/', '.' and letters, a
backslash, symbolic links to a case and to a folder outside, and local
species named like paths.  Everything under the temporary tree outside the
output folder (and the build cache) is snapshotted before and after: it must
be unchanged, and every file in the output folder must be a regular file that
resolves inside it.
"""
from __future__ import annotations

import hashlib
import os
from pathlib import Path

import pytest
from fuzzing import bounded
from paths import TESTS

from dossier.errors import DossierError

HERE = TESTS
MINIMAL = (HERE / "fixtures" / "cases" / "minimal.md").read_text(encoding="utf-8")

LOCAL = """+++
title = "Local species named like a path"
revision = 1
status = "draft"
reaction = "{name}(l) -> H2(g) + 2 C(s)"
temperature = ["20 degC", "78 degC"]

[[species]]
name = {toml_name}
formula = "C2H2"
phase = "l"
hf = "200 kJ/mol"
s = "150 J/(mol*K)"
cp = "100 J/(mol*K)"
source = "made up for a path test"
+++
"""

HOSTILE_STEMS = [
    ".", "..", "con", "nul", "aux", "com1", "x" * 240, "\u2215etc\u2215passwd",
    "\uff0e\uff0e", "a\\..\\..\\b", " leading space", "index", "..%2f..%2fescape",
    "CamelCase", "camelcase",
]
SPECIES_NAMES = ["../../escape", "/etc/passwd", "..\\..\\win", "nul", "\u2215root\u2215x"]


def snapshot(root: Path, skip: tuple[Path, ...]) -> dict[str, str]:
    out = {}
    for dirpath, dirs, files in os.walk(root, followlinks=False):
        d = Path(dirpath)
        dirs[:] = [x for x in dirs if d / x not in skip]
        for name in files + [x for x in dirs if (d / x).is_symlink()]:
            p = d / name
            rel = str(p.relative_to(root))
            if p.is_symlink():
                out[rel] = "link->" + os.readlink(p)
            else:
                out[rel] = hashlib.sha256(p.read_bytes()).hexdigest()
        for name in dirs:
            out.setdefault(str((d / name).relative_to(root)) + "/", "dir")
    return out


@pytest.fixture(scope="module")
def hostile_build(tmp_path_factory):
    from dossier.build.pipeline import build_site

    root = tmp_path_factory.mktemp("paths")
    cases = root / "cases"
    cases.mkdir()
    outside = root / "outside"
    outside.mkdir()
    (outside / "secret.md").write_text(MINIMAL, encoding="utf-8")
    (outside / "folder").mkdir()
    (outside / "folder" / "inner.md").write_text(MINIMAL, encoding="utf-8")
    written = []
    for stem in HOSTILE_STEMS:
        try:
            (cases / f"{stem}.md").write_text(MINIMAL, encoding="utf-8")
            written.append(stem)
        except OSError:
            pass  # a name this file system refuses is not a risk on it
    for i, name in enumerate(SPECIES_NAMES):
        toml_name = '"' + name.replace("\\", "\\\\") + '"'
        (cases / f"local-{i}.md").write_text(LOCAL.format(name=name, toml_name=toml_name),
                                             encoding="utf-8")
    (cases / "link-to-outside.md").symlink_to(outside / "secret.md")
    (cases / "dir-link.md").symlink_to(outside / "folder", target_is_directory=True)
    (cases / "dangling.md").symlink_to(root / "nowhere" / "gone.md")
    out = root / "site"
    cache = root / "cache"
    before = snapshot(root, skip=(out, cache))
    report = build_site(cases, out, packets=False, jobs=1, cache_dir=cache)
    after = snapshot(root, skip=(out, cache))
    return root, out, report, before, after, written


def test_nothing_outside_the_output_folder_changed(hostile_build):
    root, out, report, before, after, _written = hostile_build
    assert report.written, report.lines()
    assert after == before


def test_every_output_file_lies_inside_the_output_folder(hostile_build):
    root, out, *_ = hostile_build
    real_out = out.resolve()
    count = 0
    for dirpath, dirs, files in os.walk(out, followlinks=False):
        for name in files + dirs:
            p = Path(dirpath) / name
            assert not p.is_symlink(), f"symbolic link in the site: {p}"
            assert p.resolve().is_relative_to(real_out), p
            assert "\\" not in name and name not in (".", "..")
            assert len(name.encode("utf-8")) <= 255
            count += 1
    assert count > 20


def test_every_hostile_case_is_built_or_reported(hostile_build):
    root, out, report, _b, _a, written = hostile_build
    lines = "\n".join(report.lines())
    n_cases = len(written) + len(SPECIES_NAMES) + 3
    assert len(report.built) + len(report.failed) <= n_cases
    pages = {p.name for p in (out / "cases").iterdir() if p.suffix == ".html"}
    # each published case has a page and a derivation page, each under its own slug;
    # each failed case keeps one page saying what failed (issue 14, part 6)
    assert len(pages) == 2 * len(report.built) + len(report.failed), lines
    for p in pages:
        assert p.isascii() or p.isprintable()
        assert not p.startswith(".")


def test_reserved_and_dot_names_do_not_become_file_names(hostile_build):
    _root, out, *_ = hostile_build
    names = {p.stem.lower() for p in out.rglob("*")}
    for reserved in ("con", "nul", "aux", "prn", "com1", "lpt1", ".", ".."):
        assert reserved not in names, reserved


# --------------------------------------------------------------------------
# Files that are not files, and links out of the cases folder (issue 16, part 5)


def test_a_case_linked_outside_the_cases_folder_is_refused_by_name(hostile_build):
    root, _out, report, *_ = hostile_build
    cases = root / "cases"
    failed = {Path(f.file).name: f.problems for f in report.failed}
    assert failed["link-to-outside.md"] == (
        f"{cases / 'link-to-outside.md'}: the case file is a symbolic link to "
        f"{(root / 'outside' / 'secret.md').resolve()}, outside its folder "
        f"{cases.resolve()}; copy the file into the folder instead",)
    assert "link-to-outside" not in report.built


@pytest.fixture()
def board_with_pipes(tmp_path):
    """A cases folder with one good case, an alias link to it inside the folder, and
    named pipes as a case file, a signature file and the trusted keys."""
    cases = tmp_path / "cases"
    cases.mkdir()
    (cases / "burn.md").write_text(MINIMAL, encoding="utf-8")
    (cases / "alias.md").symlink_to("burn.md")
    for name in ("pipe.md", "burn.signatures", "trusted-keys.txt"):
        os.mkfifo(cases / name)
    return cases


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes are POSIX")
def test_named_pipes_are_refused_by_name_and_never_waited_on(board_with_pipes, tmp_path):
    from dossier.build.pipeline import build_site

    cases = board_with_pipes
    with bounded(60):
        report = build_site(cases, tmp_path / "site", packets=False, jobs=1,
                            cache_dir=tmp_path / "cache")
    # a link inside the cases folder is still a case
    assert set(report.built) == {"alias", "burn"}
    (failure,) = report.failed
    assert failure.problems == (f"{cases / 'pipe.md'}: cannot read the case file: it is a "
                                "named pipe (FIFO), not a regular file",)
    page = (tmp_path / "site" / "cases" / "burn.html").read_text(encoding="utf-8")
    for what in ("signatures", "trusted keys"):
        assert f"cannot read the {what}: it is a named pipe (FIFO), not a regular file" in page


@pytest.mark.parametrize("linked", ["", "blobs", "entries"])
def test_the_cache_is_not_written_through_a_symbolic_link(tmp_path, linked):
    from dossier.build.pipeline import build_site

    cases = tmp_path / "cases"
    cases.mkdir()
    (cases / "burn.md").write_text(MINIMAL, encoding="utf-8")
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    cache = tmp_path / "cache"
    if linked:
        cache.mkdir()
    (cache / linked if linked else cache).symlink_to(elsewhere, target_is_directory=True)
    with pytest.raises(DossierError) as info:
        build_site(cases, tmp_path / "site", packets=False, jobs=1, cache_dir=cache)
    what = f"its folder '{linked}'" if linked else "the cache folder"
    assert str(info.value) == (f"{cache}: key '--cache': {what} is a symbolic link to "
                               f"{elsewhere.resolve()}; a build does not write the cache "
                               "through a link: give a real folder")
    assert list(elsewhere.iterdir()) == []
    assert not (tmp_path / "site").exists()
