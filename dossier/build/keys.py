"""What each output of the build depends on, as cache keys.

Every key is the SHA-256 (:func:`dossier.build.cache.key`) of everything a
unit of work depends on: a case's assessment on the files read for it and on
the code, the species library and the method settings (:func:`case_key`);
its view, pages and packet on that key and on the slugs and templates; a
species page on its record and the cases that link to it; the build as a
whole on every case key (:func:`build_key`, kept in the site's manifest).
"""
from __future__ import annotations

import importlib.metadata

import importlib.util
import json
from dataclasses import dataclass
from importlib.resources import files
from pathlib import Path
from typing import Sequence

from dossier import __version__
from dossier.build.assessing import CaseFailure
from dossier.build.cache import key
from dossier.build.layout import UsedBy
from dossier.build.pickles import dumps
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.library.record import SpeciesRecord
from dossier.review.digest import canonical_json
from dossier.review.inputs import CaseInputs

#: The format of the site's manifest (part of the build key).
MANIFEST_FORMAT = "dossier-manifest-1"


@dataclass(frozen=True)
class BuildSettings:
    """Digests of everything that is the same for every case of a build."""

    code: str  # tool version and the package's own source files
    library: str  # the species library data
    templates: str  # every template, stylesheet and script (and the guide's sources)
    methods: str  # the method settings
    packets: bool
    meeting: str | None

    def parts(self) -> tuple[str, ...]:
        return (self.code, self.library, self.templates, self.methods,
                "packets" if self.packets else "no-packets", self.meeting or "")


def tree_digest(root, suffixes: tuple[str, ...] | None = None) -> str:
    """Digest of the files below an importlib.resources folder (names and bytes, sorted)."""
    parts: list[bytes | str] = []
    stack = [("", root)]
    while stack:
        prefix, node = stack.pop()
        for child in sorted(node.iterdir(), key=lambda c: c.name):
            name = prefix + child.name
            if child.is_dir():
                if child.name != "__pycache__":
                    stack.append((name + "/", child))
            elif suffixes is None or child.name.endswith(suffixes):
                parts += [name, child.read_bytes()]
    return key(*parts)


def has_package(name: str) -> bool:
    try:
        return importlib.util.find_spec(name) is not None
    except ImportError:
        return False


def build_settings(packets: bool = True, meeting: str | None = None,
                   methods: MethodSettings = DEFAULT) -> BuildSettings:
    """Reads the package's sources, data and templates (fast: no heavy imports);
    ``methods`` are the settings in force (the board's policy, if any)."""
    pkg = files("dossier")
    docs = tree_digest(files("dossier.docs")) if has_package("dossier.docs") else ""
    return BuildSettings(
        code=key(__version__, tree_digest(pkg, (".py",)), *method_library_versions()),
        library=key(pkg.joinpath("data", "species.json").read_bytes()),
        templates=key(tree_digest(files("dossier.templates")), docs),
        methods=key(canonical_json(methods.record())),
        packets=packets, meeting=meeting)


#: General-purpose libraries whose numbers assessments may use; an upgrade of one
#: must not let the cache serve assessments made with the old one.
METHOD_LIBRARIES = ("thermo", "pgradd", "rdkit", "chemicals")


def method_library_versions() -> tuple[str, ...]:
    """``"name=version"`` of each of :data:`METHOD_LIBRARIES` (metadata only, no import)."""
    out = []
    for name in METHOD_LIBRARIES:
        try:
            out.append(f"{name}={importlib.metadata.version(name)}")
        except importlib.metadata.PackageNotFoundError:
            out.append(f"{name}=not installed")
    return tuple(out)


def case_key(inputs: CaseInputs, settings: BuildSettings) -> str:
    """The key of a case's assessment: the case file and every file it draws on.

    The case file's bytes and path; its signatures file and (when it exists)
    the trusted keys; its kept revisions (all as read once into ``inputs``);
    the library, the method settings and the code.
    """
    return key(*inputs.key_parts(), settings.code, settings.library, settings.methods)


def unreadable_key(failure: CaseFailure) -> str:
    """The key of a case file that could not be read: what went wrong."""
    return key("unreadable", failure.file, *failure.problems)


def view_key(assess_key: str, case_slug: str, species_slugs: Sequence[str],
             settings: BuildSettings) -> str:
    """A case's view (figures and derivation) does not depend on the templates."""
    return key("view", assess_key, case_slug, *species_slugs, settings.code)


def drawings_key(code: str, slug: str, assessment: dict, thermo: bytes) -> str:
    """The key of a case's figures and derivation: what they are drawn from (the
    assessment as its JSON says it, the reaction's properties pickled, the page
    address) and the code that draws them; not the narrative or the reviews."""
    return key("drawings", code, slug,
               json.dumps(assessment, sort_keys=True, ensure_ascii=False), thermo)


def case_unit_key(view_key: str, settings: BuildSettings) -> str:
    return key("case", view_key, *settings.parts())


def species_unit_key(rec: SpeciesRecord, local: bool, slug: str, local_to: str | None,
                     used_by: Sequence[UsedBy], settings: BuildSettings) -> str:
    """A library record is named by its id (the library digest is in the settings);
    a case's own record by its contents."""
    rec_digest = key("local", dumps(rec)) if local else key("library", rec.id)
    return key("species", rec_digest, slug, local_to or "", json.dumps(used_by),
               *settings.parts())


def meeting_unit_key(date: str, slug: str, case_keys: Sequence[str],
                     settings: BuildSettings) -> str:
    return key("meeting", date, slug, *case_keys, *settings.parts())


def register_key(case_keys: Sequence[str], failed: Sequence,
                 settings: BuildSettings) -> str:
    """``failed``: CaseFailures, or the register's rows of them (with their pages and the
    revision of their last good assessment, which the register shows)."""
    return key("register", *settings.parts(), *case_keys, json.dumps(
        [[f.file, list(f.problems), getattr(f, "slug", ""),
          str((getattr(f, "earlier", None) or {}).get("revision", "")),
          list(getattr(f, "kept", ()))] for f in failed]))


def build_key(settings: BuildSettings, strict: bool, paths: Sequence[Path],
              case_keys: Sequence[str]) -> str:
    """The key of the whole build: when the manifest holds it, nothing changed."""
    return key(MANIFEST_FORMAT, *settings.parts(), "strict" if strict else "",
               *(part for p, k in zip(paths, case_keys) for part in (str(p), k)))


__all__ = ["MANIFEST_FORMAT", "BuildSettings", "build_key", "build_settings", "case_key",
           "case_unit_key", "has_package", "meeting_unit_key", "register_key",
           "species_unit_key", "tree_digest", "unreadable_key", "view_key", "drawings_key"]
