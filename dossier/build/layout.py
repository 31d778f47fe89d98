"""Where everything goes in the site: the slugs of cases and species pages, and
which case uses which species page (cheap: nothing is rendered here)."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

from dossier.build.assessing import AssessedCase
from dossier.library.record import SpeciesRecord
from dossier.render.slugs import case_slugs, unique_slugs

#: A case's (case slug, case id, species key as written) on a species page.
UsedBy = tuple[str, str, str]


def species_key(a: AssessedCase, i: int) -> tuple[str, ...]:
    """The species page of the ``i``-th species of a case: a library record is shared
    by every case that uses it; a case's own record has a page of its own."""
    use = a.assessment.species[i]
    return ("local", a.case.id, use.record_id) if use.local else ("library", use.record_id)


@dataclass(frozen=True)
class SiteLayout:
    """Slugs and cross-links of a set of assessed cases."""

    case_slug: dict[str, str]  # case id -> slug
    species: dict[tuple, tuple[str, SpeciesRecord]]  # species key -> (text, record)
    species_slug: dict[tuple, str]

    def species_slugs(self, a: AssessedCase) -> list[str]:
        return [self.species_slug[species_key(a, i)] for i in range(len(a.records))]

    def local_to(self, k: tuple) -> str | None:
        """The slug of the case a species page belongs to, for a case's own record."""
        return self.case_slug[k[1]] if k[0] == "local" else None

    def used_by(self, published: Sequence[AssessedCase]) -> dict[tuple, list[UsedBy]]:
        used: dict[tuple, list[UsedBy]] = {}
        for a in published:
            for i, use in enumerate(a.assessment.species):
                used.setdefault(species_key(a, i), []).append(
                    (self.case_slug[a.case.id], a.case.id, use.key))
        return used


def site_layout(assessed: Sequence[AssessedCase]) -> SiteLayout:
    case_slug = case_slugs([a.case.id for a in assessed])
    species: dict[tuple, tuple[str, SpeciesRecord]] = {}
    for a in assessed:
        for i, rec in enumerate(a.records):
            k = species_key(a, i)
            text = f"local {case_slug[a.case.id]} {rec.id}" if k[0] == "local" else rec.id
            species.setdefault(k, (text, rec))
    sp_slug = unique_slugs([(k, text) for k, (text, _r) in species.items()])
    return SiteLayout(case_slug, species, sp_slug)


__all__ = ["UsedBy", "SiteLayout", "site_layout", "species_key"]
