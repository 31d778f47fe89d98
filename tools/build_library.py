#!/usr/bin/env python3
"""Generate dossier/data/species.json, the species thermochemical library.

Run from the repository root:

    .venv/bin/python tools/build_library.py [--out PATH] [--report]

The output is deterministic: records are sorted by id, floats are written
with Python's shortest round-trip representation, and the generation date is
a fixed string (GENERATED below), so re-running on the same inputs gives the
same bytes.

Sources, in order of preference for one substance in one phase:

1. NASA Glenn 7-coefficient polynomials as shipped with Cantera
   (data/nasa_gas.yaml, data/nasa_condensed.yaml).  Condensed entries come
   split by phase ("AL(cr)", "AL(L)", crystal forms "Fe(a)", "Fe(c)", ...):
   "L" is the liquid; every other tag is a solid form.  The consecutive solid
   forms of one substance are joined into one solid record whose segments
   follow the stable form at each temperature (with the transition enthalpy
   as a step at each join).
2. NIST WebBook Shomate heat-capacity coefficients (as carried by the
   chemicals package) combined with ΔfH° and S° at 298.15 K from the tables
   below, where the Shomate range starts at 298 K.
3. CRC Handbook "Standard Thermodynamic Properties of Chemical Substances"
   (as carried by the chemicals package): ΔfH°, S°, Cp at 298.15 K, as a
   constant-Cp model.  Where the CRC row lacks ΔfH° or S° for a phase, the
   NIST WebBook constants carried by chemicals (Misc/webbook_constants.tsv)
   are used if they have both.
4. CRC Handbook "Thermodynamic Properties of Aqueous Ions" for (aq); where
   that table has no Cp, Cp° at 298.15 K from the revised-HKF papers listed
   in tools/aqueous_heat_capacities.py (Shock and Helgeson 1988, Shock et
   al. 1997, ...), each named in the record's source.
5. White tin, the reference state of tin, which the CRC table in chemicals
   lacks (it carries grey tin only); see ``_reference_forms``.  Grey tin is
   kept under its own name ("tin (gray)"), never as "Sn(s)".

Rows without both ΔfH° and S° are skipped.  Where a constant-Cp row has no
Cp (and no HKF value applies), Cp = 0 is used, the record lists "cp" in its
``missing`` properties, and its note and uncertainty give a bound on Cp
(``_note_missing_cp``).

Phase boundaries (tools/library_phase_data.py): every record with a CAS
number gets the normal melting and boiling points and, for gases and
liquids, a published vapour-pressure curve, each with its source; aqueous
species get those of their solvent, water.  The model's temperature range is
only the *data range*; which phase is stable comes from these boundaries.

Structures: carbon compounds get their SMILES from chemicals' identifier
database (by CAS number) where RDKit reads it to the record's formula.

Data ranges of constant-Cp models (our choice, documented here; they say where the
model is used, not where the phase is stable):
* liquids: melting point to normal boiling point (tools/library_phase_data.py)
  when both are known, else 298.15 ± 50 K;
* solids: 248.15 K to the melting point when known (>298.15 K), else
  298.15 ± 50 K;
* gases: 298.15 ± 50 K;
* aqueous species: 273.15–373.15 K (liquid water at 1 bar).

ATcT 1.112 (as carried by chemicals) supplies ΔfH° uncertainties for gases
and liquids matched by CAS number; see ``_attach_atct``.
"""
from __future__ import annotations

import argparse
import csv
import json
import math
import re
import sys
from collections import Counter, defaultdict
from dataclasses import dataclass, field
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

sys.path.insert(0, str(ROOT / "tools"))

import aqueous_heat_capacities as aq_cp  # noqa: E402
import library_phase_data as phase_tool  # noqa: E402
from dossier.chem.formula import hill_formula, parse_formula  # noqa: E402
from dossier.constants import R, T_REF  # noqa: E402
from dossier.library.datafile import DATA_FORMAT, FILE_FIELDS, LOOKUP_FIELDS  # noqa: E402
from dossier.library.models import ConstantCp, Nasa7, Shomate  # noqa: E402
from dossier.library.record import SpeciesRecord  # noqa: E402

FORMAT = DATA_FORMAT
LIBRARY_VERSION = "2026.12.3"
GENERATED = "2026-12-01"  # fixed on purpose: the output must not depend on the clock
OUT = ROOT / "dossier" / "data" / "species.json"

SOURCES = {
    "nasa-gas": (
        'B. J. McBride, S. Gordon and M. A. Reno, "Coefficients for Calculating '
        'Thermodynamic and Transport Properties of Individual Species", NASA '
        "Technical Memorandum 4513, October 1993 (NASA Glenn 7-coefficient "
        "polynomials, gas phase, as distributed with Cantera in data/nasa_gas.yaml)"
    ),
    "nasa-condensed": (
        'B. J. McBride, S. Gordon and M. A. Reno, "Coefficients for Calculating '
        'Thermodynamic and Transport Properties of Individual Species", NASA '
        "Technical Memorandum 4513, October 1993 (NASA Glenn 7-coefficient "
        "polynomials, condensed phases, as distributed with Cantera in "
        "data/nasa_condensed.yaml)"
    ),
    "crc": (
        'CRC Handbook of Chemistry and Physics, "Standard Thermodynamic Properties '
        'of Chemical Substances" (ΔfH°, S°, Cp at 298.15 K and 1 bar), as carried '
        "by the chemicals package (Heat Capacity/CRC Standard Thermodynamic "
        "Properties of Chemical Substances.tsv); constant-Cp model"
    ),
    "webbook": (
        "NIST Chemistry WebBook, NIST Standard Reference Database 69 (ΔfH° and "
        "S° at 298.15 K), as carried by the chemicals package "
        "(Misc/webbook_constants.tsv); constant-Cp model with Cp from the CRC "
        "Handbook table where it has one"
    ),
    "shomate+crc": (
        "Cp(T): NIST Chemistry WebBook, NIST Standard Reference Database 69, "
        "Shomate coefficients as carried by the chemicals package (Heat "
        "Capacity/webbook_shomate_coefficients.json); ΔfH° and S° at 298.15 K: "
        'CRC Handbook of Chemistry and Physics, "Standard Thermodynamic '
        'Properties of Chemical Substances", as carried by the chemicals package'
    ),
    "shomate+webbook": (
        "Cp(T): NIST Chemistry WebBook, NIST Standard Reference Database 69, "
        "Shomate coefficients as carried by the chemicals package (Heat "
        "Capacity/webbook_shomate_coefficients.json); ΔfH° and S° at 298.15 K: "
        "NIST Chemistry WebBook constants as carried by the chemicals package "
        "(Misc/webbook_constants.tsv)"
    ),
    "crc-aq": (
        'CRC Handbook of Chemistry and Physics, "Thermodynamic Properties of '
        'Aqueous Ions" (standard state: ideal solution at 1 mol/kg, 298.15 K, '
        "1 bar), as carried by the chemicals package (Electrolytes/CRC "
        "Thermodynamic Properties of Aqueous Ions.tsv); constant-Cp model"
    ),
}
for _ref, _citation in aq_cp.CITATIONS.items():
    SOURCES[f"crc-aq+{_ref}"] = (
        'ΔfH° and S°: CRC Handbook of Chemistry and Physics, "Thermodynamic Properties of '
        'Aqueous Ions" (standard state: ideal solution at 1 mol/kg, 298.15 K, 1 bar), as '
        f"carried by the chemicals package; Cp° at 298.15 K: {_citation} (revised HKF "
        "model; value transcribed from the OBIGT database of the CHNOSZ package); "
        "constant-Cp model")
SOURCES["reference-tin"] = (
    "White tin, the reference state of tin: ΔfH° = 0 by definition; S° at 298.15 K: NIST "
    "Chemistry WebBook constants as carried by the chemicals package "
    "(Misc/webbook_constants.tsv); Cp(T): Perry's Chemical Engineers' Handbook, 8th ed. "
    "(2007), Table 2-151 (Sn, crystalline, 273-504 K, ±2 %), as carried by the chemicals "
    "package (Heat Capacity/Perrys Table 2-151.tsv); Shomate form")
SOURCES.update(phase_tool.SOURCES)

ATCT_CITATION = (
    "Active Thermochemical Tables (ATcT) version 1.112, as carried by the "
    "chemicals package (Reactions/ATcT 1.112 (g).tsv, (l).tsv)"
)

# --------------------------------------------------------------------------
# names.  NASA names map to CAS numbers here by hand for every species whose
# identity the formula alone does not fix (all carbon compounds with more
# than one carbon atom, and the common process species); other carbon-free
# neutral NASA species are looked up in chemicals.identifiers by formula and
# accepted only when the composition matches.  Radicals and ions get no CAS.

NASA_CAS = {
    # common process gases and liquids
    "H2O": "7732-18-5", "H2": "1333-74-0", "O2": "7782-44-7", "N2": "7727-37-9",
    "NH3": "7664-41-7", "CO2": "124-38-9", "CO": "630-08-0", "CH4": "74-82-8",
    "HCL": "7647-01-0", "HF": "7664-39-3", "HBr": "10035-10-6", "HI": "10034-85-2",
    "NO": "10102-43-9", "NO2": "10102-44-0", "N2O": "10024-97-2",
    "N2O3": "10544-73-7", "N2O4": "10544-72-6", "N2O5": "10102-03-1",
    "SO2": "7446-09-5", "SO3": "7446-11-9", "H2S": "7783-06-4", "CL2": "7782-50-5",
    "F2": "7782-41-4", "Br2": "7726-95-6", "I2": "7553-56-2", "O3": "10028-15-6",
    "HNO3": "7697-37-2", "HNO2": "7782-77-6", "H2SO4": "7664-93-9",
    "H2O2": "7722-84-1", "N2H4": "302-01-2", "NH2OH": "7803-49-8",
    "HCN": "74-90-8", "HNCO": "75-13-8", "COS": "463-58-1", "CS2": "75-15-0",
    "COCL2": "75-44-5", "COF2": "353-50-4", "NOCL": "2696-92-6",
    "CLO2": "10049-04-4", "HOCL": "7790-92-3", "CLF3": "7790-91-2",
    "PH3": "7803-51-2", "PCL3": "7719-12-2", "SiH4": "7803-62-5",
    "SiCL4": "10026-04-7", "SiHCL3": "10025-78-2", "TiCL4": "7550-45-0",
    "BF3": "7637-07-2", "BCL3": "10294-34-5", "SF6": "2551-62-4", "NF3": "7783-54-2",
    "SO2CL2": "7791-25-5", "He": "7440-59-7", "Ar": "7440-37-1", "Ne": "7440-01-9",
    "Kr": "7439-90-9", "Xe": "7440-63-3", "Hg": "7439-97-6",
    # one-carbon compounds
    "CH3OH": "67-56-1", "CH3CL": "74-87-3", "CH2CL2": "75-09-2",
    "CHCL3": "67-66-3", "CCL4": "56-23-5", "CH3F": "593-53-3", "CH2F2": "75-10-5",
    "CHF3": "75-46-7", "CF4": "75-73-0", "CCL2F2": "75-71-8", "CCL3F": "75-69-4",
    "CCLF3": "75-72-9", "CHCLF2": "75-45-6", "HCHO,formaldehy": "50-00-0",
    "HCOOH": "64-18-6", "CLCN": "506-77-4",
    # two and more carbons
    "C2N2": "460-19-5", "CH3COOH": "64-19-7", "CH3CHO,ethanal": "75-07-0",
    "C2H4O,ethylen": "75-21-8", "CH2CO,ketene": "463-51-4",
    "C2H2,acetylene": "74-86-2", "C2H4": "74-85-1", "C2H6": "74-84-0",
    "C2H5OH": "64-17-5", "CH3OCH3": "115-10-6", "CH3CN": "75-05-8",
    "C2CL4": "127-18-4", "C2CL6": "67-72-1", "C2F4": "116-14-3",
    "C3H4,allene": "463-49-0", "C3H4,propyne": "74-99-7",
    "C3H6,propylene": "115-07-1", "C3H6,cyclo-": "75-19-4", "C3H8": "74-98-6",
    "C3H8O,1propanol": "71-23-8", "C3H8O,2propanol": "67-63-0",
    "C3O2": "504-64-3", "C4H6,butadiene": "106-99-0", "C4H6,2-butyne": "503-17-3",
    "C4H8,1-butene": "106-98-9", "C4H8,cis2-buten": "590-18-1",
    "C4H8,tr2-butene": "624-64-6", "C4H8,isobutene": "115-11-7",
    "C4H8,cyclo-": "287-23-0", "C4H10,isobutane": "75-28-5",
    "C4H10,n-butane": "106-97-8", "C5H6,1,3cyclo-": "542-92-7",
    "C5H8,cyclo-": "142-29-0", "C5H10,1-pentene": "109-67-1",
    "C5H10,cyclo-": "287-92-3", "C5H12,n-pentane": "109-66-0",
    "C5H12,i-pentane": "78-78-4", "CH3C(CH3)2CH3": "463-82-1", "C6H6": "71-43-2",
    "C6H5OH,phenol": "108-95-2", "C6H10,cyclo-": "110-83-8",
    "C6H12,1-hexene": "592-41-6", "C6H12,cyclo-": "110-82-7", "C7H8": "108-88-3",
    "C7H14,1-heptene": "592-76-7", "C7H16,n-heptane": "142-82-5",
    "C8H8,styrene": "100-42-5", "C8H10,ethylbenz": "100-41-4",
    "C8H16,1-octene": "111-66-0", "C8H18,isooctane": "540-84-1",
    "C8H18,n-octane": "111-65-9", "C10H8,naphthale": "91-20-3",
    "C12H10,bipheny": "92-52-4",
    # condensed-phase labels (before the phase tag)
    "C": "7782-42-5", "S": "7704-34-9", "P": "7723-14-0", "Fe": "7439-89-6",
    "AL": "7429-90-5", "Cu": "7440-50-8", "Na": "7440-23-5", "K": "7440-09-7",
    "Li": "7439-93-2", "Mg": "7439-95-4", "Ca": "7440-70-2", "Zn": "7440-66-6",
    "Ni": "7440-02-0", "Pb": "7439-92-1", "Ti": "7440-32-6", "Si": "7440-21-3",
    "Cr": "7440-47-3", "NaCL": "7647-14-5", "KCL": "7447-40-7", "NaOH": "1310-73-2",
    "KOH": "1310-58-3", "CaCO3": "471-34-1", "CaO": "1305-78-8",
    "CaO2H2": "1305-62-0", "MgO": "1309-48-4", "MgCO3": "546-93-0",
    "Fe2O3": "1309-37-1", "Fe3O4": "1317-61-9", "FeO": "1345-25-1",
    "AL2O3": "1344-28-1", "SiO2": "7631-86-9", "Na2CO3": "497-19-8",
    "K2CO3": "584-08-7", "CaSO4": "7778-18-9", "Na2SO4": "7757-82-6",
    "K2SO4": "7778-80-5", "NH4CL": "12125-02-9", "CuO": "1317-38-0",
    "Cu2O": "1317-39-1", "ZnSO4": "7733-02-0", "MgCL2": "7786-30-3",
    "CaCL2": "10043-52-4", "FeCL3": "7705-08-0", "FeCL2": "7758-94-3",
    "ALCL3": "7446-70-0", "TiO2": "13463-67-7", "C8H18,n-octa": "111-65-9",
}

# NASA gas names whose CAS differs from the condensed label's in NASA_CAS: the
# carbon atom is not graphite.
NASA_GAS_CAS = {"C": "7440-44-0"}

# Common names (lower case) and extra aliases for CAS numbers: the common
# process species.  Anything not listed takes its name from the source table
# or from chemicals.identifiers.
COMMON = {
    "7732-18-5": ("water", []),
    "1333-74-0": ("hydrogen", []), "7782-44-7": ("oxygen", []),
    "7727-37-9": ("nitrogen", []), "7664-41-7": ("ammonia", []),
    "124-38-9": ("carbon dioxide", []), "630-08-0": ("carbon monoxide", []),
    "74-82-8": ("methane", []), "74-84-0": ("ethane", []),
    "74-85-1": ("ethylene", ["ethene"]), "74-86-2": ("acetylene", ["ethyne"]),
    "74-98-6": ("propane", []), "115-07-1": ("propylene", ["propene"]),
    "106-97-8": ("n-butane", ["butane"]), "75-28-5": ("isobutane", []),
    "67-56-1": ("methanol", ["methyl alcohol", "CH3OH", "MeOH"]),
    "64-17-5": ("ethanol", ["ethyl alcohol", "C2H5OH", "CH3CH2OH", "EtOH"]),
    "71-23-8": ("1-propanol", ["n-propanol", "propan-1-ol", "CH3CH2CH2OH"]),
    "67-63-0": ("2-propanol", ["isopropanol", "isopropyl alcohol", "propan-2-ol", "(CH3)2CHOH", "IPA"]),
    "71-43-2": ("benzene", []), "108-88-3": ("toluene", ["methylbenzene", "C6H5CH3"]),
    "7647-01-0": ("hydrogen chloride", []), "7664-39-3": ("hydrogen fluoride", []),
    "10035-10-6": ("hydrogen bromide", []), "10034-85-2": ("hydrogen iodide", []),
    "10102-43-9": ("nitric oxide", ["nitrogen monoxide"]),
    "10102-44-0": ("nitrogen dioxide", []),
    "10024-97-2": ("nitrous oxide", ["dinitrogen monoxide"]),
    "10544-72-6": ("dinitrogen tetroxide", []),
    "10544-73-7": ("dinitrogen trioxide", []),
    "10102-03-1": ("dinitrogen pentoxide", []),
    "7446-09-5": ("sulfur dioxide", []), "7446-11-9": ("sulfur trioxide", []),
    "7783-06-4": ("hydrogen sulfide", []), "7782-50-5": ("chlorine", []),
    "7782-41-4": ("fluorine", []), "7726-95-6": ("bromine", []),
    "7553-56-2": ("iodine", []), "10028-15-6": ("ozone", []),
    "7697-37-2": ("nitric acid", []), "7664-93-9": ("sulfuric acid", []),
    "7722-84-1": ("hydrogen peroxide", []), "302-01-2": ("hydrazine", []),
    "7803-49-8": ("hydroxylamine", []), "74-90-8": ("hydrogen cyanide", []),
    "75-44-5": ("phosgene", ["carbonyl dichloride"]),
    "463-58-1": ("carbonyl sulfide", []), "75-15-0": ("carbon disulfide", []),
    "50-00-0": ("formaldehyde", ["methanal"]), "64-18-6": ("formic acid", ["HCOOH"]),
    "64-19-7": ("acetic acid", ["ethanoic acid", "CH3COOH", "AcOH"]),
    "75-07-0": ("acetaldehyde", ["ethanal", "CH3CHO"]),
    "75-21-8": ("ethylene oxide", ["oxirane"]),
    "115-10-6": ("dimethyl ether", ["methoxymethane", "CH3OCH3"]),
    "75-05-8": ("acetonitrile", ["CH3CN", "MeCN"]), "74-87-3": ("chloromethane", ["methyl chloride"]),
    "75-09-2": ("dichloromethane", ["methylene chloride", "DCM"]),
    "67-66-3": ("chloroform", ["trichloromethane"]),
    "56-23-5": ("carbon tetrachloride", ["tetrachloromethane"]),
    "127-18-4": ("tetrachloroethylene", ["perchloroethylene"]),
    "110-82-7": ("cyclohexane", []), "110-83-8": ("cyclohexene", []),
    "142-82-5": ("n-heptane", ["heptane"]), "111-65-9": ("n-octane", ["octane"]),
    "540-84-1": ("isooctane", ["2,2,4-trimethylpentane"]),
    "109-66-0": ("n-pentane", ["pentane"]), "110-54-3": ("n-hexane", ["hexane"]),
    "100-42-5": ("styrene", ["C6H5CHCH2"]), "100-41-4": ("ethylbenzene", ["C6H5C2H5"]),
    "108-95-2": ("phenol", ["C6H5OH"]), "91-20-3": ("naphthalene", []),
    "106-99-0": ("1,3-butadiene", ["butadiene"]),
    "67-64-1": ("acetone", ["propanone", "2-propanone", "CH3COCH3", "(CH3)2CO"]),
    "141-78-6": ("ethyl acetate", ["CH3COOC2H5", "EtOAc"]), "98-95-3": ("nitrobenzene", ["C6H5NO2"]),
    "62-53-3": ("aniline", ["C6H5NH2"]), "68-12-2": ("N,N-dimethylformamide", ["DMF", "HCON(CH3)2"]),
    "109-99-9": ("tetrahydrofuran", ["THF", "oxolane"]),
    "67-68-5": ("dimethyl sulfoxide", ["DMSO", "(CH3)2SO"]),
    "123-91-1": ("1,4-dioxane", ["dioxane"]),
    "108-10-1": ("methyl isobutyl ketone", ["MIBK"]),
    "78-93-3": ("methyl ethyl ketone", ["2-butanone", "MEK"]),
    "71-36-3": ("1-butanol", ["n-butanol"]), "75-65-0": ("tert-butanol", ["(CH3)3COH"]),
    "108-90-7": ("chlorobenzene", ["C6H5Cl"]), "95-47-6": ("o-xylene", []),
    "108-38-3": ("m-xylene", []), "106-42-3": ("p-xylene", []),
    "107-21-1": ("ethylene glycol", ["ethane-1,2-diol", "HOCH2CH2OH"]),
    "56-81-5": ("glycerol", ["glycerine"]), "57-13-6": ("urea", []),
    "7803-51-2": ("phosphine", []), "7803-62-5": ("silane", []),
    "7440-59-7": ("helium", []), "7440-37-1": ("argon", []),
    "7440-01-9": ("neon", []), "7439-90-9": ("krypton", []), "7440-63-3": ("xenon", []),
    "7439-97-6": ("mercury", []), "7782-42-5": ("graphite", ["carbon"]),
    "7440-44-0": ("carbon", ["atomic carbon"]),
    "7704-34-9": ("sulfur", []), "7723-14-0": ("phosphorus", []),
    "7439-89-6": ("iron", []), "7429-90-5": ("aluminium", ["aluminum"]),
    "7440-50-8": ("copper", []), "7440-23-5": ("sodium", []),
    "7440-09-7": ("potassium", []), "7439-93-2": ("lithium", []),
    "7439-95-4": ("magnesium", []), "7440-70-2": ("calcium", []),
    "7440-66-6": ("zinc", []), "7440-02-0": ("nickel", []), "7439-92-1": ("lead", []),
    "7440-32-6": ("titanium", []), "7440-21-3": ("silicon", []),
    "7440-47-3": ("chromium", []),
    "7647-14-5": ("sodium chloride", []), "7447-40-7": ("potassium chloride", []),
    "1310-73-2": ("sodium hydroxide", ["caustic soda"]),
    "1310-58-3": ("potassium hydroxide", []),
    "471-34-1": ("calcium carbonate", ["calcite"]),
    "1305-78-8": ("calcium oxide", ["quicklime"]),
    "1305-62-0": ("calcium hydroxide", ["slaked lime", "Ca(OH)2"]),
    "1309-48-4": ("magnesium oxide", []), "546-93-0": ("magnesium carbonate", []),
    "1309-37-1": ("iron(III) oxide", ["hematite"]),
    "1317-61-9": ("iron(II,III) oxide", ["magnetite"]),
    "1345-25-1": ("iron(II) oxide", []), "1344-28-1": ("aluminium oxide", ["alumina"]),
    "7631-86-9": ("silicon dioxide", ["silica", "quartz"]),
    "497-19-8": ("sodium carbonate", ["soda ash"]),
    "584-08-7": ("potassium carbonate", []), "7778-18-9": ("calcium sulfate", []),
    "7757-82-6": ("sodium sulfate", []), "7778-80-5": ("potassium sulfate", []),
    "12125-02-9": ("ammonium chloride", []), "1317-38-0": ("copper(II) oxide", []),
    "1317-39-1": ("copper(I) oxide", []), "7733-02-0": ("zinc sulfate", []),
    "7786-30-3": ("magnesium chloride", []), "10043-52-4": ("calcium chloride", []),
    "7705-08-0": ("iron(III) chloride", []), "7758-94-3": ("iron(II) chloride", []),
    "7446-70-0": ("aluminium chloride", []), "13463-67-7": ("titanium dioxide", []),
    "144-55-8": ("sodium bicarbonate", ["sodium hydrogen carbonate"]),
    "7664-38-2": ("phosphoric acid", []), "7719-12-2": ("phosphorus trichloride", []),
    "10025-87-3": ("phosphoryl chloride", ["phosphorus oxychloride"]),
    "7719-09-7": ("thionyl chloride", []), "7791-25-5": ("sulfuryl chloride", []),
    "7550-45-0": ("titanium tetrachloride", []),
    "10026-04-7": ("silicon tetrachloride", []),
    "2551-62-4": ("sulfur hexafluoride", []),
}

# Names for NASA gas entries that COMMON does not cover: isomers written with
# a qualifier after a comma, radicals and dimers.
NASA_NAMES = {
    "CHCO,ketyl": "ketenyl radical", "C2H2,vinylidene": "vinylidene",
    "C2H3,vinyl": "vinyl radical", "CH3CO,acetyl": "acetyl radical",
    "C3H3,propargyl": "propargyl radical", "C3H4,allene": "allene",
    "C3H4,propyne": "propyne", "C3H4,cyclo-": "cyclopropene",
    "C3H5,allyl": "allyl radical", "C3H6,cyclo-": "cyclopropane",
    "C3H7,n-propyl": "n-propyl radical", "C3H7,i-propyl": "isopropyl radical",
    "C4H4,1,3-cyclo-": "cyclobutadiene", "C4H6,2-butyne": "2-butyne",
    "C4H6,cyclo-": "cyclobutene", "C4H8,1-butene": "1-butene",
    "C4H8,cis2-buten": "cis-2-butene", "C4H8,tr2-butene": "trans-2-butene",
    "C4H8,isobutene": "isobutene", "C4H8,cyclo-": "cyclobutane",
    "C4H9,n-butyl": "n-butyl radical", "C4H9,i-butyl": "isobutyl radical",
    "C4H9,s-butyl": "sec-butyl radical", "C4H9,t-butyl": "tert-butyl radical",
    "C5H6,1,3cyclo-": "1,3-cyclopentadiene", "C5H8,cyclo-": "cyclopentene",
    "C5H10,1-pentene": "1-pentene", "C5H10,cyclo-": "cyclopentane",
    "C5H11,pentyl": "pentyl radical", "C5H11,t-pentyl": "tert-pentyl radical",
    "C5H12,i-pentane": "isopentane", "CH3C(CH3)2CH3": "neopentane",
    "C6H5,phenyl": "phenyl radical", "C6H5O,phenoxy": "phenoxy radical",
    "C6H10,cyclo-": "cyclohexene", "C6H12,1-hexene": "1-hexene",
    "C6H13,n-hexyl": "n-hexyl radical", "C7H7,benzyl": "benzyl radical",
    "C7H8O,cresol": "cresol (isomer not stated by the source)",
    "C7H14,1-heptene": "1-heptene", "C7H15,n-heptyl": "n-heptyl radical",
    "C8H16,1-octene": "1-octene", "C8H17,n-octyl": "n-octyl radical",
    "C9H19,n-nonyl": "n-nonyl radical", "C10H21,n-decyl": "n-decyl radical",
    "C12H9,o-bipheny": "o-biphenylyl radical", "C12H10,bipheny": "biphenyl",
    "FS2F,fluorodisu": "difluorodisulfane (FSSF)",
    "S2F2,thiothiony": "thiothionyl fluoride (SSF2)",
    "(HCOOH)2": "formic acid dimer", "(CH3COOH)2": "acetic acid dimer",
    "C2H4O,ethylen": "ethylene oxide", "CH2CO,ketene": "ketene", "C3O2": "carbon suboxide",
    "CH3CN": "acetonitrile", "C2N2": "cyanogen", "CLCN": "cyanogen chloride",
}

# Solid forms (allotropes) that the tables name with a qualifier: name -> form label.
# Only tin has two forms in the sources; its reference form (white) is added by
# _reference_forms.  Other qualified element names ("arsenic (gray)", "selenium
# (gray)") are the reference forms themselves.
FORM_NAMES = {"tin (gray)": "grey"}
FORM_ALIASES = {"grey": ["grey tin", "gray tin", "alpha-tin"]}
_FORM_QUALIFIER_RE = re.compile(r"\s*\((gray|grey|white|rhombic|monoclinic|graphite|diamond|"
                                r"red|black|yellow)\)$", re.IGNORECASE)


def _strip_form(name: str) -> str:
    """'tin (gray)' -> 'tin': a solid form's qualifier does not belong to the gas or liquid."""
    return _FORM_QUALIFIER_RE.sub("", name)


# Aqueous ions: readable common aliases beyond the CRC names.
AQ_ALIASES = {"H+": ["proton", "hydrogen ion"], "OH-": ["hydroxide", "hydroxide ion"]}

_PHASE_TAG_RE = re.compile(r"^(?P<base>.*)\((?P<tag>[^()]*)\)(?P<qual>,.*)?$")


def _clean_label(nasa_label: str) -> str:
    """NASA writes chlorine and aluminium as CL and AL; write them as Cl and Al."""
    return nasa_label.replace("CL", "Cl").replace("AL", "Al")


def _join(note: str, more: str) -> str:
    return f"{note}; {more}" if note else more


def _sig(x: float, digits: int = 12) -> float:
    return float(f"{x:.{digits}g}")


# --------------------------------------------------------------------------
# candidate records

@dataclass
class Candidate:
    source_key: str
    priority: int
    phase: str
    composition: dict
    charge: int
    model: object
    label: str  # formula-like label for the id (NASA), or ""
    name: str
    aliases: list = field(default_factory=list)
    cas: str | None = None
    note: str = ""
    uncertainty: list = field(default_factory=list)
    form: str | None = None  # one solid form (allotrope) of several: its label
    reference: bool = False  # the reference state of an element: its id is the formula
    phase_data: object = None  # PhaseData with source keys
    missing: list = field(default_factory=list)
    smiles: str | None = None

    @property
    def hill(self) -> str:
        return hill_formula(self.composition, self.charge)

    @property
    def base_name(self) -> str:
        return self.name.split(" (")[0].strip().lower()


class Identifiers:
    """Look-ups in chemicals (identifiers, and melting and boiling points), cached."""

    def __init__(self):
        from chemicals import identifiers

        self._ids = identifiers
        self._cache: dict = {}

    def by_cas(self, cas: str):
        key = ("cas", cas)
        if key not in self._cache:
            try:
                self._cache[key] = self._ids.search_chemical(cas)
            except Exception:  # not in the database
                self._cache[key] = None
        return self._cache[key]

    def by_formula(self, text: str):
        key = ("formula", text)
        if key not in self._cache:
            try:
                self._cache[key] = self._ids.search_chemical(text)
            except Exception:
                self._cache[key] = None
        return self._cache[key]

    def tm_tb(self, cas: str | None) -> tuple[float | None, float | None]:
        """Melting and normal boiling points (chemicals' tables, never its estimates)."""
        if not cas:
            return None, None
        key = ("tm_tb", cas)
        if key not in self._cache:
            tm, tb = phase_tool.normal_points(cas)
            self._cache[key] = (tm[0] if tm else None, tb[0] if tb else None)
        return self._cache[key]


def _composition_of(formula_text: str) -> tuple[dict, int] | None:
    try:
        f = parse_formula(formula_text)
    except Exception:
        return None
    return {e: float(n) for e, n in f.elements}, f.charge


# Word parts of a substance name and the element each one implies.  The
# identifier database in chemicals writes some hydrides without their
# hydrogen (AlH3 as "Al", B10H14 as "B10"); a table row whose looked-up
# formula lacks an element its name implies is skipped, not trusted.
_NAME_IMPLIES = (
    ("hydr", "H"), ("borane", "H"), ("silane", "H"), ("germane", "H"), ("stannane", "H"),
    ("phosphine", "H"), ("arsine", "H"), ("stibine", "H"), ("ammon", "H"),
    ("chlor", "Cl"), ("fluor", "F"), ("brom", "Br"), ("iod", "I"), ("sulf", "S"),
    ("nitr", "N"), ("oxide", "O"), ("carbon", "C"), ("carbide", "C"), ("cyan", "C"),
    ("phosph", "P"), ("silic", "Si"), ("boron", "B"), ("borate", "B"), ("borane", "B"),
)


_CAS_RE = re.compile(r"^\d{2,7}-\d\d-\d$")
_FORMULA_IN_NAME_RE = re.compile(r"\s\(([A-Z][A-Za-z0-9()]*)\)")


def _formula_fits_name(name: str, elements: dict) -> bool:
    low = name.lower().replace("fluoren", "").replace("fluoranth", "")
    if not all(el in elements for part, el in _NAME_IMPLIES if part in low):
        return False
    # a formula written in the name, e.g. "phosphorus nitride (P3N5)", must match
    for text in _FORMULA_IN_NAME_RE.findall(name):
        if re.fullmatch(r"[IVX]+", text):
            continue  # an oxidation state, e.g. "titanium(IV) chloride"
        comp = _composition_of(text)
        if comp is not None and set(comp[0]) == set(elements) and comp[0] != elements:
            return False
        if comp is not None and set(comp[0]) != set(elements) and len(comp[0]) > 1:
            return False
    return True


_ELEMENT_NAMES: dict[str, str] = {}
_MULTIPLIERS = ("", "di", "tri", "tetra", "penta", "hexa", "hepta", "octa")
_BARE_COMPONENTS = {"C", "N", "O", "S", "B", "P", "[C]", "[N]", "[B]", "[Si]", "[SiH4]", "[BH3]"}


def _element_names() -> dict[str, str]:
    from chemicals.elements import periodic_table

    names = {}
    for el in periodic_table:
        names[el.name.lower()] = el.symbol
    names["aluminum"] = "Al"
    names["sulphur"] = "S"
    names["caesium"] = "Cs"
    return names


def _identity_fits(name: str, smiles: str | None, elements: dict) -> bool:
    """Reject looked-up identities that are plainly another substance.

    The identifier database maps some carbides and element clusters to a
    hydride (dicarbon -> ethyne "C#C", Cr7C3 -> "C.C.C.[Cr]..." with methane
    components).  A name that is only an element name with a multiplier
    ("dicarbon", "ditellurium") must have a formula of that element alone, and
    a SMILES made of several parts must not contain a bare C/N/O/S/B/P part.
    """
    low = name.strip().lower()
    for el_name, symbol in _ELEMENT_NAMES.items():
        for count, mult in enumerate(_MULTIPLIERS, start=1):
            if low == mult + el_name and set(elements) != {symbol}:
                return False
            if mult and low == mult + el_name and elements != {symbol: float(count)}:
                return False  # "tetraphosphorus" must be P4, not P
    if smiles and "." in smiles:
        if any(part in _BARE_COMPONENTS for part in smiles.split(".")):
            return False
    return True


def _cas_ok(cas: str) -> bool:
    """CAS registry number check digit."""
    if not _CAS_RE.match(cas):
        return False
    digits = cas.replace("-", "")
    body, check = digits[:-1], int(digits[-1])
    return sum(int(d) * (i + 1) for i, d in enumerate(reversed(body))) % 10 == check


def _nice_name(name: str) -> str:
    """'Benzene' -> 'benzene'; keep 'N,N-Dimethylformamide', 'L-Cysteine'."""
    if len(name) > 1 and name[0].isupper() and name[1].islower():
        return name[0].lower() + name[1:]
    return name


def _load_nasa(filename: str) -> list[dict]:
    """Species entries of a Cantera data file, as the YAML mappings they were read from.

    Cantera's own (C++) YAML reader is used because it is much faster than a
    Python YAML parser; ``input_data`` gives back each entry unchanged.
    """
    import cantera

    return [sp.input_data for sp in cantera.Species.list_from_file(filename)]


def _nasa_composition(comp: dict) -> tuple[dict, int] | None:
    if "D" in comp:
        return None  # deuterium is not an element symbol dossier parses
    charge = -int(comp.get("E", 0))
    elements = {e: float(n) for e, n in comp.items() if e != "E"}
    return elements, charge


def _nasa_gas(ids: Identifiers, skipped: Counter) -> list[Candidate]:
    species = _load_nasa("nasa_gas.yaml")
    hills = Counter()
    parsed = []
    for sp in species:
        comp = _nasa_composition(sp["composition"])
        if comp is None:
            skipped["nasa-gas: deuterated"] += 1
            continue
        parsed.append((sp, comp))
        hills[hill_formula(*comp)] += 1
    out = []
    for sp, (elements, charge) in parsed:
        raw = sp["name"]
        th = sp["thermo"]
        r, c = _as_nasa7(sp)
        model = Nasa7(tuple(r), tuple(c))
        label, _, qual = raw.partition(",")
        label = "e-" if raw == "Electron" else _clean_label(label)
        if raw == "Jet-A(g)":
            label = "Jet-A"
        cas = NASA_GAS_CAS.get(raw, NASA_CAS.get(raw))
        by_hand = cas is not None
        name = None
        hill = hill_formula(elements, charge)
        if (cas is None and charge == 0 and "C" not in elements and hills[hill] == 1
                and len(elements) > 0):
            hit = ids.by_formula(label)
            if hit is not None and _composition_of(hit.formula) == (elements, 0):
                cas = hit.CASs
        extra = []
        if cas and cas in COMMON:
            name, extra = COMMON[cas]
        if name is None:
            name = {"e-": "electron", "Jet-A": "Jet-A fuel (NASA surrogate)"}.get(label)
        if name is None:
            name = NASA_NAMES.get(raw)
        if name is None:
            # the identifier database's common names for inorganic species are
            # often trade or archaic names: keep NASA's formula as the name
            name = label
            hit = ids.by_cas(cas) if cas else None
            if hit is not None and hit.common_name:
                extra = [hit.common_name]
        aliases = [raw, label, *extra]
        if qual:
            aliases.append(f"{label},{qual}")
        out.append(Candidate("nasa-gas", 0, "g", elements, charge, model,
                             label if not qual else "", name, aliases, cas,
                             f"NASA name {raw}; reference code {str(th.get('note', '')).strip()}"))
    return out


def _nasa_condensed(ids: Identifiers, skipped: Counter) -> list[Candidate]:
    groups: dict[str, list] = defaultdict(list)
    order = []
    for sp in _load_nasa("nasa_condensed.yaml"):
        m = _PHASE_TAG_RE.match(sp["name"])
        base = m.group("base") + (m.group("qual") or "")
        tag = m.group("tag")
        if base not in groups:
            order.append(base)
        groups[base].append((tag, sp))
    out = []
    for base in order:
        entries = groups[base]
        comp = _nasa_composition(entries[0][1]["composition"])
        if comp is None:
            skipped["nasa-condensed: deuterated"] += 1
            continue
        elements, charge = comp
        label, _, qual = base.partition(",")
        label = _clean_label(label)
        cas = NASA_CAS.get(base) or NASA_CAS.get(base.partition(",")[0])
        if cas is None and "C" not in elements:
            hit = ids.by_formula(label)
            if hit is not None and _composition_of(hit.formula) == (elements, 0):
                cas = hit.CASs
        name = COMMON[cas][0] if cas in COMMON else None
        extra = COMMON[cas][1] if cas in COMMON else []
        if name is None:
            name = "Jet-A fuel (NASA surrogate)" if label == "Jet-A" else label
            hit = ids.by_cas(cas) if cas else None
            if hit is not None and hit.common_name:
                extra = [hit.common_name]
        solids = [(t, sp) for t, sp in entries if t != "L"]
        liquids = [(t, sp) for t, sp in entries if t == "L"]
        for phase, items in (("s", solids), ("l", liquids)):
            if not items:
                continue
            items = sorted(items, key=lambda x: x[1]["thermo"]["temperature-ranges"][0])
            ranges: list[float] = []
            coeffs: list = []
            ok = True
            for tag, sp in items:
                r, c = _as_nasa7(sp)
                if ranges and abs(ranges[-1] - r[0]) > 1e-9:
                    ok = False
                    break
                ranges = ranges[:-1] + r if ranges else r
                coeffs += c
            if not ok:
                skipped["nasa-condensed: non-contiguous forms"] += 1
                continue
            model = Nasa7(tuple(ranges), tuple(coeffs))
            names = ", ".join(sp["name"] for _, sp in items)
            if len(items) == 1:
                code = str(items[0][1]["thermo"].get("note", "")).strip()
                note = f"NASA name {names}; reference code {code}"
            else:
                codes = "; ".join(f"{sp['name']}: {str(sp['thermo'].get('note', '')).strip()}"
                                  for _, sp in items)
                note = (f"NASA names {names}: solid forms joined in order of temperature; "
                        f"the enthalpy steps at the joins are the transition enthalpies; "
                        f"reference codes {codes}")
            raw_names = [sp["name"] for _, sp in items]
            out.append(Candidate("nasa-condensed", 0, phase, elements, charge, model,
                                 label if not qual else "",
                                 name, [*raw_names, label, *extra], cas, note))
    return out


def _as_nasa7(sp: dict) -> tuple[list[float], list[tuple]]:
    """Temperature limits and 7-coefficient segments of one NASA entry.

    A few condensed entries (Cr(cr), Fe(a), Ni(cr), ZnSO4(a)) are stored in
    Cantera's file in 9-coefficient form only to allow three ranges; their
    T⁻² and T⁻¹ terms are zero, so a3..a9 are exactly the 7-coefficient set.
    Cantera hands back a one-range entry as two identical segments with a
    zero-width second range; that empty segment is dropped.
    """
    th = sp["thermo"]
    ranges = [float(x) for x in th["temperature-ranges"]]
    if th.get("model", "NASA7") == "NASA7":
        coeffs = [tuple(float(x) for x in c) for c in th["data"]]
    elif th["model"] == "NASA9" and all(c[0] == 0 and c[1] == 0 for c in th["data"]):
        coeffs = [tuple(float(x) for x in c[2:]) for c in th["data"]]
    else:
        raise ValueError(f"{sp['name']}: cannot convert thermo model {th['model']} to NASA 7")
    keep_r, keep_c = [ranges[0]], []
    for hi, c in zip(ranges[1:], coeffs):
        if hi > keep_r[-1]:
            keep_r.append(hi)
            keep_c.append(c)
    return keep_r, keep_c


def _read_tsv(path: Path) -> list[dict]:
    with path.open(encoding="utf-8") as fh:
        return list(csv.DictReader(fh, delimiter="\t"))


def _num(text: str | None) -> float | None:
    if text is None or text.strip() == "":
        return None
    return float(text)


def _cas_from_int(text: str) -> str:
    s = text.strip()
    return f"{s[:-3]}-{s[-3:-1]}-{s[-1]}"


def _shomate_segments(cas: str, phase: str, shomate: dict):
    """NIST Shomate (A..E, t = T/1000) per segment, from chemicals' T-in-K form."""
    idx = {"s": 0, "l": 1, "g": 2}[phase]
    entry = shomate.get(cas)
    if not entry or not entry[idx]:
        return None
    segs = []
    for seg in entry[idx]:
        lo, hi, A, B, C, D, E = seg
        if segs and abs(segs[-1][1] - lo) > 1e-9:
            break  # keep the contiguous part only
        segs.append((float(lo), float(hi), _sig(A), _sig(B * 1e3), _sig(C * 1e6),
                     _sig(D * 1e9), _sig(E / 1e6)))
    if segs[0][0] > T_REF + 2.0:
        return None  # the correlation does not reach 298.15 K
    return segs


def _shomate_model(segs, hf: float, s298: float) -> Shomate:
    """Add F, G, H so that H(298.15) = ΔfH°, S(298.15) = S°, continuous at joins."""
    ranges = [segs[0][0]] + [s[1] for s in segs]
    coeffs = []
    H = hf / 1000.0
    h_target, s_target, t_ref = hf, s298, T_REF
    for i, (lo, hi, A, B, C, D, E) in enumerate(segs):
        if i > 0:
            t_ref = lo
        t = t_ref / 1000.0
        h_part = A * t + B * t**2 / 2 + C * t**3 / 3 + D * t**4 / 4 - E / t  # kJ/mol
        s_part = A * math.log(t) + B * t + C * t**2 / 2 + D * t**3 / 3 - E / (2 * t**2)
        F = _sig((h_target - hf) / 1000.0 - h_part + H, 12)
        G = _sig(s_target - s_part, 12)
        coeffs.append((A, B, C, D, E, F, G, _sig(H, 12)))
        model = Shomate((lo, hi), (coeffs[-1],), hf)
        h_target, s_target = float(model.h(hi)), float(model.s(hi))
    return Shomate(tuple(ranges), tuple(coeffs), hf)


def _tabulated(ids: Identifiers, skipped: Counter) -> list[Candidate]:
    import chemicals

    global _ELEMENT_NAMES
    _ELEMENT_NAMES = _element_names()

    base = Path(chemicals.__file__).parent
    crc = _read_tsv(base / "Heat Capacity" / "CRC Standard Thermodynamic Properties of Chemical Substances.tsv")
    webbook = {_cas_from_int(r["CAS"]): r for r in _read_tsv(base / "Misc" / "webbook_constants.tsv")}
    webbook = {c: r for c, r in webbook.items() if _cas_ok(c)}
    shomate = json.loads((base / "Heat Capacity" / "webbook_shomate_coefficients.json").read_text())
    crc_by_cas = {r["CAS"]: r for r in crc}
    out = []
    cases = sorted(set(crc_by_cas) | {c for c, r in webbook.items()
                                      if any(r[f"Hf{p}"] and r[f"S0{p}"] for p in "slg")})
    for cas in cases:
        row = crc_by_cas.get(cas, {})
        wrow = webbook.get(cas, {})
        for phase in ("s", "l", "g"):
            hf, s0 = _num(row.get(f"Hf{phase}")), _num(row.get(f"S0{phase}"))
            cp = _num(row.get(f"Cp{phase}"))
            key = "crc"
            if hf is None or s0 is None:
                hf, s0 = _num(wrow.get(f"Hf{phase}")), _num(wrow.get(f"S0{phase}"))
                key = "webbook"
            if hf is None or s0 is None:
                if row.get(f"Hf{phase}") or row.get(f"S0{phase}"):
                    skipped[f"crc {phase}: ΔfH° or S° missing"] += 1
                continue
            hit = ids.by_cas(cas)
            if hit is None:
                skipped[f"{key} {phase}: CAS not in chemicals.identifiers"] += 1
                continue
            comp = _composition_of(hit.formula)
            if comp is None:
                skipped[f"{key} {phase}: formula not parsed"] += 1
                continue
            elements, charge = comp
            if not _formula_fits_name(row.get("Chemical") or hit.common_name, elements):
                skipped[f"{key} {phase}: looked-up formula does not fit the name"] += 1
                continue
            if not _identity_fits(row.get("Chemical") or hit.common_name, hit.smiles, elements):
                skipped[f"{key} {phase}: looked-up identity does not fit the name"] += 1
                continue
            if not row.get("Chemical") and _CAS_RE.match(hit.common_name or ""):
                skipped[f"{key} {phase}: no name known for the CAS number"] += 1
                continue
            if cas in COMMON:
                name, extra = COMMON[cas]
            else:
                name = _nice_name(row.get("Chemical") or hit.common_name)
                extra = []
            aliases = [*extra]
            if row.get("Chemical") and row["Chemical"].lower() != name.lower():
                aliases.append(row["Chemical"])
            if hit.common_name and hit.common_name.lower() != name.lower():
                aliases.append(hit.common_name)
            form = FORM_NAMES.get(name.lower()) if phase == "s" else None
            if phase != "s":  # "tin (gray)" names a solid form, not the gas or the liquid
                name = _strip_form(name)
                aliases = [_strip_form(a) for a in aliases if _strip_form(a).lower() != name.lower()]
            elif form is not None:
                aliases += FORM_ALIASES.get(form, [])
            tm, tb = ids.tm_tb(cas)
            note_parts = []
            missing = []
            segs = _shomate_segments(cas, phase, shomate)
            if segs is not None:
                model = _shomate_model(segs, hf, s0)
                key = "shomate+" + key
                priority = 1
            else:
                priority = 2
                if cp is None:
                    cp = _num(row.get(f"Cp{phase}"))
                if cp is None:
                    cp = 0.0
                    missing = ["cp"]  # the note is written with its uncertainty later
                if phase == "l" and tm is not None and tb is not None and tm < tb:
                    lo, hi = tm, tb
                elif phase == "s" and tm is not None and tm > T_REF:
                    lo, hi = 248.15, tm
                else:
                    lo, hi = 248.15, 348.15
                    note_parts.append("data range 298.15 ± 50 K (our choice: "
                                      "melting/boiling points not known)" if phase != "g" else
                                      "data range 298.15 ± 50 K (our choice for a constant Cp)")
                model = ConstantCp(hf, s0, cp, lo, hi)
            note = "; ".join(note_parts)
            out.append(Candidate(key, priority, phase, elements, charge, model, "", name,
                                 aliases, cas, note, form=form, missing=missing))
    return out


def _aqueous(skipped: Counter) -> list[Candidate]:
    import chemicals

    base = Path(chemicals.__file__).parent
    rows = _read_tsv(base / "Electrolytes" / "CRC Thermodynamic Properties of Aqueous Ions.tsv")
    out = []
    for r in rows:
        hf, s0, cp = _num(r["Hf(aq)"]), _num(r["S(aq)"]), _num(r["Cp(aq)"])
        if hf is None or s0 is None:
            skipped["crc aq: ΔfH° or S° missing"] += 1
            continue
        comp = _composition_of(r["Formula"])
        if comp is None:
            skipped["crc aq: formula not parsed"] += 1
            continue
        elements, charge = comp
        note, missing, key = [], [], "crc-aq"
        if r["Formula"] == "H+":
            note.append("by the hydrogen-ion convention ΔfH°, S° and Cp° of H+(aq) are zero "
                        "at every temperature")
        elif cp is None and r["Formula"] in aq_cp.CP_298:
            value, ref = aq_cp.CP_298[r["Formula"]]
            cp, key = _sig(value * aq_cp.CAL, 6), f"crc-aq+{ref}"
            note.append(f"Cp° at 298.15 K ({value:g} cal/(mol K)) from {aq_cp.CITATIONS[ref]} "
                        "(revised HKF model), held constant over the data range")
        elif cp is None:
            cp, missing = 0.0, ["cp"]  # the note is written with its uncertainty later
        note.append("data range 273.15–373.15 K (our choice: liquid water at 1 bar)")
        model = ConstantCp(hf, s0, cp, 273.15, 373.15)
        name = _nice_name(r["Name"])
        out.append(Candidate(key, 3, "aq", elements, charge, model, r["Formula"], name,
                             [r["Formula"], *AQ_ALIASES.get(r["Formula"], [])],
                             r["CAS"] if not r["CAS"].startswith("2099995") else None,
                             "; ".join(note), missing=missing))
    return out


def _attach_atct(cands: list[Candidate]) -> int:
    """ΔfH° uncertainty from ATcT 1.112 for gases and liquids matched by CAS.

    When the record's ΔfH°(298.15) agrees with the ATcT value within twice the
    ATcT uncertainty, the ATcT uncertainty is attached as ("hf", u).  When it
    does not, the record gets ("hf", |difference|) and the note says so, so
    that the spread between the two sources is visible.
    """
    import chemicals

    base = Path(chemicals.__file__).parent / "Reactions"
    atct = {}
    for phase, fname, col in (("g", "ATcT 1.112 (g).tsv", "Hfg"), ("l", "ATcT 1.112 (l).tsv", "Hfl")):
        for r in _read_tsv(base / fname):
            atct[(r["CAS"], phase)] = (float(r[col]), float(r["uncertainty"]))
    n = 0
    for c in cands:
        if not c.cas or (c.cas, c.phase) not in atct:
            continue
        value, u = atct[(c.cas, c.phase)]
        hf = float(c.model.h(T_REF))
        diff = abs(hf - value)
        if diff <= 2 * u:
            c.uncertainty.append(("hf", u))
            c.note = _join(c.note, f"ΔfH° uncertainty ±{u / 1000:g} kJ/mol from ATcT 1.112")
        else:
            c.uncertainty.append(("hf", _sig(diff, 4)))
            c.note = _join(c.note, f"ΔfH° differs by {diff / 1000:.3g} kJ/mol from ATcT 1.112 "
                                   f"({value / 1000:g} ± {u / 1000:g} kJ/mol); that difference "
                                   f"is given as the uncertainty")
        n += 1
    return n


# --------------------------------------------------------------------------
# selection, ids, output

def _select(cands: list[Candidate], dropped: Counter) -> list[Candidate]:
    """One record per substance and phase, preferring NASA, then Shomate, then CRC."""
    cands = sorted(cands, key=lambda c: (c.priority, c.phase, c.hill, c.name, c.cas or ""))
    chosen: list[Candidate] = []
    by_cas: set = set()
    by_name: dict = {}
    forms: set = set()
    for c in cands:
        if c.form is not None and (c.hill, c.form) not in forms:
            # one solid form of several (an allotrope): kept under its own name, whatever
            # else shares its CAS number and formula
            forms.add((c.hill, c.form))
            chosen.append(c)
            continue
        if c.cas and (c.cas, c.phase) in by_cas:
            dropped[f"{c.source_key} {c.phase}: same CAS as a preferred record"] += 1
            continue
        key = (c.hill, c.phase, c.base_name)
        if key in by_name:
            keeper = by_name[key]
            if c.phase == "s" and keeper.priority == c.priority and keeper.priority > 0:
                # two solid forms of one compound from the same table: keep the
                # stable form at 298.15 K (lowest G)
                if float(c.model.g(T_REF)) < float(keeper.model.g(T_REF)):
                    chosen[chosen.index(keeper)] = c
                    by_name[key] = c
                    if c.cas:
                        by_cas.add((c.cas, c.phase))
                    c.note = _join(c.note, f"stable form at 298.15 K chosen over {keeper.name}")
                    continue
                keeper.note = _join(keeper.note, f"stable form at 298.15 K chosen over {c.name}")
            dropped[f"{c.source_key} {c.phase}: same name and formula as a preferred record"] += 1
            continue
        by_name[key] = c
        if c.cas:
            by_cas.add((c.cas, c.phase))
        chosen.append(c)
    return chosen


def _assign_ids(chosen: list[Candidate]) -> dict[int, str]:
    groups = Counter((c.hill, c.phase) for c in chosen)
    ids: dict[int, str] = {}
    used: set = set()
    for c in sorted(chosen, key=lambda c: (c.priority, c.phase, c.hill, c.name, c.cas or "")):
        label = c.label
        shared = groups[(c.hill, c.phase)] > 1
        if label and shared and label == c.hill and not c.reference:
            label = ""  # a bare molecular formula would hide the other isomers
        base = label or c.name
        cid = f"{base}({c.phase})"
        if cid in used:
            cid = f"{c.name} [{c.cas or c.source_key}]({c.phase})"
        n = 2
        while cid in used:
            cid = f"{base} {n}({c.phase})"
            n += 1
        used.add(cid)
        ids[id(c)] = cid
    return ids


def _aliases(c: Candidate, cid: str) -> tuple[str, ...]:
    out = []
    seen = {c.name.lower(), cid.lower()}
    for a in c.aliases:
        if not a or a.lower() in seen:
            continue
        comp = _composition_of(a)
        if comp is not None and hill_formula(*comp) == a and a == c.hill:
            continue  # the molecular formula itself: resolved by composition instead
        seen.add(a.lower())
        out.append(a)
    return tuple(out)


def _reference_forms() -> list[Candidate]:
    """Element reference states the tables leave out: white tin (the CRC table in chemicals
    carries only grey tin, which is not the reference state)."""
    import chemicals

    base = Path(chemicals.__file__).parent
    webbook = {_cas_from_int(r["CAS"]): r for r in _read_tsv(base / "Misc" / "webbook_constants.tsv")}
    s298 = float(webbook["7440-31-5"]["S0s"])
    perry = [r for r in _read_tsv(base / "Heat Capacity" / "Perrys Table 2-151.tsv")
             if r["Formula"].strip() == "Sn" and r["main phase"].strip() == "c"]
    (row,) = perry
    a, b = float(row["Constant Term"]), float(row["+*T term"])
    c = float(row["/T^2 term"] or 0.0)
    d = float(row["*T^2 term"] or 0.0)
    cal = 4.184  # the table gives cal/(mol K)
    # Cp = a + bT + c/T² + dT² (cal) as Shomate, t = T/1000: A + Bt + Ct² + Dt³ + E/t²
    seg = (float(row["Tmin"]), float(row["Tmax"]), _sig(a * cal), _sig(b * cal * 1e3),
           _sig(d * cal * 1e6), 0.0, _sig(c * cal / 1e6))
    model = _shomate_model([seg], 0.0, s298)
    note = ("white (β) tin, the reference state of tin; Cp(T) = "
            f"{a:g} + {b:g} T cal/(mol K) from Perry's Table 2-151 (±{row['%error'].strip()} %)")
    return [Candidate("reference-tin", 1, "s", {"Sn": 1.0}, 0, model, "Sn", "tin",
                      ["white tin", "tin (white)", "beta-tin"], "7440-31-5", note,
                      form="white", reference=True)]


def _attach_phase_data(chosen: list[Candidate]) -> Counter:
    """Melting and boiling points and vapour-pressure curves (tools/library_phase_data.py)."""
    counts: Counter = Counter()
    water = next(c for c in chosen if c.cas == "7732-18-5" and c.phase == "l")
    cache: dict = {}
    for c in sorted(chosen, key=lambda c: c.phase != "l"):  # water's liquid first
        if c.phase == "aq":
            continue
        key = (c.cas, c.phase, c.form)
        if key not in cache:
            cache[key] = phase_tool.phase_data(c.cas if c.charge == 0 else None, c.phase, c.form)
        c.phase_data, note = cache[key]
        if note:
            c.note = _join(c.note, note)
    for c in chosen:
        if c.phase == "aq":
            c.phase_data = phase_tool.solvent_phase_data(water.phase_data)
    for c in chosen:
        pd = c.phase_data
        counts[f"{c.phase} records"] += 1
        if pd is not None and c.phase != "aq":
            counts[f"{c.phase} with melting point"] += pd.t_melt is not None
            counts[f"{c.phase} with boiling point"] += pd.t_boil is not None
            counts[f"{c.phase} with vapour-pressure curve"] += pd.vapour_pressure is not None
    return counts


def _note_missing_cp(chosen: list[Candidate]) -> Counter:
    """Records whose source gives no Cp: the note says so, and cp gets an uncertainty.

    Aqueous ions: the largest |Cp°(298.15 K)| among the library's ions of the same
    charge that have one (the spread of the known values).  Other phases: 3R per atom
    for a condensed phase (the Dulong-Petit value) and (3n - 2)R for a gas of n > 1
    atoms (all vibrations excited), 5R/2 for a monatomic gas: bounds of the right size,
    our choice.
    """
    counts: Counter = Counter()
    spread: dict = {}
    for c in chosen:
        if c.phase == "aq" and "cp" not in c.missing and c.charge != 0:
            spread[c.charge] = max(spread.get(c.charge, 0.0), abs(float(c.model.cp(T_REF))))
    for c in chosen:
        if "cp" not in c.missing:
            continue
        n = sum(c.composition.values())
        if c.phase == "aq":
            u = spread.get(c.charge) or max(spread.values())
            why = (f"the largest |Cp°| among the library's other ions of charge "
                   f"{c.charge:+d}" if c.charge in spread else "the largest |Cp°| of any ion")
        elif c.phase == "g":
            u = (3 * n - 2) * R if n > 1 else 2.5 * R
            why = "(3n − 2)R for a gas of n atoms" if n > 1 else "5R/2 for a monatomic gas"
        else:
            u = 3 * n * R
            why = "3R per atom, the Dulong-Petit value"
        u = _sig(u, 3)
        c.uncertainty.append(("cp", u))
        c.note = _join(c.note, f"Cp not given by the source: held at 0 J/(mol K), so ΔfH° and "
                               f"S° keep their 298.15 K values; uncertainty ±{u:g} J/(mol K) "
                               f"({why}; our choice)")
        counts[f"{c.phase} without Cp"] += 1
    return counts


def _attach_smiles(chosen: list[Candidate], ids: Identifiers) -> Counter:
    """SMILES from chemicals' identifier database (by CAS) for every carbon compound whose
    structure's formula (RDKit) is the record's formula."""
    from rdkit import Chem, RDLogger
    from rdkit.Chem.rdMolDescriptors import CalcMolFormula

    RDLogger.DisableLog("rdApp.*")
    counts: Counter = Counter()
    for c in chosen:
        if "C" not in c.composition or not c.cas:
            continue
        hit = ids.by_cas(c.cas)
        mol = Chem.MolFromSmiles(hit.smiles) if hit is not None and hit.smiles else None
        comp = _composition_of(CalcMolFormula(mol)) if mol is not None else None
        if comp is None or hill_formula(*comp) != c.hill:
            counts["carbon compounds: no structure that fits the formula"] += 1
            continue
        c.smiles = hit.smiles
        counts["carbon compounds with SMILES"] += 1
        if "H" in c.composition:
            counts["organic (C and H) with SMILES"] += 1
    counts["organic (C and H) records"] = sum(1 for c in chosen
                                             if "C" in c.composition and "H" in c.composition)
    return counts


def _drop_alias_clashes(chosen: list[Candidate]) -> int:
    """An alias that is another record's name in the same phase would make that name
    ambiguous ("tin" for grey tin): it is dropped."""
    names = Counter((c.name.lower(), c.phase) for c in chosen)
    n = 0
    for c in chosen:
        keep = [a for a in c.aliases
                if a.lower() == c.name.lower() or names[(a.lower(), c.phase)] == 0]
        n += len(c.aliases) - len(keep)
        c.aliases = keep
    return n


def build() -> tuple[dict, dict]:
    skipped: Counter = Counter()
    ids = Identifiers()
    cands = _nasa_gas(ids, skipped) + _nasa_condensed(ids, skipped)
    cands += _tabulated(ids, skipped) + _aqueous(skipped) + _reference_forms()
    dropped: Counter = Counter()
    chosen = _select(cands, dropped)
    n_atct = _attach_atct(chosen)
    n_alias = _drop_alias_clashes(chosen)
    phase_counts = _attach_phase_data(chosen)
    cp_counts = _note_missing_cp(chosen)
    smiles_counts = _attach_smiles(chosen, ids)
    id_of = _assign_ids(chosen)
    records = []
    for c in chosen:
        cid = id_of[id(c)]
        formula = c.hill
        rec = SpeciesRecord(
            id=cid, name=c.name, aliases=_aliases(c, cid), formula=formula,
            elements=tuple(sorted(c.composition.items())), charge=c.charge, phase=c.phase,
            model=c.model, source=c.source_key, note=c.note,
            uncertainty=tuple(c.uncertainty),
            cas=c.cas, molar_mass=_sig(parse_formula(formula).molar_mass, 10),
            smiles=c.smiles, phase_data=c.phase_data, missing=tuple(c.missing),
        )
        records.append(rec)
    records.sort(key=lambda r: r.id)
    data = {
        "format": FORMAT,
        "library_version": LIBRARY_VERSION,
        "generated": GENERATED,
        "generator": "tools/build_library.py",
        "sources": {k: {"citation": v} for k, v in sorted(SOURCES.items())},
        "uncertainty_source": ATCT_CITATION,
        "records": [r.to_dict() for r in records],
    }
    report = {
        "records": len(records),
        "by_source": dict(sorted(Counter(r.source for r in records).items())),
        "by_phase": dict(sorted(Counter(r.phase for r in records).items())),
        "by_source_phase": dict(sorted(Counter(f"{r.source} {r.phase}" for r in records).items())),
        "with_atct_uncertainty": n_atct,
        "aliases_dropped_as_other_names": n_alias,
        "phase_boundaries": dict(sorted(phase_counts.items())),
        "heat_capacity": dict(sorted(cp_counts.items())),
        "structures": dict(sorted(smiles_counts.items())),
        "skipped": dict(sorted(skipped.items())),
        "dropped_as_duplicates": dict(sorted(dropped.items())),
    }
    return data, report


FIELDS = FILE_FIELDS


_ABSENT = {f: None for f in FIELDS} | {"missing": []}


def _row(values: list) -> str:
    return json.dumps(values, sort_keys=True, ensure_ascii=False, separators=(",", ":"))


def dumps(data: dict) -> str:
    """Deterministic JSON: header keys sorted, then one record per line.

    Records are written as arrays in the order of the header's "fields" list
    (much faster to parse than one object per record), one per line, which is
    the layout dossier.library.datafile reads: it parses the header, whose
    "lookup" table (one entry per line, in the order of the records) gives what a
    lookup by name or formula needs, and each record's line only when that record
    is used.
    """
    head = {k: v for k, v in data.items() if k != "records"}
    head["fields"] = list(FIELDS)
    head["lookup_fields"] = list(LOOKUP_FIELDS)
    lines = ["{"]
    for k in sorted(head):
        lines.append(f"{json.dumps(k)}: {json.dumps(head[k], sort_keys=True, ensure_ascii=False)},")
    lines.append('"lookup": [')
    lines.append(",\n".join(_row([r.get(f, _ABSENT.get(f)) for f in LOOKUP_FIELDS])
                            for r in data["records"]))
    lines.append("],")
    lines.append('"records": [')
    lines.append(",\n".join(_row([r.get(f, _ABSENT[f]) for f in FIELDS]) for r in data["records"]))
    lines.append("]")
    lines.append("}")
    return "\n".join(lines) + "\n"


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--out", type=Path, default=OUT)
    ap.add_argument("--report", action="store_true", help="print counts by source and phase")
    args = ap.parse_args(argv)
    data, report = build()
    args.out.parent.mkdir(parents=True, exist_ok=True)
    args.out.write_text(dumps(data), encoding="utf-8")
    if args.report:
        print(json.dumps(report, indent=2, ensure_ascii=False))
    else:
        print(f"wrote {report['records']} records to {args.out}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
