"""Plain-text rendering of an assessment for the terminal (`dossier evaluate`)."""
from __future__ import annotations

from dossier.render.intervals import class_text, interval_text, stated_text
from dossier.model.assessment import Assessment, Safety, Thermodynamics
from dossier.temperature import kelvin_celsius


def _T(T: float) -> str:
    return kelvin_celsius(T, 2)


def _opt(value, fmt: str, unit: str = "") -> str:
    return "not assessed" if value is None else (format(value, fmt) + (f" {unit}" if unit else ""))


def _thermo_lines(t: Thermodynamics) -> list[str]:
    """Reaction, window, standard values, crossovers and the profile table."""
    out: list[str] = []
    out.append(f"reaction   {t.reaction}")
    out.append(f"window     {_T(t.window_K[0])} to {_T(t.window_K[1])} at {t.pressure_bar:g} bar")
    out.append(f"at 298.15 K: ΔH° = {t.dH298_kJ_mol:.2f} kJ/mol, ΔS° = {t.dS298_J_molK:.2f} J/(mol·K), "
               f"ΔG° = {t.dG298_kJ_mol:.2f} kJ/mol")
    if t.crossovers:
        for c in t.crossovers:
            where = "inside" if t.window_K[0] <= c.T <= t.window_K[1] else "outside"
            out.append(f"crossover  ΔG° = 0 at {_T(c.T)}, {c.direction} ({where} the window)")
    else:
        out.append(f"crossover  none between {t.data_range_K[0]:.0f} and {t.data_range_K[1]:.0f} K "
                   "(the data range examined)")
    out.append("")
    head = (f"{'T/K':>8} {'ΔH°/kJ mol-1':>13} {'ΔS°/J mol-1K-1':>15} {'ΔG°/kJ mol-1':>13} "
            f"{'ln K':>10} {'ΔS_surr':>10} {'ΔS_univ':>10} {'q_surr/kJ':>10} {'X_eq':>8}")
    out.append(head)
    out.append("-" * len(head))
    for r in t.profile:
        flag = (" *" if r.extrapolated else "") + (" <" if r.requested else "")
        out.append(f"{r.T_K:8.2f} {r.dH_kJ_mol:13.3f} {r.dS_J_molK:15.3f} {r.dG_kJ_mol:13.3f} "
                   f"{r.lnK:10.3f} {r.dS_surr_J_molK:10.2f} {r.dS_univ_J_molK:10.2f} "
                   f"{r.q_surr_kJ_mol:10.3f} {r.conversion:8.4f}{flag}")
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
        parts = ", ".join(f"{m} x {x:.4f} γ {g:.4f}"
                          for m, x, g in zip(t.solution_members, st.x, st.gamma))
        out.append(f"           at {_T(st.T_K)}: {parts}")
    return out


def _safety_lines(s: Safety) -> list[str]:
    """The cooling-failure scenario: heat, entropy and the figures of the scenario."""
    out: list[str] = ["", "Thermal safety (cooling-failure scenario)"]
    sc = s.scale
    if sc:
        out.append(f"  reaction enthalpy used   {sc.enthalpy_used_kJ_mol:.1f} kJ/mol ({sc.enthalpy_origin}"
                   + (f"; computed {sc.enthalpy_computed_kJ_mol:.1f}" if sc.enthalpy_origin == "measured" else "")
                   + ")")
        out.append(f"  heat released per batch  {sc.heat_released_kJ:,.0f} kJ ({sc.heat_released_kJ_per_kg:.1f} kJ/kg)")
        out.append(f"  entropy per batch        system {sc.entropy_system_kJ_per_K:,.2f} kJ/K, surroundings "
                   f"{sc.entropy_surroundings_kJ_per_K:,.2f} kJ/K, universe {sc.entropy_universe_kJ_per_K:,.2f} kJ/K")
        out.append(f"                           {sc.entropy_reading}")
    out.append(f"  adiabatic rise ΔT_ad     {_opt(s.adiabatic_rise_K, '.1f', 'K')}"
               + (f" (severity {s.severity})" if s.severity else ""))
    out.append(f"  MTSR                     {_T(s.mtsr_K) if s.mtsr_K else 'not assessed'}"
               + _within(s.mtsr_interval_K, "K"))
    out.append(f"  MTT                      {_T(s.mtt_K) if s.mtt_K else 'not given'}")
    out.append(f"  TD24                     {_T(s.td24_K) + ' (' + s.td24_origin + ')' if s.td24_K else 'not assessed'}"
               + _within(s.td24_interval_K, "K"))
    out.append(f"  TMRad at MTSR            {_opt(s.tmrad_at_mtsr_h, '.1f', 'h')}"
               + (f" (probability {s.probability})" if s.probability else "")
               + _within(s.tmrad_at_mtsr_interval_h, "h"))
    out.append(f"  criticality class        {class_text(s)}")
    out.append(f"  after decomposition      {_T(s.final_temperature_K) if s.final_temperature_K else 'not assessed'}")
    out.append(f"  cooling margin           {_opt(s.cooling_margin_kW, '.1f', 'kW')}")
    no_gas = sc is not None and sc.gas_mol <= 0
    out.append("  pressure at MTSR         " + ("no gas released" if no_gas else
                                                _opt(s.pressure_at_mtsr_bar, '.2f', 'bar')))
    for fig, miss in s.not_assessed:
        out.append(f"  not assessed: {fig} — needs {', '.join(miss)}")
    for n in s.notes:
        out.append(f"  note: {n}")
    if stated_text(s):
        out.append(f"  uncertainty: {stated_text(s)}")
    return out


def _within(pair, unit: str) -> str:
    text = interval_text(pair, unit)
    return f"; {text}" if text else ""


def _variant_lines(a: Assessment) -> list[str]:
    """Each what-if variant in one block: what it changes, its class and key figures."""
    out: list[str] = []
    for v in a.variants:
        s = v.safety
        worst = max(v.findings, key=lambda f: f.rank).severity if v.findings else "none"
        out += ["", f"Variant: {v.name}",
                "  changes                  " + "; ".join(f"{k} = {val}" for k, val in v.changes),
                f"  MTSR                     {_T(s.mtsr_K) if s.mtsr_K else 'not assessed'}"
                + _within(s.mtsr_interval_K, "K"),
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
