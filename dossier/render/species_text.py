"""A species record described for people: the lines of ``dossier species QUERY``."""
from __future__ import annotations

from dossier.chem.phases import PHASE_NAMES
from dossier.constants import P_STANDARD, T_REF, ZERO_CELSIUS
from dossier.engine.phases import describe_range, stable_range
from dossier.engine.settings import DEFAULT, MethodSettings
from dossier.library.record import SpeciesRecord

_MODEL_NAMES = {"nasa7": "NASA 7-coefficient polynomials", "shomate": "Shomate equation",
                "constant-cp": "constant Cp"}


def _fmt(x: float, digits: int = 3) -> str:
    if abs(x) < 0.5 * 10.0**-digits:
        x = 0.0  # no "−0.000"
    text = f"{x:,.{digits}f}".replace(",", " ")
    return text.replace("-", "−")


def _krange(lo: float, hi: float) -> str:
    return f"{lo:g}–{hi:g} K"


def _kc(T: float) -> str:
    return f"{T:.2f} K ({T - ZERO_CELSIUS:.2f} °C)"


#: What a model's temperature range is, in the words every surface uses.
DATA_RANGE_MEANING = "where the data hold; it says nothing about which phase is stable"

_CURVE_NAMES = {"antoine": "Antoine equation", "wagner": "Wagner equation",
                "dippr101": "DIPPR equation 101"}


def phase_lines(record: SpeciesRecord, settings: MethodSettings = DEFAULT
                ) -> list[tuple[str, str]]:
    """Labelled lines on the record's phase boundaries and where its phase is stable at 1 bar.

    The model's temperature range is its *data range* (where the fit holds), never a
    statement about phase stability; that comes only from the phase boundaries.
    """
    lines: list[tuple[str, str]] = []
    pd = record.phase_data
    if pd is None:
        return [("phase boundaries", "none known for this record, so the dossier cannot "
                                     "check which phase is stable")]
    whose = " of the solvent, " + pd.solvent if pd.solvent else ""
    if pd.t_melt is not None:
        lines.append((f"melting point{whose}",
                      f"{_kc(pd.t_melt)} at 1 atm ({pd.source_of('melting point')})"))
    if pd.t_boil is not None:
        what = "sublimation point" if pd.sublimes else "normal boiling point"
        lines.append((f"{what}{whose}",
                      f"{_kc(pd.t_boil)} at 1 atm ({pd.source_of('boiling point')})"))
    vp = pd.vapour_pressure
    if vp is not None:
        lines.append((f"vapour pressure{whose}",
                      f"{_CURVE_NAMES[vp.kind]}, {vp.t_min:g}–{vp.t_max:g} K ({vp.source})"))
    if pd.form_range is not None:
        lo, hi = pd.form_range
        where = " and ".join(w for w in (f"above {_kc(lo)}" if lo is not None else "",
                                         f"below {_kc(hi)}" if hi is not None else "") if w)
        lines.append(("solid form", f"one of several solid forms, the stable one only {where} "
                                    f"({pd.source_of('form range')})"))
    sr = stable_range(record.phase, pd, P_STANDARD,
                      normal_pressure=settings.normal_boiling_pressure_Pa,
                      trouton=settings.trouton_entropy_J_molK,
                      extrapolation=settings.vapour_pressure_extrapolation)
    where = describe_range(sr, sources=False)
    if sr is None or sr.never:
        lines.append(("stable phase at 1 bar", where))
    elif pd.solvent:
        lines.append(("solvent at 1 bar", f"{pd.solvent} is liquid {where}, so the dissolved "
                                          "species exists only there"))
    else:
        lines.append(("stable phase at 1 bar",
                      f"the {PHASE_NAMES[record.phase]} is the stable phase {where}"))
    return lines


def describe(record: SpeciesRecord) -> list[tuple[str, str]]:
    """Labelled lines describing a record (for the ``dossier species`` command)."""
    m = record.model
    model = f"{_MODEL_NAMES[m.kind]}, {_krange(m.t_min, m.t_max)}"
    if m.breakpoints:
        model += f" (segments join at {', '.join(f'{b:g}' for b in m.breakpoints)} K)"
    extrap = "" if m.in_range(T_REF) else " (extrapolated: 298.15 K is outside the model range)"
    lines = [
        ("name", record.name),
        ("id", record.id),
        ("formula", f"{record.formula}, M = {record.molar_mass:.3f} g/mol"),
        ("phase", PHASE_NAMES[record.phase]),
    ]
    if record.aliases:
        lines.append(("aliases", ", ".join(record.aliases)))
    if record.cas:
        lines.append(("CAS", record.cas))
    lines.append(("model", model))
    lines.append(("data range", f"{_krange(m.t_min, m.t_max)}: {DATA_RANGE_MEANING}"))
    lines += phase_lines(record)
    lines += [
        ("ΔfH°(298.15 K)", f"{_fmt(record.hf298 / 1000)} kJ/mol{extrap}"),
        ("S°(298.15 K)", f"{_fmt(record.s298)} J/(mol·K){extrap}"),
        ("Cp(298.15 K)", f"{_fmt(float(m.cp(T_REF)))} J/(mol·K){extrap}"),
        ("source", record.source),
    ]
    if record.note:
        lines.append(("note", record.note))
    if record.uncertainty:
        parts = []
        for key, value in record.uncertainty:
            if key.startswith("hf") or key.startswith("h"):
                parts.append(f"{key} ± {_fmt(value / 1000)} kJ/mol")
            else:
                parts.append(f"{key} ± {_fmt(value)} J/(mol·K)")
        lines.append(("uncertainty", "; ".join(parts)))
    return lines


__all__ = ["DATA_RANGE_MEANING", "describe", "phase_lines"]
