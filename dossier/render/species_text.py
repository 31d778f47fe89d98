"""A species record described for people: the lines of ``dossier species QUERY``."""
from __future__ import annotations

from dossier.chem.phases import PHASE_NAMES
from dossier.constants import T_REF
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
    if record.stable_range:
        lines.append(("stable at 1 bar", _krange(*record.stable_range)))
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


__all__ = ["describe"]
