"""The register and every table of a dossier as CSV, for the audits boards run.

Built from the same views as the pages (:mod:`dossier.render.views`), so a CSV
cell and the page show the same number.  Conventions:

* RFC 4180 CSV (comma, double quotes, CRLF line ends), UTF-8 with a byte-order
  mark so that spreadsheet programs read the degree and Greek signs right;
* one header row; the unit of a column is in its head, after " / " ("T / K",
  "ΔrH° / (kJ/mol)"), and the cells are plain decimals in that unit (no thousands
  separators, no exponents, "-" for minus), rounded to 15 significant digits so
  that a unit conversion leaves no float noise; an empty cell is a value the case
  does not give or the method could not assess; yes/no for flags;
* lists within a cell are joined with "; ".

Site paths: ``register.csv`` beside ``index.html``; ``cases/<slug>-<table>.csv``
for each table of :data:`CASE_TABLES`, every table always present (a header
alone when the case has no row for it), so an audit script finds the same
files for every case.
"""
from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass
from typing import Callable, Sequence

import numpy as np

from dossier.constants import ZERO_CELSIUS
from dossier.render.views import CaseView, crossover_summary, worst_finding


@dataclass(frozen=True)
class Table:
    """A table as the CSV holds it: column heads and rows of cell text."""

    heads: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]


def cell(value: object) -> str:
    """One CSV cell: floats as plain decimals, None empty, flags yes/no."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (float, np.floating)):
        x = float(value)
        if not math.isfinite(x):
            return repr(x)
        # 15 significant digits: drops the noise of a unit conversion (3800 J/(kg K)
        # shown in kJ/(kg K) is 3.8, not 3.8000000000000003), keeps far more than
        # any input carries
        return np.format_float_positional(float(f"{x:.15g}") + 0.0, trim="-", unique=True)
    if isinstance(value, (tuple, list)):
        return "; ".join(cell(v) for v in value)
    return str(value)


def _table(heads: Sequence[str], rows: Sequence[Sequence[object]]) -> Table:
    return Table(tuple(heads), tuple(tuple(cell(v) for v in row) for row in rows))


def csv_bytes(table: Table) -> bytes:
    """``table`` as the bytes of a CSV file (see the module's conventions)."""
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\r\n")
    writer.writerow(table.heads)
    writer.writerows(table.rows)
    return ("\ufeff" + out.getvalue()).encode("utf-8")


def _scaled(x: float | None, factor: float) -> float | None:
    return None if x is None else x * factor


# --------------------------------------------------------------------------
# The register

REGISTER_HEADS = (
    "case", "title", "revision", "status", "owner", "gate", "meeting", "reaction",
    "ΔrG° < 0 in the window", "crossovers", "ΔrH°(298.15 K) / (kJ/mol)",
    "ΔrG°(298.15 K) / (kJ/mol)", "adiabatic rise / K", "MTSR / K", "MTT / K", "TD24 / K",
    "criticality class", "most severe finding: severity", "most severe finding",
    "verdicts", "signatures valid", "signatures", "changed since a verdict",
    "ready for its status", "readiness problems", "integrity digest",
    "library version", "tool version")


def register_table(views: Sequence[CaseView]) -> Table:
    """One row per case, in the order given."""
    rows = []
    for v in views:
        a, s, d = v.assessment, v.assessment.safety, v.decisions
        w = worst_finding(a)
        sigs = d.signatures if d else ()
        ready = d.readiness if d else None
        rows.append((
            a.case_id, a.title, a.revision, a.status, a.owner, a.gate, a.meeting,
            a.thermo.reaction, a.thermo.favourable, crossover_summary(a),
            a.thermo.dH298_kJ_mol, a.thermo.dG298_kJ_mol,
            s.adiabatic_rise_K if s else None, s.mtsr_K if s else None,
            s.mtt_K if s else None, s.td24_K if s else None,
            s.criticality_class if s else None, w.severity if w else None,
            w.text if w else None,
            [f"{r.verdict} ({r.name}, {r.date.isoformat()})" for r in v.reviews],
            sum(1 for g in sigs if g.status == "valid"), len(sigs),
            d.changed_since_decided if d else None,
            ready.ready if ready else None,
            [str(p) for p in ready.problems] if ready else None,
            v.integrity.digest if v.integrity else None, a.library_version, a.tool_version))
    return _table(REGISTER_HEADS, rows)


# --------------------------------------------------------------------------
# The tables of one dossier

def species_table(v: CaseView) -> Table:
    heads = ("as written", "ν", "record", "name", "formula", "phase", "model",
             "data range from / K", "data range to / K", "stable phase at the case pressure",
             "ΔfH°(298.15 K) / (kJ/mol)", "S°(298.15 K) / (J/(mol·K))",
             "Cp°(298.15 K) / (J/(mol·K))", "molar mass / (g/mol)", "case-local", "source",
             "missing properties")
    rows = [(u.key, float(u.nu), u.record_id, u.name, u.formula, u.phase, u.model, u.t_min_K,
             u.t_max_K, u.stable_phase, u.hf298_kJ_mol, u.s298_J_molK, u.cp298_J_molK,
             u.molar_mass_g_mol, u.local, u.source, list(u.missing))
            for u in v.assessment.species]
    return _table(heads, rows)


def properties_table(v: CaseView) -> Table:
    heads = ("T / K", "t / °C", "ΔrH° / (kJ/mol)", "ΔrS° / (J/(mol·K))", "ΔrG° / (kJ/mol)",
             "ln K", "equilibrium conversion / %", "q_surr / (kJ/mol)",
             "ΔS_surr / (J/(mol·K))", "ΔS_univ / (J/(mol·K))", "extrapolated")
    rows = [(r.T_K, r.T_K - ZERO_CELSIUS, r.dH_kJ_mol, r.dS_J_molK, r.dG_kJ_mol, r.lnK,
             r.conversion * 100, r.q_surr_kJ_mol, r.dS_surr_J_molK, r.dS_univ_J_molK,
             r.extrapolated) for r in v.assessment.thermo.profile]
    return _table(heads, rows)


def solution_table(v: CaseView) -> Table:
    t = v.assessment.thermo
    heads = ["liquid"]
    for st in t.solution_states:
        heads += [f"x at {cell(st.T_K)} K", f"γ at {cell(st.T_K)} K"]
    rows = []
    for i, member in enumerate(t.solution_members):
        row: list[object] = [member]
        for st in t.solution_states:
            row += [st.x[i], st.gamma[i]]
        rows.append(row)
    return _table(heads, rows)


INPUT_HEADS = (
    "basis", "amount / kg", "amount / mol", "reaction mass / kg", "cp / (kJ/(kg·K))",
    "process temperature / K", "accumulation / %", "feed time / h", "MTT / K",
    "free volume / m³", "design pressure / bar", "cooling U·A / (kW/K)",
    "coolant temperature / K", "decomposition energy / (J/g)", "decomposition onset / K",
    "TD24 given / K", "activation energy / (kJ/mol)", "heat-release rate / (W/kg)",
    "heat-release rate at / K", "measured ΔrH / (kJ/mol)",
    "measured ΔrH uncertainty / (kJ/mol)", "measured by", "does not apply")


def inputs_table(v: CaseView) -> Table:
    """The safety inputs of the case file, one row, in the units the page shows."""
    c, ve, d, m = v.charge, v.vessel, v.decomposition, v.measured
    ready = v.decisions.readiness if v.decisions else None
    row = (
        c.basis if c else None,
        c.amount if c and c.amount_kind == "mass" else None,
        c.amount if c and c.amount_kind == "amount" else None,
        c.mass if c else None, _scaled(c.cp, 1e-3) if c else None,
        c.process_temperature if c else None, _scaled(c.accumulation, 100) if c else None,
        _scaled(c.feed_time, 1 / 3600) if c else None,
        ve.mtt if ve else None, ve.free_volume if ve else None,
        _scaled(ve.design_pressure, 1e-5) if ve else None,
        _scaled(ve.cooling_ua, 1e-3) if ve else None, ve.coolant_temperature if ve else None,
        _scaled(d.energy, 1e-3) if d else None, d.onset if d else None,
        d.td24 if d else None, _scaled(d.activation_energy, 1e-3) if d else None,
        d.rate_power if d else None, d.rate_temperature if d else None,
        _scaled(m.reaction_enthalpy, 1e-3) if m else None,
        _scaled(m.uncertainty, 1e-3) if m else None, m.method if m else None,
        [f"[{t}]: {why}" for t, why in ready.excused] if ready else None)
    return _table(INPUT_HEADS, [row])


SAFETY_HEADS = (
    "adiabatic rise / K", "severity", "MTSR / K", "MTT / K", "TD24 / K", "TD24 from",
    "TMRad at the MTSR / h", "probability", "criticality class", "criticality reason",
    "decomposition rise / K", "final temperature / K", "release rate / kW",
    "cooling capacity / kW", "cooling margin / kW", "cooling sufficient",
    "gas evolved (0 °C, 1.01325 bar) / m³", "pressure at the MTSR / bar",
    "design pressure / bar", "exceeds the design pressure", "heat released / kJ",
    "heat released / (kJ/kg)", "reaction enthalpy used / (kJ/mol)", "enthalpy from")


def safety_table(v: CaseView) -> Table:
    """The results of the runaway scenario, one row (none when it was not run)."""
    s = v.assessment.safety
    if s is None:
        return _table(SAFETY_HEADS, [])
    sc = s.scale
    row = (s.adiabatic_rise_K, s.severity, s.mtsr_K, s.mtt_K, s.td24_K, s.td24_origin,
           s.tmrad_at_mtsr_h, s.probability, s.criticality_class, s.criticality_reason,
           s.decomposition_rise_K, s.final_temperature_K, s.release_rate_kW,
           s.cooling_capacity_kW, s.cooling_margin_kW, s.cooling_sufficient,
           s.gas_volume_normal_m3, s.pressure_at_mtsr_bar, s.design_pressure_bar,
           s.pressure_exceeds_design, sc.heat_released_kJ if sc else None,
           sc.heat_released_kJ_per_kg if sc else None,
           sc.enthalpy_used_kJ_mol if sc else None, sc.enthalpy_origin if sc else None)
    return _table(SAFETY_HEADS, [row])


def not_assessed_table(v: CaseView) -> Table:
    s = v.assessment.safety
    return _table(("figure", "missing inputs"),
                  [(what, list(missing)) for what, missing in (s.not_assessed if s else ())])


def findings_table(v: CaseView) -> Table:
    return _table(("rule", "severity", "finding", "source"),
                  [(f.rule, f.severity, f.text, f.source) for f in v.assessment.findings])


def energetics_table(v: CaseView) -> Table:
    s = v.assessment.safety
    return _table(("species", "oxygen balance / %", "max. decomposition energy / (J/g)",
                   "outcome", "reason", "groups"),
                  [(e.species, e.oxygen_balance_pct, e.max_decomposition_J_per_g,
                    e.screening_outcome, e.screening_reason, list(e.explosophores))
                   for e in (s.energetics if s else ())])


def reviews_table(v: CaseView) -> Table:
    """The verdicts recorded in the case file and the signed ones, one row each."""
    d = v.decisions
    recorded = {(r.name, r.date, r.verdict): r.status for r in (d.recorded if d else ())}
    rows = [("recorded", r.name, r.role, r.date.isoformat(), str(r.verdict), r.conditions,
             None, recorded.get((r.name, r.date.isoformat(), str(r.verdict)), "not checked"))
            for r in v.reviews]
    rows += [("signed", g.signer, g.role, g.date, g.verdict, g.conditions, g.revision,
              g.status) for g in (d.signatures if d else ())]
    return _table(("kind", "reviewer", "role", "date", "verdict", "conditions",
                   "revision signed", "record"), rows)


def readiness_table(v: CaseView) -> Table:
    ready = v.decisions.readiness if v.decisions else None
    rows = [(ready.status, p.line, p.key, p.message) for p in (ready.problems if ready else ())]
    return _table(("status", "line", "key", "what is needed"), rows)


def history_table(v: CaseView) -> Table:
    h = v.decisions.history if v.decisions else None
    rows = []
    for step in (h.steps if h else ()):
        for kind, changes in (("input", step.inputs), ("figure", step.figures)):
            rows += [(step.from_revision, step.to_revision, kind, c.what, c.before, c.after)
                     for c in changes]
        rows += [(step.from_revision, step.to_revision, "finding added", f, None, None)
                 for f in step.findings_added]
        rows += [(step.from_revision, step.to_revision, "finding removed", f, None, None)
                 for f in step.findings_removed]
    return _table(("from revision", "to revision", "kind", "what", "before", "after"), rows)


def integrity_table(v: CaseView) -> Table:
    ir = v.integrity
    rows = [] if ir is None else [
        ("integrity digest", ir.digest), ("case file", ir.case_file_digest),
        ("method settings", ir.settings_digest), ("library version", ir.library_version),
        ("tool version", ir.tool_version), ("format", ir.format),
        *((f"species {sid}", dg) for sid, dg in ir.species_digests)]
    return _table(("part", "SHA-256 or version"), rows)


#: Every table of a dossier: file-name part, what it holds, the function that makes it.
CASE_TABLES: tuple[tuple[str, str, Callable[[CaseView], Table]], ...] = (
    ("species", "data used: species and their records", species_table),
    ("properties", "reaction properties across the window", properties_table),
    ("solution", "the liquid solution at equilibrium", solution_table),
    ("inputs", "safety inputs from the case file", inputs_table),
    ("safety", "runaway scenario results", safety_table),
    ("not-assessed", "what could not be assessed", not_assessed_table),
    ("findings", "findings", findings_table),
    ("energetics", "energetic screening", energetics_table),
    ("reviews", "reviews and signed verdicts", reviews_table),
    ("readiness", "readiness for the board", readiness_table),
    ("history", "revision history", history_table),
    ("integrity", "integrity record", integrity_table),
)

#: (file-name part, what it holds), for the pages' links.
CASE_TABLE_NAMES: tuple[tuple[str, str], ...] = tuple((n, w) for n, w, _f in CASE_TABLES)


def case_csv_path(slug: str, name: str) -> str:
    return f"cases/{slug}-{name}.csv"


def case_csv_files(v: CaseView) -> dict[str, bytes]:
    """Every table of the dossier of ``v`` as a CSV file: site path -> bytes."""
    return {case_csv_path(v.slug, name): csv_bytes(make(v)) for name, _w, make in CASE_TABLES}


def register_csv_files(views: Sequence[CaseView]) -> dict[str, bytes]:
    """``register.csv``: one row per case, by case id."""
    return {"register.csv": csv_bytes(register_table(sorted(views, key=lambda v: v.id)))}


__all__ = ["Table", "cell", "csv_bytes", "register_table", "REGISTER_HEADS", "CASE_TABLES",
           "CASE_TABLE_NAMES", "case_csv_path", "case_csv_files", "register_csv_files",
           "species_table", "properties_table", "solution_table", "inputs_table",
           "safety_table", "not_assessed_table", "findings_table", "energetics_table",
           "reviews_table", "readiness_table", "history_table", "integrity_table"]
