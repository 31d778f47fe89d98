"""Mathematics on the pages: LaTeX as MathML, closed forms as HTML, equation lines.

The LaTeX is our own (the general forms below) or sympy's (the closed forms of
a derivation), never text from a case file.  On screen it is MathML
(latex2mathml); in print each display line is HTML where it only holds
numbers, powers of T and ln(T), and an SVG image (drawn by
:func:`dossier.render.figures.formula_svg`) otherwise.
"""
from __future__ import annotations

import functools
import re
from dataclasses import dataclass
from typing import TYPE_CHECKING, Sequence

from markupsafe import Markup, escape

from dossier.render.numbers import MINUS, NBSP

if TYPE_CHECKING:  # pragma: no cover
    from dossier.engine.derivation import Segment


def _split_terms(latex: str) -> list[str]:
    """Split a LaTeX sum at its top-level ' + ' and ' - ' (the sign stays with the term)."""
    terms, depth, start, i = [], 0, 0, 0
    while i < len(latex):
        ch = latex[i]
        if ch == "{":
            depth += 1
        elif ch == "}":
            depth -= 1
        elif depth == 0 and latex.startswith((" + ", " - "), i) and i > 0:
            terms.append(latex[start:i].strip())
            start = i + 1
            i += 2
            continue
        i += 1
    terms.append(latex[start:].strip())
    return [t for t in terms if t]


def display_latex(latex: str) -> str:
    """sympy's LaTeX for reading: natural log as ln."""
    return latex.replace(r"\log{", r"\ln{")


def equation_lines(lhs: str, rhs: str, per_line: int = 3) -> tuple[str, ...]:
    """'lhs = t1 + t2 + t3', '+ t4 + t5', ... : a long closed form as several lines.

    The terms keep their own signs, so a continuation line starts with + or −.
    """
    terms = _split_terms(display_latex(rhs)) or ["0"]
    lines = [" ".join(terms[k:k + per_line]) for k in range(0, len(terms), per_line)]
    lines[0] = f"{lhs} = {lines[0]}"
    return tuple(lines)


@functools.lru_cache(maxsize=4096)
def mathml(latex: str, display: str = "inline") -> Markup:
    """LaTeX (our own formulas and sympy output, never case text) as MathML."""
    import latex2mathml.converter

    return Markup(latex2mathml.converter.convert(latex, display=display))


_NUM = r"(?P<num>\d+(?:\.\d+)?)(?: \\cdot 10\^\{(?P<exp>-?\d+)\})?"
_TPOW = r"T(?:\^\{(?P<pow>\d+)\})?"
_LN = r"\\ln\{\\left\(T \\right\)\}"
_TERM_RES = (
    # [c [× 10^n]] [T[^k]] [ln(T)]
    re.compile(rf"^(?P<sign>[+-] )?(?:{_NUM})? ?(?P<t>{_TPOW})? ?(?P<ln>{_LN})?$"),
    # c [× 10^n] / T[^k]
    re.compile(rf"^(?P<sign>[+-] )?\\frac\{{{_NUM}\}}\{{(?P<den>{_TPOW})\}}$"),
)
_LHS_HTML = {"C": "Δ<sub>r</sub><i>C</i><sub><i>p</i></sub>°(<i>T</i>)",
             "H": "Δ<sub>r</sub><i>H</i>°(<i>T</i>)", "S": "Δ<sub>r</sub><i>S</i>°(<i>T</i>)",
             "G": "Δ<sub>r</sub><i>G</i>°(<i>T</i>)"}


def _tpow_html(pow_: str | None) -> str:
    return "<i>T</i>" + (f"<sup>{escape(pow_)}</sup>" if pow_ else "")


def _term_html(term: str, first: bool) -> str | None:
    """One term of a closed form as HTML, or None when it is not of the simple kinds.

    ``first``: the opening term of an equation, written without a plus sign.
    """
    for rx in _TERM_RES:
        m = rx.match(term.strip())
        if not m:
            continue
        g = m.groupdict()
        if not (g.get("num") or g.get("t") or g.get("ln")):
            continue
        sign = (g.get("sign") or "+").strip()
        parts = []
        if g.get("num"):
            num = str(escape(g["num"]))
            if g.get("exp"):
                num += f"{NBSP}×{NBSP}10<sup>{escape(g['exp'].replace('-', MINUS))}</sup>"
            parts.append(num)
        if g.get("den"):
            body = f"{parts[0]}/{_tpow_html(g.get('pow'))}"
        else:
            if g.get("t"):
                parts.append(_tpow_html(g.get("pow")))
            if g.get("ln"):
                parts.append("ln(<i>T</i>)")
            body = NBSP.join(parts)
        if first:
            return (MINUS if sign == "-" else "") + body
        return (MINUS if sign == "-" else "+") + NBSP + body
    return None


def closed_form_html(line: str, symbol: str | None) -> Markup | None:
    """A display line of a closed form as HTML (for print), or None if it has other shapes.

    ``symbol`` (C, H, S or G) names the left-hand side of a first line; None for a
    continuation line.  Only numbers, powers of T and ln(T) are accepted.
    """
    rhs = line.split(" = ", 1)[1] if symbol else line
    terms = _split_terms(rhs)
    if not terms:
        return None
    out = []
    for i, term in enumerate(terms):
        h = _term_html(term, first=(i == 0 and symbol is not None))
        if h is None:
            return None
        out.append(h)
    text = " ".join(out)
    if symbol:
        text = f"{_LHS_HTML[symbol]} = {text}"
    return Markup(f'<span class="closed-form">{text}</span>')


@dataclass(frozen=True)
class EquationView:
    label: str  # what the equation gives, in words
    unit: str  # unit of the left-hand side
    lines: tuple[str, ...]  # LaTeX, one display line each
    html: tuple[Markup | None, ...]  # the same lines as HTML for print; None: use the SVG
    assets: tuple[str, ...]  # site paths of the SVG renderings (for print), same order


@dataclass(frozen=True)
class SegmentView:
    t_low: float
    t_high: float
    anchor: float
    dH_anchor_kJ: float
    dS_anchor: float
    equations: tuple[EquationView, ...]


@dataclass(frozen=True)
class DerivationView:
    t_low: float
    t_high: float
    segments: tuple[SegmentView, ...]
    checks: tuple[tuple[float, float, float], ...]  # (T, closed-form ΔG kJ/mol, engine kJ/mol)
    species_forms: tuple[tuple[str, str], ...]  # (species key, model kind)


def derivation_view(segments: Sequence["Segment"], slug: str, t_low: float, t_high: float,
                    checks: Sequence[tuple[float, float, float]],
                    species_forms: Sequence[tuple[str, str]]) -> DerivationView:
    """Arrange the closed forms as equations of display lines with asset names."""
    counter = 0
    seg_views = []
    for seg in segments:
        eqs = []
        for label, sym, lhs, rhs, u in (
                ("heat capacity of reaction", "C", r"\Delta_{\text{r}} C_{p}^{\circ}(T)",
                 seg.dCp_latex, "J mol⁻¹ K⁻¹"),
                ("enthalpy of reaction", "H", r"\Delta_{\text{r}} H^{\circ}(T)", seg.dH_latex,
                 "J mol⁻¹"),
                ("entropy of reaction", "S", r"\Delta_{\text{r}} S^{\circ}(T)", seg.dS_latex,
                 "J mol⁻¹ K⁻¹"),
                ("Gibbs energy of reaction", "G", r"\Delta_{\text{r}} G^{\circ}(T)",
                 seg.dG_latex, "J mol⁻¹")):
            lines = equation_lines(lhs, rhs)
            html = tuple(closed_form_html(line, sym if i == 0 else None)
                         for i, line in enumerate(lines))
            assets = []
            for _ in lines:
                counter += 1
                assets.append(f"figures/cases/{slug}/math/eq-{counter:03d}.svg")
            eqs.append(EquationView(label, u, lines, html, tuple(assets)))
        seg_views.append(SegmentView(seg.t_low, seg.t_high, seg.anchor, seg.dH_anchor / 1e3,
                                     seg.dS_anchor, tuple(eqs)))
    return DerivationView(t_low, t_high, tuple(seg_views), tuple(checks), tuple(species_forms))


#: General forms shown before the closed forms (our own formulas, as LaTeX).
KIRCHHOFF = (
    r"\Delta_{\text{r}} C_{p}^{\circ}(T) = \sum_{i} \nu_{i} C_{p,i}^{\circ}(T)",
    r"\Delta_{\text{r}} H^{\circ}(T) = \Delta_{\text{r}} H^{\circ}(T_{a}) + \int_{T_{a}}^{T} "
    r"\Delta_{\text{r}} C_{p}^{\circ}(\tau)\, d\tau",
    r"\Delta_{\text{r}} S^{\circ}(T) = \Delta_{\text{r}} S^{\circ}(T_{a}) + \int_{T_{a}}^{T} "
    r"\frac{\Delta_{\text{r}} C_{p}^{\circ}(\tau)}{\tau}\, d\tau",
    r"\Delta_{\text{r}} G^{\circ}(T) = \Delta_{\text{r}} H^{\circ}(T) - T \Delta_{\text{r}} S^{\circ}(T)",
    r"\ln K = -\frac{\Delta_{\text{r}} G^{\circ}(T)}{R T}",
)

#: Formulas of the methods page (our own LaTeX), by key.
METHODS_MATH = {
    "nasa-cp": r"\frac{C_{p}^{\circ}}{R} = a_{1} + a_{2} T + a_{3} T^{2} + a_{4} T^{3} + a_{5} T^{4}",
    "nasa-h": r"\frac{H^{\circ}}{R T} = a_{1} + \frac{a_{2} T}{2} + \frac{a_{3} T^{2}}{3} + \frac{a_{4} T^{3}}{4} + \frac{a_{5} T^{4}}{5} + \frac{a_{6}}{T}",
    "nasa-s": r"\frac{S^{\circ}}{R} = a_{1} \ln T + a_{2} T + \frac{a_{3} T^{2}}{2} + \frac{a_{4} T^{3}}{3} + \frac{a_{5} T^{4}}{4} + a_{7}",
    "shomate-cp": r"C_{p}^{\circ} = A + B t + C t^{2} + D t^{3} + \frac{E}{t^{2}}",
    "shomate-h": r"H^{\circ}(T) - H^{\circ}(298.15) = A t + \frac{B t^{2}}{2} + \frac{C t^{3}}{3} + \frac{D t^{4}}{4} - \frac{E}{t} + F - H",
    "shomate-s": r"S^{\circ} = A \ln t + B t + \frac{C t^{2}}{2} + \frac{D t^{3}}{3} - \frac{E}{2 t^{2}} + G",
    "constant-cp": r"H^{\circ}(T) = \Delta_{f} H^{\circ} + C_{p} (T - T^{\circ}), \quad S^{\circ}(T) = S^{\circ}(T^{\circ}) + C_{p} \ln \frac{T}{T^{\circ}}",
    "surroundings": r"q_{\mathrm{surr}} = -\Delta_{\text{r}} H, \quad \Delta S_{\mathrm{surr}} = -\frac{\Delta_{\text{r}} H}{T}",
    "universe": r"\Delta S_{\mathrm{univ}} = \Delta_{\text{r}} S + \Delta S_{\mathrm{surr}} = -\frac{\Delta_{\text{r}} G}{T}",
    "heat-flow": r"\Delta S_{\mathrm{total}} = Q \left( \frac{1}{T_{\mathrm{cold}}} - \frac{1}{T_{\mathrm{hot}}} \right) > 0",
    "heat-rise": r"Q = -\Delta_{\text{r}} H \cdot \frac{n_{\mathrm{basis}}}{|\nu_{\mathrm{basis}}|}, \quad \Delta T_{\mathrm{ad}} = \frac{Q}{m \, c_{p}'}",
    "mtsr": r"\mathrm{MTSR} = T_{p} + X_{\mathrm{acc}} \, \Delta T_{\mathrm{ad}}",
    "tmrad": r"\mathrm{TMR}_{\mathrm{ad}}(T) = \frac{c_{p}' R T^{2}}{q'(T) \, E_{a}}, \quad q'(T) = q'_{\mathrm{ref}} \exp\left[ -\frac{E_{a}}{R} \left( \frac{1}{T} - \frac{1}{T_{\mathrm{ref}}} \right) \right]",
    "cooling": r"\dot{Q}_{\mathrm{mean}} = \frac{Q}{t_{\mathrm{feed}}} \quad \text{against} \quad \dot{Q}_{\mathrm{cool}} = U A \, (T_{p} - T_{\mathrm{coolant}})",
    "gas": r"n_{\mathrm{gas}} = \xi \sum_{i \in \mathrm{gas}} \nu_{i}, \quad V_{\mathrm{n}} = \frac{n_{\mathrm{gas}} R T_{\mathrm{n}}}{p_{\mathrm{n}}}, \quad p = p_{0} + \frac{n_{\mathrm{gas}} R T}{V}",
    "oxygen-balance": r"\mathrm{OB} = -\frac{1600 \, (2x + y/2 - z)}{M} \; \%",
}


def kirchhoff_assets() -> tuple[tuple[str, str], ...]:
    """(LaTeX, site path of its SVG) of the general forms."""
    return tuple((tex, f"figures/methods/kirchhoff-{i + 1}.svg") for i, tex in enumerate(KIRCHHOFF))


__all__ = ["DerivationView", "EquationView", "KIRCHHOFF", "METHODS_MATH", "SegmentView",
           "closed_form_html", "derivation_view", "display_latex", "equation_lines",
           "kirchhoff_assets", "mathml"]
