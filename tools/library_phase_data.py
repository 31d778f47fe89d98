"""Phase boundaries for the species library (used by tools/build_library.py).

For a CAS number: the normal melting and boiling points and a vapour-pressure
curve of the liquid, each from a table carried by the chemicals package and
each with its source key (the keys and citations are in ``SOURCES``, which
the generator adds to the data file's source list).

* Melting and boiling points: chemicals.phase_change.Tm / Tb, trying the
  methods in the order of ``_TM_METHODS`` and ``_TB_METHODS`` and never the
  package's JOBACK method (an estimate, not a measurement).
* Vapour pressure: the first of the correlations below (in this order) that
  reproduces the tabulated normal boiling point within ``TB_AGREEMENT_K``
  (and whose range reaches 1 atm); where no normal boiling point is
  tabulated, the first correlation whose range reaches 1 atm gives it.
"""
from __future__ import annotations

import math

from dossier.library.phasedata import PhaseData, VapourPressure

NORMAL_PRESSURE = 101325.0  # Pa: the normal melting and boiling points are at 1 atm
TB_AGREEMENT_K = 2.0  # our choice: a curve must give the tabulated normal boiling point
LN10 = math.log(10.0)

_CRC = "Haynes, Bruno and Lide (eds.), CRC Handbook of Chemistry and Physics, 95th ed. (2014)"
SOURCES = {
    "pc-heos": ("Normal boiling point from the high-accuracy equations of state of the NIST "
                "REFPROP database (Huber, Lemmon, Bell and McLinden, Ind. Eng. Chem. Res. 61 "
                "(2022) 15449), as carried by the chemicals package (method HEOS)"),
    "pc-crc-inorg": (f"{_CRC}, \"Physical Constants of Inorganic Compounds\", as carried by "
                     "the chemicals package (method CRC_INORG)"),
    "pc-crc-org": (f"{_CRC}, \"Physical Constants of Organic Compounds\", as carried by the "
                   "chemicals package (method CRC_ORG)"),
    "pc-common-chemistry": ("CAS Common Chemistry (commonchemistry.cas.org), as carried by "
                            "the chemicals package (method COMMON_CHEMISTRY)"),
    "pc-webbook": ("NIST Chemistry WebBook, NIST Standard Reference Database 69, as carried "
                   "by the chemicals package (method WEBBOOK)"),
    "pc-yaws": ("C. L. Yaws, Thermophysical Properties of Chemicals and Hydrocarbons, 2nd ed. "
                "(2014), as carried by the chemicals package (method YAWS)"),
    "pc-wikidata": "Wikidata, as carried by the chemicals package (method WIKIDATA)",
    "pc-open-notebook": ("J.-C. Bradley, A. Williams and A. Lang, Jean-Claude Bradley Open "
                         "Melting Point Dataset (2014), median of the measured values, as "
                         "carried by the chemicals package (method OPEN_NTBKM)"),
    "vp-wagner-mcgarry": ("Wagner equation (3,6 form): J. McGarry, Ind. Eng. Chem. Process "
                          "Des. Dev. 22 (1983) 313, as carried by the chemicals package "
                          "(Psat_data_WagnerMcGarry)"),
    "vp-wagner-poling": ("Wagner equation (2.5,5 form): B. E. Poling, J. M. Prausnitz and "
                         "J. P. O'Connell, The Properties of Gases and Liquids, 5th ed. (2000), "
                         "as carried by the chemicals package (Psat_data_WagnerPoling)"),
    "vp-perry": ("DIPPR equation 101: Perry's Chemical Engineers' Handbook, 8th ed. (2007), "
                 "Table 2-8, as carried by the chemicals package (Psat_data_Perrys2_8)"),
    "vp-vdi-ppds": ("Wagner equation (2.5,5 form): VDI Heat Atlas, 2nd ed. (2010), PPDS "
                    "coefficients, as carried by the chemicals package (Psat_data_VDI_PPDS_3)"),
    "vp-antoine-poling": ("Antoine equation: B. E. Poling, J. M. Prausnitz and J. P. "
                          "O'Connell, The Properties of Gases and Liquids, 5th ed. (2000), as "
                          "carried by the chemicals package (Psat_data_AntoinePoling)"),
    "vp-alcock": ("C. B. Alcock, V. P. Itkin and M. K. Horrigan, Can. Metall. Q. 23 (1984) "
                  "309, liquid metals, as carried by the chemicals package "
                  "(Psat_data_Alcock_elements)"),
    "vp-landolt": ("Antoine equation: Landolt-Börnstein, New Series IV/20 (K. R. Hall, J. "
                   "Dykyj et al., 1999-2001), as carried by the chemicals package "
                   "(Psat_data_Landolt_Antoine)"),
    "allotropes-memory": ("From memory, not checked against a published table: the grey (α) "
                          "to white (β) tin transition at 13.2 °C (286.35 K) at 1 atm"),
}

_TB_METHODS = {"HEOS": "pc-heos", "CRC_INORG": "pc-crc-inorg", "CRC_ORG": "pc-crc-org",
               "COMMON_CHEMISTRY": "pc-common-chemistry", "WEBBOOK": "pc-webbook",
               "YAWS": "pc-yaws", "WIKIDATA": "pc-wikidata"}
# The handbook first (chemicals itself tries the Open Notebook data first, which give
# wrong values for some small inorganic molecules, e.g. 203.55 K for hydrogen chloride).
_TM_METHODS = {"CRC_INORG": "pc-crc-inorg", "CRC_ORG": "pc-crc-org",
               "OPEN_NTBKM": "pc-open-notebook", "COMMON_CHEMISTRY": "pc-common-chemistry",
               "WEBBOOK": "pc-webbook", "WIKIDATA": "pc-wikidata"}
SAME_POINT_K = 1.0  # our choice: a "melting" and "boiling" point this close is one datum

#: Solid forms that are the stable one only in part of the solid range: CAS, label -> range.
FORM_RANGES = {
    ("7440-31-5", "grey"): (None, 286.35),
    ("7440-31-5", "white"): (286.35, None),
}


def _point(fn, methods_fn, table: dict, cas: str) -> tuple[float, str] | None:
    try:
        available = methods_fn(cas)
    except Exception:  # not in any table
        return None
    for method, key in table.items():
        if method in available:
            try:
                value = fn(cas, method=method)
            except Exception:
                continue
            if value is not None and math.isfinite(float(value)) and float(value) > 0:
                return float(value), key
    return None


def _curves(cas: str) -> list[VapourPressure]:
    """Every vapour-pressure curve chemicals carries for ``cas``, in order of preference."""
    import chemicals.vapor_pressure as vp

    out = []

    def row(name):
        df = getattr(vp, name)
        return df.loc[cas] if cas in df.index else None

    r = row("Psat_data_WagnerMcGarry")
    if r is not None:
        out.append(VapourPressure("wagner", (r.Tc, r.Pc, r.A, r.B, r.C, r.D, 3.0, 6.0),
                                  r.Tmin, r.Tc, "vp-wagner-mcgarry"))
    r = row("Psat_data_WagnerPoling")
    if r is not None and not math.isnan(r.Tmin):
        out.append(VapourPressure("wagner", (r.Tc, r.Pc, r.A, r.B, r.C, r.D, 2.5, 5.0),
                                  r.Tmin, r.Tmax, "vp-wagner-poling"))
    r = row("Psat_data_Perrys2_8")
    if r is not None:
        out.append(VapourPressure("dippr101", (r.C1, r.C2, r.C3, r.C4, r.C5),
                                  r.Tmin, r.Tmax, "vp-perry"))
    r = row("Psat_data_VDI_PPDS_3")
    if r is not None:
        out.append(VapourPressure("wagner", (r.Tc, r.Pc, r.A, r.B, r.C, r.D, 2.5, 5.0),
                                  r.Tm, r.Tc, "vp-vdi-ppds"))
    r = row("Psat_data_AntoinePoling")
    if r is not None:
        out.append(VapourPressure("antoine", (r.A * LN10, r.B * LN10, r.C),
                                  r.Tmin, r.Tmax, "vp-antoine-poling"))
    r = row("Psat_data_Alcock_elements")
    if r is not None:
        out.append(VapourPressure("dippr101", (r.A, r.B, r.C, r.D, r.E),
                                  r.Tmin, r.Tmax, "vp-alcock"))
    r = row("Psat_data_Landolt_Antoine")
    if r is not None:
        out.append(VapourPressure("antoine", (r.A, r.B, r.C), r.Tmin, r.Tmax, "vp-landolt"))
    return out


def _normal_boiling(curve: VapourPressure) -> float | None:
    """Where the curve reaches 1 atm inside its range, or None."""
    from scipy.optimize import brentq

    def f(T):
        return curve.ln_p(T) - math.log(NORMAL_PRESSURE)

    a, b = curve.t_min, curve.t_max * (1 - 1e-9)
    fa, fb = f(a), f(b)
    if not (math.isfinite(fa) and math.isfinite(fb)) or fa * fb > 0:
        return None
    return brentq(f, a, b, xtol=1e-9)


def normal_points(cas: str) -> tuple[tuple[float, str] | None, tuple[float, str] | None]:
    """(melting point, source key) and (normal boiling point, source key), each or None."""
    from chemicals import phase_change as pc

    return (_point(pc.Tm, pc.Tm_methods, _TM_METHODS, cas),
            _point(pc.Tb, pc.Tb_methods, _TB_METHODS, cas))


def phase_data(cas: str | None, phase: str, form: str | None = None
               ) -> tuple[PhaseData | None, str]:
    """Phase boundaries of ``cas`` for a record in ``phase``, and a note on their choice."""
    if not cas:
        return None, ""
    tm, tb = normal_points(cas)
    curve, note = None, ""
    if tm is not None and tb is not None and abs(tm[0] - tb[0]) < SAME_POINT_K:
        note = (f"the tables give {tm[0]:.2f} K as both melting and boiling point (a "
                "decomposition temperature?): the boiling point is not used")
        tb = None
    if phase in ("g", "l"):
        for c in _curves(cas):
            t_curve = _normal_boiling(c)
            if t_curve is None:
                continue
            if tb is None:
                tb, curve = (round(t_curve, 3), c.source), c
                note = "normal boiling point from the vapour-pressure curve"
                break
            if abs(t_curve - tb[0]) <= TB_AGREEMENT_K:
                curve = c
                break
            note = (f"vapour-pressure curve {c.source} skipped: it gives {t_curve:.2f} K at "
                    f"1 atm against the tabulated {tb[0]:.2f} K")
    form_range = FORM_RANGES.get((cas, form)) if form else None
    if tm is None and tb is None and form_range is None:
        return None, note
    sources = [("melting point", tm[1])] if tm else []
    sources += [("boiling point", tb[1])] if tb else []
    sources += [("form range", "allotropes-memory")] if form_range else []
    pd = PhaseData(t_melt=tm[0] if tm else None, t_boil=tb[0] if tb else None,
                   vapour_pressure=curve, form_range=form_range, sources=tuple(sources))
    if phase == "s" and pd.t_boil is not None and not pd.sublimes:
        pd = PhaseData(pd.t_melt, None, None, pd.form_range, None,
                       tuple(s for s in sources if s[0] != "boiling point"))
    return pd, note


def solvent_phase_data(water: PhaseData) -> PhaseData:
    """Boundaries of an aqueous species: those of its solvent, liquid water."""
    return PhaseData(water.t_melt, water.t_boil, water.vapour_pressure, None, "water",
                     water.sources)


__all__ = ["SOURCES", "FORM_RANGES", "normal_points", "phase_data", "solvent_phase_data"]
