"""Pages of the published site (and the HTML of the PDF packets) as strings.

Pure functions from views to HTML text: nothing here reads case files or
writes anything.  Templates (jinja2, autoescaped) live in the package
``dossier.templates``.  Free text from case files (titles, owners, gates,
review names and conditions, species names and sources) is escaped by the
templates; the narrative is Markdown, converted and then sanitised
(:mod:`dossier.render.markdown_html`).  HTML made in Python (chemistry,
mathematics) is built from escaped pieces only and then marked safe.

Page map (paths relative to the site root)::

    index.html                     the register of all cases
    methods.html                   formulas, methods, thresholds and sources
    cases/<slug>.html              the dossier of one case
    cases/<slug>-derivation.html   the symbolic route (Kirchhoff) of one case
    cases/<slug>.json              the assessment as JSON (data export)
    species/<slug>.html            one species record and the cases that use it
    guide/<page>.html              the user guide (dossier.render.guide)
    figures/<slug>/<name>.svg      figures (written by the build)
    packets/<slug>.pdf             the case packet
    packets/meeting-<date>.pdf     the packet of one review meeting
"""
from __future__ import annotations

import base64
import dataclasses
import functools
import hashlib
import math
from importlib.resources import files
from typing import Iterable, Sequence

from markupsafe import Markup

from dossier.assess import rules
from dossier.assess.evaluate import CAUTIONS
from dossier.chem.phases import PHASE_NAMES
from dossier.constants import P_STANDARD, R, T_REF, ZERO_CELSIUS
from dossier.engine import energetics, safety
from dossier.engine.decomposition import WATER_CHOICE
from dossier.engine.estimate import BENSON_SOURCE, JOBACK_SOURCE, LIQUID_SOURCE
from dossier.engine.settings import DEFAULT, POLICY_KEYS, MethodSettings
from dossier.model.findings import SEVERITIES
from dossier.render.chemistry import formula_html, key_html, reaction_html
from dossier.render.export import CASE_TABLE_NAMES
from dossier.render.markdown_html import narrative_html
from dossier.render.maths import KIRCHHOFF, METHODS_MATH, kirchhoff_assets, mathml
from dossier.render.intervals import (class_text, conversion_banded, interval_text,
                                      profile_banded, stated_text)
from dossier.render.numbers import given, num, pct, sig, sign_words, temp, unit, words
from dossier.render.phrases import (board_html, crossover_text, in_words, not_assessed_rows,
                                    safety_rows)
from dossier import number_policy
from dossier.render.views import (FAVOURABLE_WORDS, CaseView, FailedCase, MeetingView,
                                  SpeciesView, approval_mark, crossover_summary,
                                  open_conditions, review_record_status, signoff_roles,
                                  verdict_summary, worst_finding)

OPEN_STATUSES = ("submitted", "draft")
DECIDED_STATUSES = ("accepted", "accepted-with-conditions", "declined", "withdrawn")


# --------------------------------------------------------------------------
# The template environment

@functools.lru_cache(maxsize=1)
def environment():
    """The jinja2 environment (autoescape on, undefined names are errors)."""
    import jinja2

    root = files("dossier.templates")
    env = jinja2.Environment(loader=jinja2.FileSystemLoader(str(root)), autoescape=True,
                             undefined=jinja2.StrictUndefined, trim_blocks=True,
                             lstrip_blocks=True, keep_trailing_newline=True)
    env.filters.update(num=num, sig=sig, unit=unit, temp=temp, pct=pct, words=words,
                       reaction=reaction_html, key=key_html, formula=formula_html,
                       math=mathml, within=interval_text, board=_board, in_words=in_words, given=given,
                       signed=number_policy.signed, plain=number_policy.plain)
    env.globals.update(
        SEVERITIES=SEVERITIES, FAVOURABLE_WORDS=FAVOURABLE_WORDS, verdict_summary=verdict_summary,
        crossover_summary=crossover_summary, worst_finding=worst_finding,
        review_record_status=review_record_status, sign_words=sign_words,
        narrative_html=narrative_html, KIRCHHOFF=KIRCHHOFF, kirchhoff_assets=kirchhoff_assets,
        ZERO_CELSIUS=ZERO_CELSIUS, PHASE_NAMES=PHASE_NAMES, cautions=CAUTIONS,
        METHODS_MATH=METHODS_MATH, class_text=class_text, stated_text=stated_text,
        profile_banded=profile_banded, conversion_banded=conversion_banded, CSV_TABLES=CASE_TABLE_NAMES,
        crossover_text=crossover_text, safety_rows=safety_rows,
        not_assessed_rows=not_assessed_rows)
    return env


def _board(text) -> Markup:
    """The page form of an assessment text (:func:`phrases.board_html`), marked safe."""
    return Markup(board_html(text))


def render_template(template: str, **context) -> str:
    """One template of ``dossier.templates`` filled in."""
    return environment().get_template(template).render(**context)


def template_text(name: str) -> str:
    """A file of the templates package as text (CSS, scripts)."""
    return files("dossier.templates").joinpath(name).read_text(encoding="utf-8")


def script_hash(script: str) -> str:
    """The Content-Security-Policy source of an inline script: ``sha256-<base64>``."""
    return "sha256-" + base64.b64encode(hashlib.sha256(script.encode("utf-8")).digest()).decode()


def content_policy(scripts: Iterable[str] = ()) -> str:
    """The page's Content-Security-Policy: only our own files and our own inline scripts."""
    hashes = " ".join(f"'{script_hash(s)}'" for s in scripts)
    return ("default-src 'none'; img-src 'self'; style-src 'self'; "
            f"script-src {hashes or chr(39) + 'none' + chr(39)}; "
            "base-uri 'none'; form-action 'none'")


# --------------------------------------------------------------------------
# Pages

def render_register(cases: Sequence[CaseView], failed: Sequence[FailedCase] = (),
                    meetings: Sequence[MeetingView] = (), packets: bool = True,
                    search: str = "") -> str:
    """The register; ``packets`` says whether the PDF packets exist to be linked;
    ``search`` is the site's search index (:mod:`dossier.render.search`), if any."""
    open_cases = sorted((c for c in cases if c.assessment.status in OPEN_STATUSES),
                        key=lambda c: (OPEN_STATUSES.index(c.assessment.status),
                                       c.assessment.meeting or "9999", c.id))
    decided = sorted((c for c in cases if c.assessment.status not in OPEN_STATUSES),
                     key=lambda c: (DECIDED_STATUSES.index(c.assessment.status)
                                    if c.assessment.status in DECIDED_STATUSES else 99, c.id))
    script = template_text("filter.js")
    return render_template("register.html", root="", open_cases=open_cases, decided=decided,
                           failed=failed, meetings=meetings, count=len(cases),
                           filter_script=script, packets=packets, search_index=search,
                           csp=content_policy([script]), page_title="Register of cases")


def render_case_page(view: CaseView, packets: bool = True) -> str:
    a = view.assessment
    return render_template("case.html", root="../", v=view, a=a, print_mode=False,
                           packets=packets, csp=content_policy(),
                           page_title=f"{a.case_id}: {a.title}")


def render_derivation_page(view: CaseView) -> str:
    a = view.assessment
    return render_template("derivation.html", root="../", v=view, a=a, print_mode=False,
                           csp=content_policy(), page_title=f"{a.case_id}: derivation")


def render_species_page(view: SpeciesView) -> str:
    return render_template("species.html", root="../", s=view, r=view.record,
                           csp=content_policy(),
                           page_title=f"{view.record.name} ({view.record.phase})")


def policy_sources(settings: MethodSettings = DEFAULT) -> tuple[tuple[str, str], ...]:
    """(threshold with its value in force, its citation): the policy in force, each
    value a board may change with the board's source or the published default's."""
    changed = dict(settings.policy_sources)
    rows = [("Policy in force", settings.policy + (
        f"; it changes {len(changed)} of the published defaults, each with the board's "
        "source below" if changed else "; every threshold below is the published default"))]
    for name in POLICY_KEYS:
        label = SETTING_LABELS.get(name, name.replace("_", " "))
        mark = " (the board's value)" if name in changed else ""
        rows.append((f"{label}: {_setting_value(getattr(settings, name))}{mark}",
                     settings.source_of(name)))
    return tuple(rows)


def method_sources(settings: MethodSettings = DEFAULT) -> tuple[tuple[str, str], ...]:
    """(topic, source text) of every threshold table and method, with the bands in use,
    then the policy in force with the citation of each of its values."""
    return policy_sources(settings) + (
        ("Severity on the adiabatic temperature rise",
         safety.severity_source(settings.severity_bands_K)),
        ("Probability on TMRad at the MTSR", safety.probability_source(settings.probability_bands_h)),
        ("Criticality classes", safety.CRITICALITY_SOURCE),
        ("TMRad and TD24", safety.TMR_SOURCE),
        ("UN Appendix 6 screening", energetics.UN_SCREENING_SOURCE),
        ("Explosophore groups", energetics.GROUPS_SOURCE),
        ("Maximum decomposition energy: products", WATER_CHOICE),
        ("Standard-state thermodynamics", rules.THERMO_SOURCE),
        ("Estimates from a structure: Benson groups", BENSON_SOURCE),
        ("Estimates from a structure: Joback groups", JOBACK_SOURCE),
        ("Estimated liquids", LIQUID_SOURCE),
    )


def scale_rows(settings: MethodSettings = DEFAULT) -> tuple[tuple[str, str, str, str], ...]:
    """The severity and probability scales as (scale, low, medium, high) table rows."""
    (_l, _inf, s1), (_m, _s1, s2), _h = settings.severity_bands_K
    (_h2, _z, p1), (_m2, _p1, p2), _l2 = settings.probability_bands_h
    return (
        ("severity (ΔT<sub>ad</sub>)", f"below {s1:g} K", f"{s1:g}–{s2:g} K", f"above {s2:g} K"),
        ("probability (TMRad at the MTSR)", f"above {p2:g} h", f"{p1:g}–{p2:g} h",
         f"below {p1:g} h"),
    )


#: How the methods page names each method setting (unit in brackets); a setting
#: missing here is still listed, under its field name.
SETTING_LABELS: dict[str, str] = {
    "grid_steps_K": "profile grid: step widths tried (K)",
    "grid_min_step_K": "profile grid: smallest step (K)",
    "grid_max_rows": "profile grid: most rows",
    "crossover_scan_K": "crossover search: limits around the window (K)",
    "favourable_points": "points on which “favourable in the window” is judged",
    "equilibrium_model": "equilibrium model",
    "equilibrium_limited_below": "equilibrium-limited below this conversion",
    "activity_scan_points": "activity model: points along the extent scanned for a split",
    "unifac_range_K": "UNIFAC: temperatures of the fitted data (K)",
    "enthalpy_mismatch_fraction": "measured and computed ΔrH differ: more than this fraction",
    "enthalpy_mismatch_kJ_mol": "measured and computed ΔrH differ: or by more than (kJ/mol)",
    "energetic_species_J_per_g": "energetic species from a maximum decomposition energy of (J/g)",
    "severity_bands_K": "severity on ΔTad (K)",
    "probability_bands_h": "probability on TMRad at the MTSR (h)",
    "td24_time_s": "TMRad that defines TD24 (s)",
    "td24_agreement_K": "given TD24 and TD24 from kinetics agree within (K)",
    "gas_normal_T_K": "normal conditions for gas volumes: temperature (K)",
    "gas_normal_p_Pa": "normal conditions for gas volumes: pressure (Pa)",
    "severity_findings": "finding severity per severity level",
    "probability_findings": "finding severity per probability level",
    "criticality_findings": "finding severity per criticality class",
    "limit_findings": "finding severity when the MTSR reaches the MTT, when the process "
                      "temperature is outside the window, and when a figure's 95 % interval "
                      "crosses a boundary or limit",
    "pressure_severity_bands": "severity on the pressure at the MTSR, as a ratio to the "
                               "design pressure",
    "policy": "policy in force",
    "policy_sources": "the board's source of each value its policy changed",
    "un_energy_J_per_g": "UN Appendix 6: decomposition energy limit (J/g)",
    "un_onset_K": "UN Appendix 6: onset limit (K)",
    "un_oxygen_balance_pct": "UN Appendix 6: oxygen balance limit (%)",
    "decomposition_products": "decomposition products (name, library label, phase)",
    "normal_boiling_pressure_Pa": "pressure of the normal boiling point (Pa)",
    "trouton_entropy_J_molK": "Trouton entropy of vaporisation, where no vapour-pressure curve is known (J/(mol·K))",
    "vapour_pressure_extrapolation": "vapour-pressure curves followed past their range by this fraction",
    "estimate_benson_uncertainty": "Benson estimate: standard uncertainty (J/mol; J/(mol·K))",
    "estimate_benson_enthalpy_only": "Benson corrections that change only ΔfH°",
    "estimate_joback_errors": "Joback estimate: published mean absolute errors and deviations (SI units)",
    "estimate_joback_cp_relative": "Joback estimate: relative uncertainty of Cp°",
    "estimate_joback_min_ring": "Joback estimate: smallest ring accepted (atoms)",
    "estimate_joback_excluded": "Joback estimate: structures refused (measured far off)",
    "estimate_joback_range_K": "Joback estimate: temperature range of its Cp° (K)",
    "estimate_liquid_cp_relative": "estimated liquid: relative uncertainty of Cp° (range)",
    "estimate_liquid_max_reduced_T": "estimated liquid: highest reduced temperature accepted",
    "estimate_max_heavy_atoms": "estimates: most heavy atoms in a structure",
    "estimate_disagreement_u": "given and estimated values disagree beyond this many standard uncertainties",
    "uncertainty_samples": "uncertainty: draws of the Monte Carlo propagation",
    "uncertainty_seed": "uncertainty: seed of the draws (fixed, so builds repeat)",
    "uncertainty_coverage": "uncertainty: coverage of every interval, and of every stated ± value",
}


def _band(level: str, lo: float, hi: float) -> str:
    if lo == -math.inf:
        return f"{level} below {hi:g}"
    if hi == math.inf:
        return f"{level} above {lo:g}"
    return f"{level} {lo:g}–{hi:g}"


def _setting_value(value: object) -> str:
    if (isinstance(value, tuple) and value and all(
            isinstance(v, tuple) and len(v) == 3 and isinstance(v[1], float) for v in value)):
        return "; ".join(_band(*v) for v in value)
    if isinstance(value, float):
        return "−∞" if value == -math.inf else "∞" if value == math.inf else f"{value:g}"
    if isinstance(value, tuple):
        if value and all(isinstance(v, tuple) and len(v) == 2 for v in value):
            return "; ".join(f"{_setting_value(a)} → {_setting_value(b)}" for a, b in value)
        if value and all(isinstance(v, tuple) for v in value):
            return "; ".join(" ".join(_setting_value(x) for x in v) for v in value)
        return ", ".join(_setting_value(v) for v in value)
    return str(value)


def setting_rows(settings: MethodSettings = DEFAULT) -> tuple[tuple[str, str], ...]:
    """(label, value) of the constants and every method setting, as a reviewer reads
    them; the same values as :meth:`MethodSettings.record` digests."""
    rows = [("standard pressure p° (Pa)", f"{P_STANDARD:g}"),
            ("reference temperature T° (K)", f"{T_REF:g}"),
            ("gas constant R (J/(mol·K))", repr(R))]
    for f in dataclasses.fields(settings):
        label = SETTING_LABELS.get(f.name, f.name.replace("_", " "))
        rows.append((label, _setting_value(getattr(settings, f.name))))
    return tuple(rows)


def render_methods_page(settings: MethodSettings = DEFAULT) -> str:
    return render_template("methods.html", root="", csp=content_policy(), page_title="Methods",
                           sources=method_sources(settings), settings=setting_rows(settings),
                           scales=scale_rows(settings),
                           ms=settings, cautions=CAUTIONS)


# --------------------------------------------------------------------------
# Packet HTML (turned into PDF by dossier.render.packets)

def render_case_packet(view: CaseView) -> str:
    a = view.assessment
    return render_template("packet_case.html", root="../", v=view, a=a, print_mode=True,
                           sources=method_sources(),
                           page_title=f"{a.case_id}, revision {a.revision}",
                           mark=approval_mark(a), open_conditions=open_conditions(view),
                           signoff=signoff_roles(view))


def render_meeting_packet(meeting: MeetingView, starts: Sequence[int] = ()) -> str:
    """Cover and agenda of a meeting packet; ``starts`` are the pages where the cases begin
    (each case follows as its own packet)."""
    starts = tuple(starts) or (None,) * len(meeting.cases)
    return render_template("packet_meeting.html", root="../", m=meeting, starts=starts,
                           approval_mark=approval_mark, open_conditions=open_conditions,
                           print_mode=True, page_title=f"Review meeting {meeting.date}")


def print_assets(view: CaseView) -> tuple[tuple[str, str], ...]:
    """(site path, LaTeX) of the formula SVGs the packet of ``view`` refers to."""
    out = list((path, tex) for tex, path in kirchhoff_assets())
    if view.derivation is not None:
        for seg in view.derivation.segments:
            for eq in seg.equations:
                out.extend((a, tex) for a, tex, h in zip(eq.assets, eq.lines, eq.html)
                           if h is None)
    return tuple(out)


__all__ = [
    "DECIDED_STATUSES", "OPEN_STATUSES", "content_policy", "environment", "method_sources",
    "print_assets", "render_case_packet", "render_case_page", "render_derivation_page",
    "render_meeting_packet", "render_methods_page", "render_register", "render_species_page",
    "render_template", "script_hash", "template_text",
]


# --------------------------------------------------------------------------
# A case that failed to assess

def render_failed_case_page(f: FailedCase) -> str:
    """The page of a case file that failed: its problems (file, line, key) and, marked
    as not current, the headline figures of its last good assessment (``f.earlier``,
    that build's data export), or a statement that there is none."""
    e = f.earlier if isinstance(f.earlier, dict) else None
    rows, findings = [], []
    if e is not None:
        s = e.get("safety") if isinstance(e.get("safety"), dict) else {}
        std = e.get("standard_298K") if isinstance(e.get("standard_298K"), dict) else {}

        def number(x, text):
            return text(x) if isinstance(x, (int, float)) and not isinstance(x, bool) else "–"

        rows = [("title", str(e.get("title", "–"))),
                ("status", words(str(e.get("status") or "–"))),
                ("meeting", str(e.get("meeting") or "none")),
                ("reaction", str(e.get("reaction", "–"))),
                ("ΔrH° at 298.15 K", number(std.get("dH_kJ_mol"), lambda x: f"{sig(x)} kJ/mol")),
                ("ΔrG° at 298.15 K", number(std.get("dG_kJ_mol"), lambda x: f"{sig(x)} kJ/mol")),
                ("criticality class", str(s.get("criticality_class") or "not assessed")),
                ("severity", str(s.get("severity") or "not assessed")),
                ("adiabatic temperature rise", number(s.get("adiabatic_rise_K"),
                                                      lambda x: f"{sig(x)} K")),
                ("MTSR", number(s.get("mtsr_K"), temp)),
                ("MTT", number(s.get("mtt_K"), temp)),
                ("TD24", number(s.get("td24_K"), temp))]
        for item in e.get("findings") or ():
            if isinstance(item, dict) and item.get("severity") in SEVERITIES:
                findings.append((item["severity"], str(item.get("text", ""))))
    case_id = f.file[:-3] if f.file.endswith(".md") else f.file
    return render_template("failed_case.html", root="../", f=f, e=e, rows=rows,
                           findings=findings, case_id=case_id, csp=content_policy(),
                           meeting_kept=any(k.startswith("packets/meeting-") for k in f.kept),
                           page_title=f"{case_id}: could not be assessed")
