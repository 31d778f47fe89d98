"""Standard partial molal heat capacities Cp° of aqueous ions at 298.15 K and 1 bar.

Used by tools/build_library.py for the ions whose row in the CRC Handbook
table "Thermodynamic Properties of Aqueous Ions" has no Cp.  The values are
those of the revised Helgeson-Kirkham-Flowers (HKF) papers named beside each
entry, in cal/(mol K) as published (converted with 4.184 J/cal by the
generator).  They were transcribed from the OBIGT database distributed with
the CHNOSZ package (J. M. Dick, inst/extdata/OBIGT/inorganic_aq.csv, column
"Cp", with its "ref1" key naming the paper); the keys are those papers:

* SH88   E. L. Shock and H. C. Helgeson (1988), Geochim. Cosmochim. Acta 52,
         2009-2036 (ionic species);
* SSWS97 E. L. Shock, D. C. Sassani, M. Willis and D. A. Sverjensky (1997),
         Geochim. Cosmochim. Acta 61, 907-950 (aqueous ions and hydroxide
         complexes);
* TS01   B. Tagirov and J. Schott (2001), Geochim. Cosmochim. Acta 65,
         3965-3992 (aqueous Al species);
* AZ01   N. N. Akinfiev and A. V. Zotov (2001), Geochem. Int. 39, 990-1006
         (Au+, Ag+, Cu+ and their complexes);
* TBZ13  B. R. Tagirov et al. (2013), Geochim. Cosmochim. Acta 117, 348-373
         (Pd+2 and its complexes).

Keys of ``CP_298`` are the formulas as the CRC table writes them.
"""
from __future__ import annotations

CAL = 4.184  # J per thermochemical calorie

CITATIONS = {
    "SH88": ("E. L. Shock and H. C. Helgeson, Geochim. Cosmochim. Acta 52 (1988) 2009-2036"),
    "SSWS97": ("E. L. Shock, D. C. Sassani, M. Willis and D. A. Sverjensky, Geochim. "
               "Cosmochim. Acta 61 (1997) 907-950"),
    "TS01": "B. Tagirov and J. Schott, Geochim. Cosmochim. Acta 65 (2001) 3965-3992",
    "AZ01": "N. N. Akinfiev and A. V. Zotov, Geochem. Int. 39 (2001) 990-1006",
    "TBZ13": "B. R. Tagirov et al., Geochim. Cosmochim. Acta 117 (2013) 348-373",
}

#: CRC formula -> (Cp° at 298.15 K in cal/(mol K), paper key)
CP_298: dict[str, tuple[float, str]] = {
    # Shock and Helgeson (1988)
    "HCO3-": (-8.46, "SH88"), "CO3-2": (-69.5, "SH88"), "HPO4-2": (-58.3, "SH88"),
    "H2PO4-": (-7.0, "SH88"), "BO2-": (-41.0, "SH88"), "Ca+2": (-7.53, "SH88"),
    "Pb+2": (-12.7, "SH88"), "Hg+2": (2.2, "SH88"), "S2O3-2": (-57.3, "SH88"),
    "Ni+2": (-11.7, "SH88"), "ClO3-": (-12.3, "SH88"), "BF4-": (-5.6, "SH88"),
    "SH-": (-22.17, "SH88"), "IO3-": (-16.2, "SH88"), "S2O8-2": (-25.0, "SH88"),
    "Cu+2": (-5.7, "SH88"), "HSO3-": (-1.4, "SH88"), "BrO3-": (-20.6, "SH88"),
    "S2-2": (-65.1, "SH88"), "HF2-": (-33.2, "SH88"), "Mg+2": (-5.34, "SH88"),
    "Rb+": (-3.0, "SH88"), "Sr+2": (-10.05, "SH88"), "Cd+2": (-3.5, "SH88"),
    "Ba+2": (-12.3, "SH88"), "Gd+3": (-35.9, "SH88"),
    # Shock, Sassani, Willis and Sverjensky (1997)
    "CN-": (-17.7, "SSWS97"), "OCN-": (-15.8, "SSWS97"), "NiOH+": (31.0, "SSWS97"),
    "ScOH+2": (-19.3, "SSWS97"), "FeOH+2": (-8.2, "SSWS97"), "HgOH+": (46.5, "SSWS97"),
    "Hg2+2": (13.8, "SSWS97"), "CrO4-2": (-62.6, "SSWS97"), "Cr2O7-2": (-29.1, "SSWS97"),
    "P2O7-4": (-139.1, "SSWS97"), "SeO3-2": (-61.4, "SSWS97"), "SeO4-2": (-55.6, "SSWS97"),
    "MoO4-2": (-47.5, "SSWS97"), "PO4-3": (-124.6, "SSWS97"), "SO3-2": (-67.5, "SSWS97"),
    "MnO4-2": (-66.4, "SSWS97"), "ClO-": (-27.8, "SSWS97"), "BrO-": (-28.0, "SSWS97"),
    "Tl+3": (-0.2, "SSWS97"), "ClO4-": (-6.0, "SSWS97"), "S2O4-2": (-50.1, "SSWS97"),
    "ClO2-": (-19.3, "SSWS97"), "HSeO4-": (12.1, "SSWS97"), "IO4-": (-2.0, "SSWS97"),
    "IO-": (-34.6, "SSWS97"), "FeOH+": (15.0, "SSWS97"), "H2P2O7-2": (17.6, "SSWS97"),
    "Fe+2": (-7.9, "SSWS97"), "Ce+4": (0.1, "SSWS97"), "Th+4": (-0.2, "SSWS97"),
    "U+4": (0.2, "SSWS97"), "BrO4-": (-5.2, "SSWS97"), "HSe-": (-19.8, "SSWS97"),
    "Eu+2": (-11.4, "SSWS97"), "Ce+3": (-47.7, "SSWS97"), "Fe+3": (-18.6, "SSWS97"),
    "HSeO3-": (6.5, "SSWS97"), "Be+2": (-5.8, "SSWS97"), "Sc+3": (-13.8, "SSWS97"),
    "Ga+3": (-26.5, "SSWS97"), "Y+3": (-12.9, "SSWS97"), "In+3": (-15.6, "SSWS97"),
    "Tl+": (-4.2, "SSWS97"), "Ra+2": (-14.3, "SSWS97"), "Co+2": (-7.8, "SSWS97"),
    "Co+3": (-24.7, "SSWS97"), "Sn+2": (-15.5, "SSWS97"), "U+3": (-36.4, "SSWS97"),
    "SnOH+": (-12.9, "SSWS97"), "HP2O7-3": (-28.7, "SSWS97"), "MnOH+": (8.7, "SSWS97"),
    "BeO2-2": (-12.7, "SSWS97"), "InOH+2": (13.8, "SSWS97"),
    # Tagirov and Schott (2001)
    "Al+3": (-28.56, "TS01"), "Al(OH)4-": (23.06, "TS01"),
    # Akinfiev and Zotov (2001)
    "Cu+": (3.465, "AZ01"),
    # Tagirov et al. (2013)
    "Pd+2": (-1.6, "TBZ13"),
}

__all__ = ["CAL", "CITATIONS", "CP_298"]
