"""Energetic screening of the species of a case: oxygen balance, the maximum
decomposition energy into simple products, explosophore groups and the UN
Appendix 6 screening, for each species whose composition allows the usual
energetic groups and for every species with a structure (a case table's
``smiles``, an estimated species, or a library record that carries one).

Pure: resolved species, the library (for the products' ΔfH°) and the method
settings in; :class:`~dossier.model.assessment.EnergeticScreen` records out,
with the library records of the products that were used (they are part of
the integrity record).
"""
from __future__ import annotations

from dossier.assess.resolve import ResolvedTerm
from dossier.engine import energetics
from dossier.engine.decomposition import Product, max_decomposition_energy
from dossier.engine.settings import MethodSettings
from dossier.errors import DossierError
from dossier.library.datafile import StructureGroups
from dossier.library.lookup import Library, structure_groups
from dossier.library.record import SpeciesRecord
from dossier.model.assessment import EnergeticScreen

#: The screening's inputs as the case file names them.  The [decomposition]
#: data describe the reaction mass, not one species, so a species' own onset
#: is never known here.
SCREENING_LABELS = {
    "energy": "decomposition.energy (exothermic decomposition energy, e.g. DSC)",
    "onset": "decomposition.onset (onset of exothermic decomposition)",
}
_ONSET_UNKNOWN = ("decomposition.onset (onset of exothermic decomposition) missing",
                  "this species' own decomposition onset is not known")
#: What the screening says when RDKit, a run-time dependency, cannot be imported.
NO_TOOLKIT = ("not checked: RDKit, which reads the structure, could not be imported "
              "(a broken installation: reinstall dossier's dependencies)")


def decomposition_products(library: Library, settings: MethodSettings
                           ) -> tuple[tuple[Product, ...], tuple[SpeciesRecord, ...]]:
    """The candidate products of the settings that the library holds, and their records."""
    products, records = [], []
    for name, label, phase in settings.decomposition_products:
        try:
            rec = library.resolve(label, phase)
        except DossierError:
            continue
        products.append(Product(name, rec.formula, rec.hf298))
        records.append(rec)
    return tuple(products), tuple(records)


def is_screened(rec: SpeciesRecord) -> bool:
    """Species that are screened: every species with a structure, and those whose
    composition allows the usual energetic groups.

    From the composition alone: nitrogen together with oxygen (nitro, nitrate,
    nitroso, N-oxide, ammonium nitrate) or halogen together with oxygen (chlorate,
    perchlorate).  Peroxides, azides, acetylenes and strained rings cannot be told
    from a formula: they are found only in a structure (``smiles`` of a case table,
    or of the library record).
    """
    if rec.smiles:
        return True
    comp = rec.composition
    if "O" not in comp:
        return False
    return "N" in comp or any(x in comp for x in ("Cl", "Br", "I"))


def known_groups(rec: SpeciesRecord, smiles: str | None,
                 table: StructureGroups | None) -> energetics.GroupCheck | None:
    """The groups of ``smiles`` from ``table``, when the table holds that structure, was
    made with today's group patterns, and gives the record's elements; otherwise None
    (the structure is then read with RDKit, which also reports a mismatch)."""
    entry = table.get(smiles) if table is not None and smiles else None
    if entry is None or table.patterns != energetics.patterns_key():
        return None
    elements, counts = entry
    if not energetics.same_elements(elements, rec.composition):
        return None
    return energetics.groups_from_counts(counts)


def screen_species(rec: SpeciesRecord, smiles: str | None, products: tuple[Product, ...],
                   settings: MethodSettings, table: StructureGroups | None = None
                   ) -> EnergeticScreen:
    """Screen one species on its own estimated maximum decomposition energy (an upper
    bound) with its onset unknown.  ``table`` gives the groups of known structures
    (:func:`known_groups`)."""
    comp = rec.composition
    try:
        ob = energetics.oxygen_balance(comp) + 0.0 if rec.charge == 0 else None  # no "-0.0"
    except DossierError:
        ob = None
    dec = None
    made: tuple[str, ...] = ()
    try:
        res = max_decomposition_energy(comp, rec.hf298, products, settings.un_energy_J_per_g)
        dec = res.energy_J_per_g
        made = tuple(f"{n} {x * rec.molar_mass:.3g}" for n, x in res.products)
    except (DossierError, ValueError):
        pass
    try:
        # A negative maximum means no exothermic decomposition into these products.
        scr = energetics.un_screening(
            comp, smiles=smiles, groups=known_groups(rec, smiles, table),
            decomposition_energy_J_per_g=max(dec, 0.0) if dec is not None else None,
            settings=settings, labels=SCREENING_LABELS)
        outcome, reason = scr.outcome, scr.reason.replace(*_ONSET_UNKNOWN)
        hits = tuple(h.name for h in scr.groups.hits)
        note = scr.groups.note
        if smiles and not scr.groups.checked:
            reason, note = reason.replace(note, NO_TOOLKIT), NO_TOOLKIT
    except DossierError as err:
        outcome, reason, hits, note = "undecided", str(err), (), ""
    return EnergeticScreen(species=rec.name if rec.name else rec.id, oxygen_balance_pct=ob,
                           max_decomposition_J_per_g=dec, products=made,
                           screening_outcome=outcome, screening_reason=reason,
                           explosophores=hits, explosophore_note=note)


def screen_terms(terms: tuple[ResolvedTerm, ...], library: Library, settings: MethodSettings
                 ) -> tuple[tuple[EnergeticScreen, ...], tuple[SpeciesRecord, ...]]:
    """Screens of the species that need one, and the product records used (none when
    no species needed screening)."""
    chosen = [t for t in terms if is_screened(t.record)]
    if not chosen:
        return (), ()
    products, records = decomposition_products(library, settings)
    table = structure_groups() if any(t.record.smiles for t in chosen) else None
    return (tuple(screen_species(t.record, t.record.smiles, products, settings, table)
                  for t in chosen), records)


__all__ = ["SCREENING_LABELS", "NO_TOOLKIT", "decomposition_products", "is_screened",
           "known_groups", "screen_species", "screen_terms"]
