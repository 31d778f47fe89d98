"""Thermochemical estimates for a species that no table holds, from its structure.

A SMILES in, an :class:`Estimate` out: ΔfH°(298.15 K), S°(298.15 K) and Cp°(T)
of the ideal gas or of the liquid, each with its standard uncertainty and the
method it came from, and the Shomate model the engine evaluates.  Pure: no
I/O of ours (the group libraries read their own package data); the heavy
libraries (RDKit, pgradd, thermo, chemicals) are imported inside the
functions that need them.

Methods
-------
* **Benson group additivity** (S. W. Benson, *Thermochemical Kinetics*, 2nd
  ed., Wiley 1976) with the group values of pgradd's ``BensonGA`` library
  (Vlachos group, University of Delaware).  S° is the sum of the groups'
  intrinsic entropies − R ln σ (+ R ln 2 for a structure whose handedness the
  SMILES leaves open), σ the symmetry number found here from the structure
  (:func:`symmetry_number`), as Benson's method prescribes.
* **Joback** (K. G. Joback and R. C. Reid, Chem. Eng. Comm. 57 (1987) 233),
  as implemented in ``thermo.group_contribution.joback``: ΔfH°, ΔfG° and the
  ideal-gas Cp polynomial; S° = (ΔfH° − ΔfG°)/T + Σ S°(elements).
* ``"benson"`` uses Benson for each property whose groups all carry a value
  and Joback for the rest, and says which was used; ``"joback"`` uses Joback
  only.  A property neither method gives is refused with the reason.
* **Liquid**: ΔfH°(l) = ΔfH°(g) − ΔvapH(298.15 K) and S°(l) = S°(g) +
  R ln(p°/p_sat) − ΔvapH/T, with p_sat(T) from the Lee–Kesler vapour-pressure
  correlation (Lee and Kesler, AIChE J. 21 (1975) 510) on Joback's boiling and
  critical points, ω from the Lee–Kesler acentric-factor correlation, and
  ΔvapH = R T² d ln p_sat/dT (ideal vapour, liquid volume neglected); Cp(l)
  from the Rowlinson–Poling corresponding-states equation (Poling, Prausnitz
  and O'Connell, *The Properties of Gases and Liquids*, 5th ed., 2001).

Uncertainties are standard uncertainties (one standard deviation) built from
the published accuracies held in :class:`~dossier.engine.settings.MethodSettings`
(each named there); those of the liquid step propagate Joback's published
errors of Tb, Tc and Pc through the correlations.
"""
from __future__ import annotations

import functools
import math
import warnings
from dataclasses import dataclass

import numpy as np

from dossier.constants import P_STANDARD, R, T_REF
from dossier.engine.settings import MethodSettings
from dossier.engine.symmetry import symmetry_number
from dossier.errors import SpeciesError
from dossier.library.models import Shomate
from dossier.model.case import EstimateMethod

#: The methods a [[species]] table may ask for.
METHODS = tuple(m.value for m in EstimateMethod)

#: Standard molar entropies of the elements in their reference states at 298.15 K,
#: J/(mol K) per atom: CODATA Key Values for Thermodynamics (Cox, Wagman and
#: Medvedev, 1989), from memory; cross-checked against the library's own records
#: in tests/unit/engine/test_estimate.py.  Used for S° from Joback's ΔfH° and ΔfG°.
ELEMENT_ENTROPY: dict[str, float] = {
    "C": 5.74, "H": 130.680 / 2, "O": 205.152 / 2, "N": 191.609 / 2, "F": 202.791 / 2,
    "Cl": 223.081 / 2, "Br": 152.21 / 2, "I": 116.14 / 2, "S": 32.054,
}

BENSON_SOURCE = ("Benson group additivity (S. W. Benson, Thermochemical Kinetics, 2nd ed., "
                 "Wiley 1976), group values of the BensonGA library of pgradd")
JOBACK_SOURCE = ("Joback group contribution (K. G. Joback and R. C. Reid, Chem. Eng. Comm. "
                 "57 (1987) 233), as implemented in thermo")
LIQUID_SOURCE = ("liquid from the ideal gas: ΔvapH and p_sat at 298.15 K from the Lee–Kesler "
                 "vapour-pressure correlation on Joback's Tb, Tc and Pc (Clausius–Clapeyron, "
                 "ideal vapour); Cp(l) by Rowlinson–Poling (Poling, Prausnitz and O'Connell, "
                 "The Properties of Gases and Liquids, 5th ed., 2001)")

#: Groups that mark an associating liquid (O–H, N–H): Rowlinson–Poling's Cp is poor there.
_ASSOCIATING = "[OX2H,NX3;!H0,nH]"


@dataclass(frozen=True)
class Quantity:
    """One estimated property at 298.15 K: SI value, standard uncertainty, method."""

    value: float
    uncertainty: float
    method: str


@dataclass(frozen=True)
class Estimate:
    """Estimated data of one species in one phase (``g`` or ``l``)."""

    smiles: str
    phase: str
    composition: tuple[tuple[str, float], ...]
    hf: Quantity              # J/mol
    s: Quantity               # J/(mol K)
    cp: Quantity              # J/(mol K), at 298.15 K
    model: Shomate
    symmetry_number: int
    groups: str               # the groups the estimate was added up from, as text
    notes: tuple[str, ...]
    sources: tuple[str, ...]  # the methods used, in full
    t_boil: Quantity | None = None  # K, normal boiling point (Joback), where it applies
    t_melt: Quantity | None = None  # K, normal melting point (Joback), where it applies

    @property
    def uncertainty(self) -> tuple[tuple[str, float], ...]:
        """The standard uncertainties as a record carries them (12 significant digits)."""
        return tuple((k, float(f"{q.uncertainty:.12g}"))
                     for k, q in (("hf", self.hf), ("s", self.s), ("cp", self.cp)))

    @property
    def summary(self) -> str:
        """Which method gave which property, in one line."""
        by: dict[str, list[str]] = {}
        for name, q in (("ΔfH°", self.hf), ("S°", self.s), ("Cp°", self.cp)):
            by.setdefault(q.method, []).append(name)
        return "; ".join(f"{', '.join(v)} by {k}" for k, v in by.items())


# -- structure -------------------------------------------------------------------

def _chem():
    try:
        from rdkit import Chem, RDLogger
        from rdkit.Chem import AllChem
    except ImportError as exc:  # a run-time dependency: only a broken installation
        raise SpeciesError("estimates need RDKit to read the structure, and it could not be "
                           f"imported ({exc}); reinstall dossier's dependencies") from None
    RDLogger.DisableLog("rdApp.*")
    return Chem, AllChem


def read_structure(smiles: str, settings: MethodSettings):
    """The RDKit molecule of ``smiles``, refused plainly when it cannot be estimated."""
    Chem, _ = _chem()
    mol = Chem.MolFromSmiles(smiles.strip())
    if mol is None:
        raise SpeciesError(f"cannot read the SMILES '{smiles}': check it (RDKit could not "
                           "parse it)")
    limit = settings.estimate_max_heavy_atoms
    if mol.GetNumAtoms() > limit:
        raise SpeciesError(f"the structure has {mol.GetNumAtoms()} atoms besides hydrogen; "
                           f"estimates are made for molecules of up to {limit}")
    pieces = len(Chem.GetMolFrags(mol))
    if pieces > 1:
        raise SpeciesError(f"the SMILES holds {pieces} separate molecules; give the structure "
                           "of one species")
    if any(a.GetNumRadicalElectrons() for a in mol.GetAtoms()):
        raise SpeciesError("the structure is a radical; group-additivity estimates here are "
                           "for closed-shell molecules only")
    if Chem.GetFormalCharge(mol) != 0:
        raise SpeciesError("the structure carries a net charge; estimates are for neutral "
                           "molecules only (an ion needs measured data)")
    return mol


def composition_of(mol) -> dict[str, float]:
    """Element counts of a molecule, hydrogens included."""
    out: dict[str, float] = {}
    for atom in mol.GetAtoms():
        out[atom.GetSymbol()] = out.get(atom.GetSymbol(), 0.0) + 1.0
        if atom.GetTotalNumHs():
            out["H"] = out.get("H", 0.0) + atom.GetTotalNumHs()
    return out


# -- Benson (pgradd) -------------------------------------------------------------

def package_version(package: str) -> str:
    """The installed version of a method library, from its package metadata ("not
    installed" when it is not)."""
    import importlib.metadata  # deferred: about 20 ms (email, zipfile, csv)

    try:
        return importlib.metadata.version(package)
    except importlib.metadata.PackageNotFoundError:
        return "not installed"


@functools.lru_cache(maxsize=1)
def _benson_library():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        from pgradd.GroupAdd.Library import GroupLibrary
        import pgradd.ThermoChem  # noqa: F401  (registers the thermochemistry property set)
        return GroupLibrary.Load("BensonGA")


def _group_mismatch(mol) -> str | None:
    """Why pgradd's groups cannot describe this structure, or None: its ring corrections
    are for single rings, so fused and bridged ring systems are refused (naphthalene's
    ΔfH° comes out 68 kJ/mol high, decalin's S° 160 J/(mol K) low)."""
    rings = mol.GetRingInfo()
    if any(rings.NumAtomRings(a.GetIdx()) > 1 for a in mol.GetAtoms()):
        return ("pgradd's Benson groups treat each ring on its own, so fused and bridged "
                "ring systems are not estimated with them")
    return None


def _benson(smiles: str, mol, settings: MethodSettings) -> tuple[dict, str, str | None]:
    """({property: (value, range)}, groups text, why Benson gave nothing)."""
    Chem, _ = _chem()
    lib = _benson_library()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            found = lib.GetDescriptors(Chem.MolToSmiles(mol))
        except Exception as exc:  # pgradd raises its own error types for unknown patterns
            return {}, "", f"Benson groups could not be assigned ({type(exc).__name__})"
        groups = {str(g): float(n) for g, n in found.items()}
        text = ", ".join(f"{g} ×{n:g}" for g, n in sorted(groups.items()))
        missing = [g for g in found if "thermochem" not in lib[g]]
        if missing:
            return {}, text, ("no Benson value for the group" + ("s " if len(missing) > 1
                                                                 else " ")
                              + ", ".join(map(str, missing)))
        why = _group_mismatch(mol)
        if why:
            return {}, text, why
        try:
            sums, lacking = _benson_sums(lib, found, settings)
        except Exception as exc:  # pgradd raises its own error types
            return {}, text, f"pgradd could not add up the groups ({type(exc).__name__})"
        why = "; ".join(f"no Benson {what} for {', '.join(groups)}"
                        for what, groups in lacking.items() if groups)
        return sums, text, why or None


def _benson_sums(lib, found, settings: MethodSettings) -> tuple[dict, dict[str, list[str]]]:
    """ΔfH°, S° (intrinsic, before symmetry) and Cp(T) samples, each where every group
    has a value (enthalpy-only corrections add nothing to S° and Cp), and the groups
    that lack each value."""
    zero = dict(settings.estimate_benson_enthalpy_only)
    hf = s = 0.0
    lacking: dict[str, list[str]] = {"enthalpy": [], "entropy": [], "heat capacity": []}
    hi = math.inf
    corrs = []
    for group, n in found.items():
        corr = lib[group]["thermochem"]
        if not corr.has_ND_H():
            lacking["enthalpy"].append(str(group))
            continue
        hf += n * corr.get_H(T_REF, "J/mol")
        if corr.has_ND_S():
            s += n * corr.get_S(T_REF, "J/mol/K")
        elif str(group) in zero:
            s += n * zero[str(group)]
        else:
            lacking["entropy"].append(str(group))
        if corr.has_ND_Cp():
            hi = min(hi, corr.get_range()[1])
            corrs.append((corr, n))
        elif str(group) not in zero:
            lacking["heat capacity"].append(str(group))
    out: dict = {} if lacking["enthalpy"] else {"hf": hf}
    if not lacking["enthalpy"] and not lacking["entropy"]:
        out["s"] = s
    if not lacking["heat capacity"] and corrs and hi > T_REF:
        grid = np.linspace(T_REF, hi, 25)
        out["cp"] = (grid, np.array([sum(n * c.get_Cp(float(T), "J/mol/K") for c, n in corrs)
                                     for T in grid]))
    return out, lacking


# -- Joback (thermo) -------------------------------------------------------------

def _joback(mol):
    """Joback's estimate object, or the reason it cannot be used."""
    Chem, _ = _chem()
    from thermo.group_contribution.joback import Joback

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            job = Joback(Chem.Mol(mol))
        except Exception as exc:  # thermo raises its own error types
            return None, f"Joback could not split the structure into groups ({type(exc).__name__})"
    if job.status != "OK" or not job.counts:
        return None, "Joback's groups do not cover every atom of the structure"
    return job, None


def _joback_thermo(job, mol, settings: MethodSettings) -> tuple[dict, str | None]:
    """Joback's ΔfH°, ΔfG° and Cp coefficients (values it lacks are None), or why they
    are not used: it is a method for organic molecules (carbon and hydrogen: CO2 comes
    out 109 kJ/mol off, HCl 89, hexafluoroethane 65), has no ring-strain terms (small
    rings, fused and bridged saturated rings are refused) and misreads the structures
    the settings exclude."""
    Chem, _ = _chem()
    elements = composition_of(mol)
    if "C" not in elements or "H" not in elements:
        return {}, "Joback is a method for organic molecules with carbon and hydrogen"
    rings = mol.GetRingInfo()
    small = [len(r) for r in rings.AtomRings() if len(r) < settings.estimate_joback_min_ring]
    if small:
        return {}, (f"Joback has no ring-strain terms and is not used for "
                    f"{min(small)}-membered rings")
    if any(rings.NumAtomRings(a.GetIdx()) > 1 and not a.GetIsAromatic() for a in mol.GetAtoms()):
        return {}, ("Joback is not used for fused or bridged saturated ring systems (our "
                    "cross-check: decalin's ΔfH° comes out 53 kJ/mol off)")
    for what, smarts in settings.estimate_joback_excluded:
        if mol.HasSubstructMatch(Chem.MolFromSmarts(smarts)):
            return {}, f"Joback's groups do not describe {what}, so it is not used for them"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return job.estimate(callables=False), None


def _joback_errors(settings: MethodSettings) -> dict[str, float]:
    """Standard uncertainty of each Joback property from its published average absolute
    error and the standard deviation of the errors: the root mean square of errors with
    that mean and spread."""
    given = dict(settings.estimate_joback_errors)
    names = {k.split()[0] for k in given}
    return {n: math.hypot(given[f"{n} mean abs"], given[f"{n} sd"]) for n in names}


# -- Cp(T) as a Shomate model ----------------------------------------------------

def _fit_cp(T: np.ndarray, cp: np.ndarray) -> tuple[tuple[float, ...], float]:
    """Shomate A..E fitted (least squares) to Cp samples, and the largest relative miss."""
    t = T / 1000.0
    basis = np.column_stack([np.ones_like(t), t, t**2, t**3, 1.0 / t**2])
    coef = np.linalg.lstsq(basis, cp, rcond=None)[0]
    miss = float(np.max(np.abs(basis @ coef - cp) / np.abs(cp)))
    return tuple(float(c) for c in coef), miss


def _cp_of(coef: tuple[float, ...], T):
    t = np.asarray(T, dtype=float) / 1000.0
    A, B, C, D, E = coef
    return A + B * t + C * t**2 + D * t**3 + E / t**2


def _stable(x: float) -> float:
    """``x`` to 12 significant digits: a record's digest must not change with the last
    bits that linear algebra and libm may leave different from one machine to another."""
    return float(f"{float(x):.12g}")


def shomate_model(coef: tuple[float, ...], hf: float, s: float,
                  t_range: tuple[float, float]) -> Shomate:
    """The Shomate model with Cp coefficients A..E, ΔfH° ``hf`` and S° ``s`` at 298.15 K
    (every number kept to 12 significant digits, see :func:`_stable`)."""
    A, B, C, D, E = (_stable(c) for c in coef)
    t0 = T_REF / 1000.0
    h_rel = A * t0 + B * t0**2 / 2 + C * t0**3 / 3 + D * t0**4 / 4 - E / t0
    s_rel = A * math.log(t0) + B * t0 + C * t0**2 / 2 + D * t0**3 / 3 - E / (2 * t0**2)
    H = _stable(hf) / 1000.0
    return Shomate(tuple(_stable(t) for t in t_range),
                   ((A, B, C, D, E, _stable(H - h_rel), _stable(s - s_rel), H),), _stable(hf))


# -- the ideal gas ---------------------------------------------------------------

@dataclass(frozen=True)
class _Gas:
    hf: Quantity
    s: Quantity
    cp_coef: tuple[float, ...]
    cp_u: float
    cp_method: str
    t_range: tuple[float, float]
    sigma: int
    groups: str
    notes: tuple[str, ...]
    sources: tuple[str, ...]
    joback: object | None
    joback_why: str | None
    t_boil: Quantity | None
    t_melt: Quantity | None


def _refuse(what: str, reasons: list[str]) -> SpeciesError:
    return SpeciesError(f"{what} cannot be estimated for this structure: "
                        + "; ".join(r for r in reasons if r) + "; give measured values instead")


def _gas(mol, method: str, settings: MethodSettings) -> _Gas:
    Chem, _ = _chem()
    smiles = Chem.MolToSmiles(mol)
    notes: list[str] = []
    benson, btext, bwhy = ({}, "", "not asked for") if method == "joback" else \
        _benson(smiles, mol, settings)
    if bwhy and method != "joback":
        notes.append(f"Benson: {bwhy}")
    job, jwhy = _joback(mol)
    est: dict = {}
    if job is not None and not {"hf", "s", "cp"} <= set(benson):
        est, jwhy = _joback_thermo(job, mol, settings)
    ub = dict(settings.estimate_benson_uncertainty)
    uj = _joback_errors(settings)
    sources = []
    # ΔfH°
    if "hf" in benson:
        hf = Quantity(benson["hf"], ub["hf"], "Benson")
    elif est.get("Hf") is not None:
        hf = Quantity(float(est["Hf"]), uj["hf"], "Joback")
    else:
        raise _refuse("ΔfH°", [f"Benson: {bwhy}",
                               f"Joback: {jwhy or 'a group has no value'}"])
    # S°
    sigma, open_hand, snote = symmetry_number(mol)
    if "s" in benson:
        s_val = benson["s"] - R * math.log(sigma) + (R * math.log(2) if open_hand else 0.0)
        s = Quantity(s_val, ub["s"], "Benson")
        notes.append(f"symmetry number {sigma} (S° − R ln {sigma})"
                     + ("; R ln 2 added: the SMILES leaves the handedness open" if open_hand
                        else "") + (f"; {snote}" if snote else ""))
    elif est.get("Hf") is not None and est.get("Gf") is not None \
            and all(e in ELEMENT_ENTROPY for e in composition_of(mol)):
        s_el = sum(n * ELEMENT_ENTROPY[e] for e, n in composition_of(mol).items())
        s = Quantity((est["Hf"] - est["Gf"]) / T_REF + s_el,
                     math.hypot(uj["hf"], uj["gf"]) / T_REF, "Joback")
    else:
        raise _refuse("S°", [f"Benson: {bwhy}",
                             f"Joback: {jwhy or 'no ΔfG° for one of its groups or elements'}"])
    # Cp(T)
    if "cp" in benson:
        grid, samples = benson["cp"]
        cp_coef, miss = _fit_cp(grid, samples)
        cp_u, cp_method, t_range = ub["cp"], "Benson", (float(grid[0]), float(grid[-1]))
        if miss > 0.01:
            notes.append(f"the Cp polynomial misses Benson's values by up to {miss:.1%}")
    elif est.get("Cpig_coeffs") is not None:
        a, b, c, d = est["Cpig_coeffs"]
        cp_coef = (float(a), 1e3 * b, 1e6 * c, 1e9 * d, 0.0)
        cp_u = settings.estimate_joback_cp_relative * float(_cp_of(cp_coef, T_REF))
        cp_method, t_range = "Joback", tuple(settings.estimate_joback_range_K)
    else:
        raise _refuse("Cp°", [f"Benson: {bwhy}",
                              f"Joback: {jwhy or 'a group has no heat-capacity value'}"])
    used = {hf.method, s.method, cp_method}
    if "Benson" in used:
        sources.append(f"{BENSON_SOURCE} {package_version('pgradd')}")
    if "Joback" in used:
        sources.append(f"{JOBACK_SOURCE} {package_version('thermo')}")
    groups = "; ".join(x for x in (f"Benson: {btext}" if btext and "Benson" in used else "",
                                   _joback_text(job) if "Joback" in used else "") if x)
    tb, tm = _joback_points(job, uj)
    return _Gas(hf, s, cp_coef, cp_u, cp_method, t_range, sigma, groups, tuple(notes),
                tuple(sources), job, jwhy, tb, tm)


def _joback_points(job, uj: dict[str, float]) -> tuple[Quantity | None, Quantity | None]:
    """Joback's normal boiling and melting points (the melting point only below the
    boiling point: the two are independent sums and may cross)."""
    if job is None:
        return None, None
    tb, tm = job.Tb(job.counts), job.Tm(job.counts)
    boil = Quantity(float(tb), uj["tb"], "Joback") if tb and tb > 0 else None
    melt = (Quantity(float(tm), uj["tm"], "Joback")
            if tm and tm > 0 and (boil is None or tm < boil.value) else None)
    return boil, melt


def _joback_text(job) -> str:
    if job is None:
        return ""
    from thermo.group_contribution.joback import JOBACK_GROUPS

    return "Joback: " + ", ".join(f"{JOBACK_GROUPS[g].group} ×{n:g}"
                                  for g, n in sorted(job.counts.items()))


# -- the liquid ------------------------------------------------------------------

def _vaporisation(Tb: float, Tc: float, Pc: float) -> tuple[float, float, float, float]:
    """(ΔvapH, R ln(p°/p_sat) − ΔvapH/T, p_sat, ω) at 298.15 K from Lee–Kesler."""
    from chemicals.acentric import LK_omega
    from chemicals.vapor_pressure import Lee_Kesler

    w = LK_omega(Tb, Tc, Pc)
    step = 0.01
    dlnp = (math.log(Lee_Kesler(T_REF + step, Tc, Pc, w))
            - math.log(Lee_Kesler(T_REF - step, Tc, Pc, w))) / (2 * step)
    dH = R * T_REF**2 * dlnp
    p = Lee_Kesler(T_REF, Tc, Pc, w)
    return dH, R * math.log(P_STANDARD / p) - dH / T_REF, p, w


def _critical(job, Tb: float) -> tuple[float, float]:
    """Joback's Tc for a boiling point ``Tb`` (Tc follows Tb) and its Pc."""
    return float(job.Tc(job.counts, Tb)), float(job.Pc(job.counts, job.atom_count))


def _liquid_cp(T, Tc: float, w: float, gas_coef: tuple[float, ...]):
    from chemicals.heat_capacity import Rowlinson_Poling

    return np.array([Rowlinson_Poling(float(x), Tc, w, float(_cp_of(gas_coef, x))) for x in T])


def _spread(f, centre: tuple[float, float, float], u: tuple[float, float, float],
            follow_tb) -> np.ndarray:
    """Standard uncertainties of the outputs of ``f(Tb, Tc, Pc)`` from independent
    errors of Tb (Tc recomputed from it), Tc and Pc: central differences in quadrature."""
    Tb, Tc, Pc = centre
    total = 0.0
    for k, du in enumerate(u):
        ups, downs = list(centre), list(centre)
        ups[k] += du
        downs[k] -= du
        if k == 0:
            ups[1], downs[1] = follow_tb(ups[0]), follow_tb(downs[0])
        total = total + ((np.asarray(f(*ups)) - np.asarray(f(*downs))) / 2) ** 2
    return np.sqrt(total)


def _liquid(gas: _Gas, mol, settings: MethodSettings) -> tuple[Quantity, Quantity, Shomate,
                                                               float, tuple[str, ...]]:
    """ΔfH°(l), S°(l), the liquid model, Cp(l, 298.15 K)'s uncertainty and notes."""
    Chem, _ = _chem()
    job = gas.joback
    if job is None:
        raise _refuse("the liquid", ["it needs Joback's boiling and critical points",
                                     gas.joback_why or ""])
    counts = job.counts
    Tb, Tm = job.Tb(counts), job.Tm(counts)
    Tc, Pc = _critical(job, Tb)
    if None in (Tb, Tc, Pc) or not Tb > 0:
        raise _refuse("the liquid", ["Joback gives no boiling or critical point for it"])
    if max(Tb, T_REF) / Tc > settings.estimate_liquid_max_reduced_T:
        raise _refuse("the liquid", [f"Joback's critical temperature {Tc:.0f} K lies too close "
                                     f"to its boiling point {Tb:.0f} K or to 298.15 K for the "
                                     "liquid correlations"])
    uj = _joback_errors(settings)
    dH, dS, p_sat, w = _vaporisation(Tb, Tc, Pc)
    u_dH, u_dS = _spread(lambda a, b, c: _vaporisation(a, b, c)[:2], (Tb, Tc, Pc),
                         (uj["tb"], uj["tc"], uj["pc"]), lambda tb: _critical(job, tb)[0])
    hf = Quantity(gas.hf.value - dH, math.hypot(gas.hf.uncertainty, u_dH),
                  f"{gas.hf.method} gas less ΔvapH")
    s = Quantity(gas.s.value + dS, math.hypot(gas.s.uncertainty, u_dS),
                 f"{gas.s.method} gas and vaporisation")
    lo = min(T_REF, Tm) if Tm else T_REF
    hi = max(Tb, T_REF + 1.0)
    grid = np.linspace(lo, hi, 30)
    coef, miss = _fit_cp(grid, _liquid_cp(grid, Tc, w, gas.cp_coef))
    cp298 = float(_cp_of(coef, T_REF))
    associating = mol.HasSubstructMatch(Chem.MolFromSmarts(_ASSOCIATING))
    rel = settings.estimate_liquid_cp_relative[1 if associating else 0]
    u_crit = float(_spread(lambda a, b, c: _liquid_cp(
        [T_REF], b, _vaporisation(a, b, c)[3], gas.cp_coef)[0], (Tb, Tc, Pc),
        (uj["tb"], uj["tc"], uj["pc"]), lambda tb: _critical(job, tb)[0]))
    cp_u = math.sqrt((rel * cp298) ** 2 + gas.cp_u ** 2 + u_crit ** 2)
    notes = [f"Joback estimates: normal boiling point {Tb:.0f} ± {uj['tb']:.0f} K, melting "
             f"point {Tm:.0f} ± {uj['tm']:.0f} K; ΔvapH(298.15 K) {dH / 1e3:.1f} ± "
             f"{u_dH / 1e3:.1f} kJ/mol, vapour pressure {p_sat / 1e3:.3g} kPa"]
    if associating:
        notes.append("hydrogen-bonding liquid: the corresponding-states Cp(l) is least "
                     "reliable here, hence its wide uncertainty")
    if Tb < T_REF:
        notes.append("the estimated boiling point is below 25 °C: at 1 bar this species "
                     "is a gas at room temperature")
    if Tm and Tm > T_REF:
        notes.append("the estimated melting point is above 25 °C: the species may be a "
                      "solid there (these are data of the supercooled liquid)")
    if miss > 0.01:
        notes.append(f"the Cp(l) polynomial misses the correlation by up to {miss:.1%}")
    model = shomate_model(coef, hf.value, s.value, (lo, hi))
    return hf, s, model, cp_u, tuple(notes)


# -- entry point -------------------------------------------------------------

@functools.lru_cache(maxsize=256)
def estimate_species(smiles: str, phase: str, method: str,
                     settings: MethodSettings) -> Estimate:
    """Estimated ΔfH°, S° and Cp(T) of ``smiles`` in ``phase`` (``g`` or ``l``) by
    ``method`` (``benson`` or ``joback``); :class:`SpeciesError` says plainly why an
    estimate cannot be made.  Cached: the same inputs give the same object."""
    if method not in METHODS:
        raise SpeciesError(f"unknown estimate method '{method}'; expected one of "
                           f"{', '.join(METHODS)}")
    if phase not in ("g", "l"):
        raise SpeciesError("an estimate can be made for a gas (g) or a liquid (l) only: group "
                           "additivity gives ideal-gas values and the liquid is reached by "
                           "subtracting an estimated heat of vaporisation; a solid or an "
                           "aqueous species needs measured data")
    mol = read_structure(smiles, settings)
    gas = _gas(mol, method, settings)
    composition = tuple(sorted(composition_of(mol).items()))
    if phase == "g":
        model = shomate_model(gas.cp_coef, gas.hf.value, gas.s.value, gas.t_range)
        cp = Quantity(float(model.cp(T_REF)), gas.cp_u, gas.cp_method)
        return Estimate(smiles, phase, composition, gas.hf, gas.s, cp, model, gas.sigma,
                        gas.groups, gas.notes, gas.sources, gas.t_boil, gas.t_melt)
    hf, s, model, cp_u, notes = _liquid(gas, mol, settings)
    cp = Quantity(float(model.cp(T_REF)), cp_u, f"Rowlinson–Poling on {gas.cp_method} gas Cp")
    joback = f"{JOBACK_SOURCE} {package_version('thermo')}"
    sources = gas.sources + ((joback,) if joback not in gas.sources else ()) + (
        f"{LIQUID_SOURCE}; chemicals {package_version('chemicals')}",)
    return Estimate(smiles, phase, composition, hf, s, cp, model, gas.sigma, gas.groups,
                    gas.notes + notes, sources, gas.t_boil, gas.t_melt)


__all__ = ["METHODS", "ELEMENT_ENTROPY", "BENSON_SOURCE", "JOBACK_SOURCE", "LIQUID_SOURCE",
           "Quantity", "Estimate", "read_structure", "composition_of", "shomate_model",
           "estimate_species", "package_version"]
