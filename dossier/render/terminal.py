"""Plain-text rendering of an assessment for the terminal (`dossier evaluate`).

Every number goes through the number policy (:mod:`dossier.number_policy`) and
every phrase the dossier page shows as well comes from
:mod:`dossier.render.phrases`, so the terminal and the page say the same.
"""
from __future__ import annotations

from dossier import number_policy as policy
from dossier.model.assessment import Assessment, Safety, Thermodynamics
from dossier.render.intervals import class_text, stated_text
from dossier.render.phrases import crossover_text, not_assessed_rows, safety_rows, temperature_text
from dossier.temperature import kelvin_celsius

#: Decimals of the profile table's columns (each column reads to one step); the dossier
#: page's table uses the same.
PROFILE_DECIMALS = {"T": 2, "dH": 1, "dS": 1, "dG": 1, "lnK": 2, "dS_surr": 1, "dS_univ": 1,
                    "q_surr": 1, "X": 2}


def _T(T: float) -> str:
    return kelvin_celsius(T)


def _col(x: float, key: str, width: int) -> str:
    return policy.fixed(x, PROFILE_DECIMALS[key]).rjust(width)


def _thermo_lines(t: Thermodynamics) -> list[str]:
    """Reaction, window, standard values, crossovers and the profile table."""
    out: list[str] = []
    out.append(f"reaction   {t.reaction}")
    out.append(f"window     {_T(t.window_K[0])} to {_T(t.window_K[1])} at "
               f"{policy.plain(t.pressure_bar)}{policy.UNIT_SPACE}bar")
    out.append(f"at 298.15 K: ΔH° = {policy.quantity(t.dH298_kJ_mol, 'kJ/mol')}, "
               f"ΔS° = {policy.quantity(t.dS298_J_molK, 'J/(mol·K)')}, "
               f"ΔG° = {policy.quantity(t.dG298_kJ_mol, 'kJ/mol')}")
    out.append(f"crossover  {crossover_text(t)}")
    out.append("")
    head = (f"{'T/K':>8} {'ΔH°/kJ mol-1':>13} {'ΔS°/J mol-1K-1':>15} {'ΔG°/kJ mol-1':>13} "
            f"{'ln K':>10} {'ΔS_surr':>10} {'ΔS_univ':>10} {'q_surr/kJ':>10} {'X_eq/%':>8}")
    out.append(head)
    out.append("-" * len(head))
    for r in t.profile:
        flag = (" *" if r.extrapolated else "") + (" <" if r.requested else "")
        out.append(f"{_col(r.T_K, 'T', 8)} {_col(r.dH_kJ_mol, 'dH', 13)} "
                   f"{_col(r.dS_J_molK, 'dS', 15)} {_col(r.dG_kJ_mol, 'dG', 13)} "
                   f"{_col(r.lnK, 'lnK', 10)} {_col(r.dS_surr_J_molK, 'dS_surr', 10)} "
                   f"{_col(r.dS_univ_J_molK, 'dS_univ', 10)} {_col(r.q_surr_kJ_mol, 'q_surr', 10)} "
                   f"{_col(r.conversion * 100, 'X', 8)}{flag}")
    out.append("ΔS_surr = −ΔH°/T and ΔS_univ = ΔS° + ΔS_surr in J/(mol·K); q_surr = −ΔH° per mole "
               f"of reaction; X_eq = equilibrium conversion of {t.basis}"
               + (" (all or nothing: " + t.equilibrium_note + ")" if t.equilibrium_mode == "all-or-nothing" else "")
               + ". * extrapolated, < requested with --at.")
    out.extend(_solution_lines(t))
    return out


def _solution_lines(t: Thermodynamics) -> list[str]:
    """The liquid solution of the equilibrium: its model, groups and state at the ends."""
    if not t.solution_model:
        return [f"liquids    {t.solution_note}"] if t.solution_note else []
    out = [f"liquids    one solution: {t.solution_model_text}", f"           {t.solution_note}"]
    for member, groups, origin in t.solution_groups:
        out.append(f"           {member}: {groups} ({origin})")
    for st in t.solution_states:
        parts = ", ".join(f"{m} x {policy.fixed(x, 4)} γ {policy.fixed(g, 4)}"
                          for m, x, g in zip(t.solution_members, st.x, st.gamma))
        out.append(f"           at {_T(st.T_K)}: {parts}")
    return out


def _safety_lines(s: Safety) -> list[str]:
    """The cooling-failure scenario: heat, entropy and the figures of the scenario."""
    out: list[str] = ["", "Thermal safety (cooling-failure scenario)"]
    sc = s.scale
    if sc:
        q = policy.quantity
        out.append(f"  reaction enthalpy used   {q(sc.enthalpy_used_kJ_mol, 'kJ/mol')} ({sc.enthalpy_origin}"
                   + (f"; computed {q(sc.enthalpy_computed_kJ_mol, 'kJ/mol')}"
                      if sc.enthalpy_origin == "measured" else "") + ")")
        out.append(f"  heat released per batch  {q(sc.heat_released_kJ, 'kJ')} "
                   f"({q(sc.heat_released_kJ_per_kg, 'kJ/kg')})")
        out.append(f"  entropy per batch        system {q(sc.entropy_system_kJ_per_K, 'kJ/K')}, "
                   f"surroundings {q(sc.entropy_surroundings_kJ_per_K, 'kJ/K')}, "
                   f"universe {q(sc.entropy_universe_kJ_per_K, 'kJ/K')}")
        out.append(f"                           {sc.entropy_reading}")
    for label, text in safety_rows(s):
        out.append(f"  {label:<24} {text}")
    for fig, needs in not_assessed_rows(s):
        out.append(f"  not assessed: {fig} — needs {needs}")
    for n in s.notes:
        out.append(f"  note: {n}")
    if stated_text(s):
        out.append(f"  uncertainty: {stated_text(s)}")
    return out


def _variant_lines(a: Assessment) -> list[str]:
    """Each what-if variant in one block: what it changes, its class and key figures."""
    out: list[str] = []
    for v in a.variants:
        s = v.safety
        worst = max(v.findings, key=lambda f: f.rank).severity if v.findings else "none"
        out += ["", f"Variant: {v.name}",
                "  changes                  " + "; ".join(f"{k} = {val}" for k, val in v.changes),
                f"  MTSR                     {temperature_text(s.mtsr_K, s.mtsr_interval_K)}",
                f"  criticality class        {class_text(s)}",
                f"  most severe finding      {worst}"]
    return out


def _finding_lines(a: Assessment) -> list[str]:
    """Findings with their sources, the data notes not already shown, and the cautions."""
    out: list[str] = []
    if a.findings:
        out.append("")
        out.append("Findings")
        for f in a.findings:
            out.append(f"  [{f.severity}] {f.text}")
            out.append(f"      source: {f.source}")
    shown = {f.text for f in a.findings}
    rest = [w for w in a.warnings if w not in shown]
    if rest:
        out.append("")
        out.append("Data notes")
        for w in rest:
            out.append(f"  - {w}")
    out.append("")
    out.append("Cautions")
    for c in a.cautions:
        out.append(f"  - {c}")
    return out


def render_assessment(a: Assessment) -> str:
    out = [f"{a.case_id} (revision {a.revision}, {a.status}): {a.title}"]
    out.extend(_thermo_lines(a.thermo))
    if a.safety is not None:
        out.extend(_safety_lines(a.safety))
    out.extend(_variant_lines(a))
    out.extend(_finding_lines(a))
    return "\n".join(out)


__all__ = ["render_assessment"]
