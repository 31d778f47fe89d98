"""The case at the scale of its batch: heat, entropy, runaway scenario, gas
and energetic screening, from the [charge], [vessel], [decomposition] and
[measured] tables.  Pure: the case, the resolved species and the engine in,
a :class:`dossier.assess.evaluate.Safety` out.  The methods themselves live in
:mod:`dossier.engine.safety` and :mod:`dossier.engine.energetics`.
"""
from __future__ import annotations

from typing import TYPE_CHECKING

from dossier.engine import energetics
from dossier.engine import safety
from dossier.errors import CaseError, DossierError, Problem
from dossier.library.lookup import Library, SpeciesRecord
from dossier.engine.thermo import ReactionThermo

if TYPE_CHECKING:  # pragma: no cover
    from dossier.assess.evaluate import EnergeticScreen, Safety
    from dossier.model.case import Case
    from dossier.chem.reaction import Reaction, Term

#: Simple products for the maximum-decomposition-energy estimate, with the
#: library labels that supply their ΔfH°.  Water as vapour: the gas a
#: runaway actually makes.
DECOMPOSITION_PRODUCTS: tuple[tuple[str, str, str], ...] = (
    ("CO2", "CO2", "g"), ("H2O", "H2O", "g"), ("CO", "CO", "g"), ("N2", "N2", "g"),
    ("H2", "H2", "g"), ("O2", "O2", "g"), ("C", "C", "s"), ("HCl", "HCl", "g"),
    ("HF", "HF", "g"), ("SO2", "SO2", "g"), ("Cl2", "Cl2", "g"),
)


def _products(library: Library) -> list[energetics.Product]:
    out = []
    for name, label, phase in DECOMPOSITION_PRODUCTS:
        try:
            rec = library.resolve(label, phase)
        except DossierError:
            continue
        out.append(energetics.Product(name, rec.formula, rec.hf298))
    return out


def _energetic_screen(rec: SpeciesRecord, smiles: str | None, case: "Case",
                      library: Library) -> "EnergeticScreen":
    from dossier.assess.evaluate import EnergeticScreen

    comp = rec.composition
    try:
        ob = energetics.oxygen_balance(comp) + 0.0 if rec.charge == 0 else None  # no "-0.0"
    except DossierError:
        ob = None
    dec = None
    products: tuple[str, ...] = ()
    try:
        res = energetics.max_decomposition_energy(comp, rec.hf298, _products(library))
        dec = res.energy_J_per_g
        products = tuple(f"{n} {x * rec.molar_mass:.3g}" for n, x in res.products)
    except (DossierError, ValueError):
        pass
    # The case's [decomposition] data describe the reaction mass, not this
    # species, so the species is screened on its own estimated maximum
    # decomposition energy (an upper bound) with its onset unknown.
    try:
        # A negative maximum means no exothermic decomposition into these products.
        scr = energetics.un_screening(comp, smiles=smiles, decomposition_energy_J_per_g=(
            max(dec, 0.0) if dec is not None else None))
        outcome, reason = scr.outcome, scr.reason.replace(
            "decomposition.onset (onset of exothermic decomposition) missing",
            "this species' own decomposition onset is not known")
        hits = tuple(h.name for h in scr.groups.hits)
        note = scr.groups.note
    except DossierError as err:
        outcome, reason, hits, note = "undecided", str(err), (), ""
    return EnergeticScreen(species=rec.name if rec.name else rec.id, oxygen_balance_pct=ob,
                           max_decomposition_J_per_g=dec, products=products,
                           screening_outcome=outcome, screening_reason=reason,
                           explosophores=hits, explosophore_note=note)


def _is_screened(rec: SpeciesRecord) -> bool:
    """Species whose composition allows the usual energetic groups.

    Nitrogen together with oxygen (nitro, nitrate, nitroso, N-oxide, ammonium
    nitrate) or halogen together with oxygen (chlorate, perchlorate).  Peroxides
    cannot be told from a formula: give the species a structure (``smiles``
    in a case-local record) to have its groups checked.  Species with a
    structure are always screened.
    """
    comp = rec.composition
    if "O" not in comp:
        return False
    return "N" in comp or any(x in comp for x in ("Cl", "Br", "I"))


def entropy_reading(s_sys: float, s_surr: float) -> str:
    """The sign of the universe's entropy change, said in words."""
    s_univ = s_sys + s_surr
    if s_sys < 0 < s_surr:
        how = ("the surroundings gain more entropy from the heat released than the system "
               "loses" if s_univ > 0 else
               "the entropy the surroundings gain from the heat released does not make up for "
               "what the system loses")
    elif s_surr < 0 < s_sys:
        how = ("the system gains more entropy than the surroundings lose by supplying the heat"
               if s_univ > 0 else
               "the system gains less entropy than the surroundings lose by supplying the heat")
    elif s_univ > 0:
        how = "system and surroundings both gain entropy"
    else:
        how = "system and surroundings both lose entropy"
    if s_univ > 0:
        return (f"positive: {how}, so the reaction runs spontaneously at standard state at the "
                "process temperature (the same verdict as ΔG° < 0)")
    if s_univ < 0:
        return (f"negative: {how}, so the reaction does not run spontaneously at standard state "
                "at the process temperature (the same verdict as ΔG° > 0)")
    return "zero: the reaction is at equilibrium at standard state (ΔG° = 0)"


def assess_safety(case: "Case", reaction: "Reaction",
                  resolved: list[tuple["Term", SpeciesRecord, bool, bool]],
                  thermo: ReactionThermo, basis: "Term", library: Library) -> "Safety":
    from dossier.assess.evaluate import ScaleFigures, Safety

    path = str(case.path)
    ch, vs, dec, meas = case.charge, case.vessel, case.decomposition, case.measured
    smiles = {f"{sp.name}({'s' if str(sp.phase) == 'cr' else sp.phase})": sp.smiles
              for sp in case.species}
    screens = tuple(
        _energetic_screen(rec, smiles.get(rec.id), case, library)
        for _term, rec, _l, _o in resolved if _is_screened(rec) or smiles.get(rec.id))

    scale = None
    heat_J = None
    n_gas_mol = None
    if ch is not None:
        basis_rec = next(rec for term, rec, _l, _o in resolved if term.key == basis.key)
        if ch.amount_kind == "mass":
            if not basis_rec.molar_mass:
                raise CaseError([Problem("the basis species has no molar mass; give the amount "
                                         "in mol", path, case.line_of("charge.amount"),
                                         "charge.amount")])
            n_basis = ch.amount / (basis_rec.molar_mass / 1e3)
        else:
            n_basis = ch.amount
        n_rxn = n_basis / float(basis.coefficient)
        T_p = ch.process_temperature
        dH_comp = float(thermo.dH(T_p))
        dS_comp = float(thermo.dS(T_p))
        if meas is not None:
            dH_used, origin = meas.reaction_enthalpy, "measured"
        else:
            dH_used, origin = dH_comp, "computed"
        heat_J = -dH_used * n_rxn
        gas_per_rxn = sum(float(nu) for nu, term in reaction.signed() if term.phase == "g")
        n_gas_mol = gas_per_rxn * n_rxn if gas_per_rxn > 0 else 0.0
        s_sys = n_rxn * dS_comp
        s_surr = -n_rxn * dH_comp / T_p
        s_univ = s_sys + s_surr
        reading = entropy_reading(s_sys, s_surr)
        rate_kW = (heat_J / ch.feed_time / 1e3) if ch.feed_time else None
        scale = ScaleFigures(
            basis=basis.key, basis_mol=n_basis, reaction_mol=n_rxn,
            enthalpy_used_kJ_mol=dH_used / 1e3, enthalpy_origin=origin,
            enthalpy_computed_kJ_mol=dH_comp / 1e3,
            enthalpy_measured_kJ_mol=meas.reaction_enthalpy / 1e3 if meas else None,
            measured_method=meas.method if meas else None,
            heat_released_kJ=heat_J / 1e3, heat_released_kJ_per_kg=heat_J / 1e3 / ch.mass,
            release_rate_kW=rate_kW, T_process_K=T_p,
            entropy_system_kJ_per_K=s_sys / 1e3, entropy_surroundings_kJ_per_K=s_surr / 1e3,
            entropy_universe_kJ_per_K=s_univ / 1e3, entropy_reading=reading,
            gas_mol=n_gas_mol)

    endothermic = heat_J is not None and heat_J < 0.0
    no_gas = n_gas_mol is not None and n_gas_mol <= 0.0
    try:
        sc = safety.runaway_scenario(
            # An endothermic reaction cannot heat the mass: no adiabatic rise.
            heat_J=0.0 if endothermic else heat_J,
            mass_kg=ch.mass if ch else None, cp=ch.cp if ch else None,
            t_process=ch.process_temperature if ch else None,
            accumulation=ch.accumulation if ch else None,
            mtt=vs.mtt if vs else None,
            td24_given=dec.td24 if dec else None,
            ea=dec.activation_energy if dec else None,
            q_ref=dec.rate_power if dec else None,
            t_ref=dec.rate_temperature if dec else None,
            decomposition_energy_J_per_kg=dec.energy if dec else None,
            feed_time_s=ch.feed_time if ch else None,
            ua_W_per_K=vs.cooling_ua if vs else None,
            t_coolant=vs.coolant_temperature if vs else None,
            n_gas_mol=None if no_gas else n_gas_mol,
            free_volume_m3=vs.free_volume if vs else None,
            p_initial_Pa=case.pressure,
            design_pressure_Pa=vs.design_pressure if vs else None,
        )
    except DossierError as err:
        problems = []
        for p in err.problems:
            key = "decomposition" if "TD24" in p.message or "decomposition" in p.message else None
            problems.append(Problem(p.message, path, case.line_of(key) if key else None, key))
        raise CaseError(problems) from None

    if ch is None:
        not_assessed = (("heat and entropy at scale", ("[charge] table",)),) + sc.blocked
    else:
        not_assessed = sc.blocked
    if no_gas:  # nothing to assess: the reaction makes no gas
        not_assessed = tuple((f, m) for f, m in not_assessed
                             if f not in ("gas volume", "gas pressure",
                                          "pressure against design pressure"))
    if sc.criticality.klass is None:
        not_assessed += (("criticality class", sc.criticality.missing),)
    notes = list(sc.notes)
    if endothermic:
        notes.insert(0, f"the reaction is endothermic: it absorbs {-heat_J / 1e3:,.0f} kJ per batch "
                        "and cannot heat the mass, so its adiabatic temperature rise is taken as "
                        "zero (MTSR = process temperature)")
    if no_gas:
        notes.append("the reaction releases no gas (it makes no more gas than it uses), so "
                     "there is no gas volume or pressure to assess")
    missing = tuple(m for m in sc.missing if not (no_gas and m.startswith(("gas evolved",
                                                                         "vessel.free_volume",
                                                                         "vessel.design_pressure"))))
    missing = missing if ch is not None else (("[charge] table (basis, amount, mass, cp, "
                                                  "process_temperature, accumulation)",)
                                                 + missing)
    cool = sc.cooling
    return Safety(
        scale=scale,
        adiabatic_rise_K=sc.dT_ad, severity=sc.severity, mtsr_K=sc.mtsr,
        mtt_K=vs.mtt if vs else None, td24_K=sc.td24, td24_origin=sc.td24_origin,
        tmrad_at_mtsr_h=sc.tmr_at_mtsr_s / 3600.0 if sc.tmr_at_mtsr_s is not None else None,
        probability=sc.probability, probability_basis=sc.probability_basis,
        criticality_class=sc.criticality.klass, criticality_reason=sc.criticality.reason,
        decomposition_rise_K=sc.decomposition_rise, final_temperature_K=sc.final_temperature,
        release_rate_kW=cool.release_rate_W / 1e3 if cool else (scale.release_rate_kW if scale else None),
        cooling_capacity_kW=cool.capacity_W / 1e3 if cool else None,
        cooling_margin_kW=cool.margin_W / 1e3 if cool else None,
        cooling_sufficient=cool.sufficient if cool else None,
        gas_volume_normal_m3=sc.gas_volume_normal_m3,
        pressure_at_mtsr_bar=sc.gas_pressure_Pa / 1e5 if sc.gas_pressure_Pa is not None else None,
        design_pressure_bar=vs.design_pressure / 1e5 if vs and vs.design_pressure else None,
        pressure_exceeds_design=sc.pressure_exceeds_design,
        not_assessed=tuple(not_assessed), missing_inputs=tuple(missing), notes=tuple(notes),
        energetics=screens,
    )
