"""Pages of the published site (and the HTML of the PDF packets) as strings.

Pure functions from assessments to HTML text: nothing here reads case files
or writes anything.  Templates (jinja2, autoescaped) live in the package
``dossier.templates``.  Free text from case files (titles, owners, gates,
review names and conditions, species names and sources) is escaped by the
templates; the narrative is Markdown, converted and then sanitised with nh3
(:func:`narrative_html`).  HTML made in Python (chemistry, mathematics) is
built from escaped pieces only and then marked safe.

Page map (paths relative to the site root)::

    index.html                     the register of all cases
    methods.html                   formulas, methods, thresholds and sources
    cases/<slug>.html              the dossier of one case
    cases/<slug>-derivation.html   the symbolic route (Kirchhoff) of one case
    cases/<slug>.json              the assessment as JSON (data export)
    species/<slug>.html            one species record and the cases that use it
    figures/<slug>/<name>.svg      figures (written by the build)
    packets/<slug>.pdf             the case packet
    packets/meeting-<date>.pdf     the packet of one review meeting
"""
from __future__ import annotations

import base64
import functools
import hashlib
import math
import re
import unicodedata
from dataclasses import dataclass
from importlib.resources import files
from typing import TYPE_CHECKING, Iterable, Sequence

from markupsafe import Markup, escape

from dossier.model.findings import SEVERITIES

if TYPE_CHECKING:  # pragma: no cover
    from dossier.review.decisions import CaseDecisions
    from dossier.assess.evaluate import Assessment
    from dossier.model.case import Charge, Decomposition, Measured, Review, Vessel
    from dossier.engine.derivation import Segment
    from dossier.render.figures import Figure
    from dossier.review.digest import IntegrityRecord
    from dossier.library.lookup import SpeciesRecord

T0 = 273.15
MINUS = "\u2212"
NBSP = "\u00a0"
THIN = "\u202f"  # narrow no-break space: thousands separator and before units

OPEN_STATUSES = ("submitted", "draft")
DECIDED_STATUSES = ("accepted", "accepted-with-conditions", "declined", "withdrawn")

STATUS_WORDS = {
    "draft": "draft",
    "submitted": "submitted for review",
    "accepted": "accepted",
    "accepted-with-conditions": "accepted with conditions",
    "declined": "declined",
    "withdrawn": "withdrawn",
}

FAVOURABLE_WORDS = {
    "everywhere": "favourable everywhere in the window (ΔG° < 0)",
    "partly": "favourable in part of the window (ΔG° changes sign)",
    "nowhere": "favourable nowhere in the window (ΔG° ≥ 0)",
}

# --------------------------------------------------------------------------
# Numbers with units

def num(x: float | None, digits: int = 2, group: bool = True) -> str:
    """A number with a true minus sign and narrow spaces between thousands."""
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "–"
    text = f"{abs(x):,.{digits}f}" if group else f"{abs(x):.{digits}f}"
    text = text.replace(",", THIN)
    if x < 0 and float(text.replace(THIN, "")) != 0:
        text = MINUS + text
    return text


def sig(x: float | None, figures: int = 4) -> str:
    """A number to ``figures`` significant figures (plain or ×10ⁿ for very large/small)."""
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "–"
    if x == 0:
        return "0"
    exp = math.floor(math.log10(abs(x)))
    if -4 <= exp < 7:
        digits = max(0, figures - 1 - exp)
        return num(x, digits)
    mant = x / 10 ** exp
    return f"{num(mant, figures - 1)}{NBSP}×{NBSP}10{_superscript(str(exp))}"


_SUP = str.maketrans("0123456789-+", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺")


def _superscript(text: str) -> str:
    return text.translate(_SUP)


def unit(x: float | None, u: str, digits: int = 2) -> str:
    """'12.30 kJ/mol'; '–' for a missing value."""
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "not assessed"
    return f"{num(x, digits)}{NBSP}{u}"


def temp(T: float | None, digits: int = 2, missing: str = "not assessed") -> str:
    """'435.21 K (162.06 °C)'; ``missing`` for an absent value."""
    if T is None or (isinstance(T, float) and not math.isfinite(T)):
        return missing
    return f"{num(T, digits, group=False)}{NBSP}K ({num(T - T0, digits, group=False)}{NBSP}°C)"


def pct(x: float | None, digits: int = 1) -> str:
    if x is None:
        return "not assessed"
    return f"{num(x * 100.0, digits)}{NBSP}%"


def words(text: str | None) -> str:
    """A status or verdict code in plain words."""
    if not text:
        return ""
    return STATUS_WORDS.get(str(text), str(text).replace("-", " "))


# --------------------------------------------------------------------------
# Slugs: safe, readable file names

_RESERVED = {"con", "prn", "aux", "nul", *(f"com{i}" for i in range(10)),
             *(f"lpt{i}" for i in range(10)), "index", "methods"}


def slugify(text: str, max_length: int = 60) -> str:
    """A lower-case ASCII file-name stem: letters, digits and single hyphens.

    Charges keep their meaning (``NH4+`` → ``nh4-plus``); reserved device
    names and names the site uses itself get a suffix; never empty.
    """
    t = unicodedata.normalize("NFKD", str(text))
    t = t.replace("+", " plus ").replace("°", " deg ")
    t = re.sub(r"-(?=\s*\)|\s*$)", " minus ", t)  # trailing minus of a charge
    t = t.encode("ascii", "ignore").decode("ascii").lower()
    t = re.sub(r"[^a-z0-9]+", "-", t).strip("-")
    t = t[:max_length].strip("-") or "item"
    if t in _RESERVED:
        t += "-x"
    return t


def unique_slugs(keys: Sequence[tuple[object, str]]) -> dict[object, str]:
    """A slug per key (key, readable text), made unique in sorted order.

    A clash (``CO`` and ``Co``) gets a short hash of the key's text, so the
    same set of keys always gives the same slugs.
    """
    out: dict[object, str] = {}
    used: set[str] = set()
    wanted: dict[str, list[tuple[object, str]]] = {}
    for key, text in keys:
        wanted.setdefault(slugify(text), []).append((key, text))
    for slug in sorted(wanted):
        group = sorted(wanted[slug], key=lambda kt: kt[1])
        for i, (key, text) in enumerate(group):
            s = slug
            if len(group) > 1 or s in used:
                s = f"{slug}-{hashlib.sha256(text.encode('utf-8')).hexdigest()[:6]}"
            while s in used:
                s += "-x"
            used.add(s)
            out[key] = s
    return out


def case_slugs(ids: Sequence[str]) -> dict[str, str]:
    """Slugs of case ids whose pages (``<slug>.html``, ``<slug>-derivation.html``) never clash."""
    slugs = unique_slugs([(i, i) for i in ids])
    out = {}
    for key, s in slugs.items():
        if s.endswith("-derivation"):
            s += "-case"
        out[key] = s
    pages = [p for s in out.values() for p in (s, s + "-derivation")]
    if len(set(pages)) != len(pages):  # pathological ids: fall back to hashed slugs
        out = {k: f"{s}-{hashlib.sha256(k.encode('utf-8')).hexdigest()[:8]}"
               for k, s in out.items()}
    return out


# --------------------------------------------------------------------------
# Chemistry typesetting

_CHARGE_RE = re.compile(r"(\^(?P<n1>\d+)(?P<s1>[+-])|(?P<s2>[+-])(?P<n2>\d+)|(?P<s3>\++|-+))$")


def formula_html(label: str) -> Markup:
    """A formula with subscript counts and a superscript charge: ``SO4^2-`` → SO₄²⁻."""
    text = label.strip()
    if text in ("e-", "e"):
        return Markup("e<sup>−</sup>")
    charge = ""
    m = _CHARGE_RE.search(text)
    if m and m.start() > 0:
        if m.group("s1"):
            n, s = m.group("n1"), m.group("s1")
        elif m.group("s2"):
            n, s = m.group("n2"), m.group("s2")
        else:
            run = m.group("s3")
            n, s = (str(len(run)) if len(run) > 1 else ""), run[0]
        n = "" if n == "1" else n
        charge = f"<sup>{escape(n)}{'+' if s == '+' else MINUS}</sup>"
        text = text[: m.start()]
    out = []
    parts = re.split(r"([.·*])", text)
    for part in parts:
        if part in (".", "·", "*"):
            out.append("·")
            continue
        mult = re.match(r"^\d+(?:\.\d+)?", part)
        if mult:  # multiplier of an adduct part: normal size
            out.append(str(escape(mult.group(0))))
            part = part[mult.end():]
        for tok in re.finditer(r"(\d+(?:\.\d+)?)|([^\d]+)", part):
            if tok.group(1):
                out.append(f"<sub>{escape(tok.group(1))}</sub>")
            else:
                out.append(str(escape(tok.group(2))))
    return Markup("".join(out) + charge)


def _coefficient(c) -> str:
    return str(c.numerator) if c.denominator == 1 else f"{c.numerator}/{c.denominator}"


def species_html(label: str, phase: str, is_formula: bool) -> Markup:
    body = formula_html(label) if is_formula else escape(label)
    return Markup('<span class="species">{}<span class="phase">({})</span></span>').format(
        body, phase)


def reaction_html(text: str) -> Markup:
    """The reaction typeset as chemistry; plain escaped text if it cannot be parsed."""
    from dossier.errors import DossierError
    from dossier.chem.reaction import parse_reaction

    try:
        r = parse_reaction(text)
    except (DossierError, ValueError):
        return Markup('<span class="reaction">{}</span>').format(text)

    def side(terms) -> Markup:
        bits = []
        for t in terms:
            coeff = "" if t.coefficient == 1 else Markup('<span class="coeff">{}</span>{}').format(
                _coefficient(t.coefficient), NBSP)
            bits.append(Markup("{}{}").format(coeff, species_html(t.label, t.phase,
                                                                  t.formula is not None)))
        return Markup(' <span class="op">+</span> ').join(bits)

    arrow = "⇌" if r.reversible else "→"
    return Markup('<span class="reaction">{} <span class="arrow" title="{}">{}</span> {}</span>'
                  ).format(side(r.reactants), "equilibrium" if r.reversible else "forward",
                           arrow, side(r.products))


def key_html(key: str) -> Markup:
    """A species key as written in the reaction, e.g. ``H2O(l)``, typeset."""
    from dossier.chem.reaction import _formula_of  # read-only use of the parser's rule

    m = re.match(r"^(.*)\((g|l|s|cr|aq)\)\s*$", key.strip())
    if not m:
        return escape(key)
    label, phase = m.group(1).strip(), m.group(2)
    return species_html(label, phase, _formula_of(label) is not None)


# --------------------------------------------------------------------------
# Narrative: Markdown, then sanitised

NARRATIVE_TAGS = {"p", "br", "em", "strong", "b", "i", "code", "pre", "blockquote", "ul", "ol",
                  "li", "h3", "h4", "h5", "h6", "table", "thead", "tbody", "tr", "th", "td",
                  "a", "sub", "sup", "hr", "dl", "dt", "dd", "abbr", "del"}


def _keep_attribute(tag: str, attr: str, value: str) -> str | None:
    if tag == "a" and attr == "href":
        v = value.strip()
        low = v.lower()
        if low.startswith(("https://", "http://", "mailto:")) or v.startswith("#"):
            return v
        return None  # relative and other links do not survive: they would break
    return value


def narrative_html(markdown_text: str) -> Markup:
    """Markdown → HTML → nh3: no script, no handlers, no javascript: links, no images.

    Headings are moved down two levels so that they sit under the page's own.
    """
    import markdown
    import nh3

    raw = markdown.markdown(markdown_text or "", extensions=["tables", "fenced_code",
                                                             "sane_lists"],
                            output_format="html")
    raw = re.sub(r"<(/?)h([1-6])\b", lambda m: f"<{m.group(1)}h{min(int(m.group(2)) + 2, 6)}",
                 raw)
    clean = nh3.clean(raw, tags=NARRATIVE_TAGS, clean_content_tags={"script", "style"},
                      attributes={"a": {"href", "title"}, "abbr": {"title"},
                                  "th": {"align"}, "td": {"align"}},
                      attribute_filter=_keep_attribute,
                      url_schemes={"http", "https", "mailto"},
                      link_rel="noopener noreferrer nofollow", strip_comments=True)
    return Markup(clean)


# --------------------------------------------------------------------------
# Mathematics

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


# --------------------------------------------------------------------------
# What the renderers get

@dataclass(frozen=True)
class CaseView:
    """Everything a dossier page needs about one case (plain data)."""

    slug: str
    source_name: str  # the case file's name, e.g. "full.md"
    assessment: "Assessment"
    reviews: tuple["Review", ...]
    narrative: str
    inerts: tuple[tuple[str, float], ...]
    charge: "Charge | None"
    vessel: "Vessel | None"
    decomposition: "Decomposition | None"
    measured: "Measured | None"
    species_slugs: tuple[str, ...]  # one per assessment.species
    figures: tuple["Figure", ...]
    derivation: DerivationView | None
    derivation_note: str = ""
    integrity: "IntegrityRecord | None" = None
    integrity_note: str = "integrity record: not yet computed"
    decisions: "CaseDecisions | None" = None

    @property
    def id(self) -> str:
        return self.assessment.case_id


@dataclass(frozen=True)
class SpeciesView:
    slug: str
    record: "SpeciesRecord"
    local_to: str | None  # case slug when the record is case-local data
    figure: "Figure"
    used_by: tuple[tuple[str, str, str], ...]  # (case slug, case id, key as written)


@dataclass(frozen=True)
class FailedCase:
    file: str
    problems: tuple[str, ...]


@dataclass(frozen=True)
class MeetingView:
    date: str
    slug: str  # "meeting-2026-11-24"
    cases: tuple[CaseView, ...]


# --------------------------------------------------------------------------
# Summaries used by the register and the cover pages

def verdict_summary(reviews: Sequence["Review"]) -> str:
    if not reviews:
        return "no verdict yet"
    return "; ".join(f"{words(str(r.verdict))} ({r.name}, {r.date.isoformat()})"
                     for r in reviews)


def crossover_summary(a: "Assessment") -> str:
    t = a.thermo
    if not t.crossovers:
        return (f"none between {num(t.data_range_K[0], 0)} and "
                f"{num(max(t.data_range_K[1], t.window_K[1]), 0)} K")
    parts = []
    lo, hi = t.window_K
    for c in t.crossovers:
        where = "in the window" if lo <= c.T <= hi else "outside the window"
        parts.append(f"{num(c.T, 1, False)} K ({num(c.T - T0, 1, False)} °C), "
                     f"{c.direction}, {where}")
    return "; ".join(parts)


def worst_finding(a: "Assessment"):
    return max(a.findings, key=lambda f: f.rank) if a.findings else None


def review_record_status(review: "Review", integrity: "IntegrityRecord | None") -> str:
    if not review.digest:
        return "the verdict names no integrity record"
    if integrity is None:
        return "the verdict names a record; the current record is not computed"
    if review.digest.lower().replace(" ", "") == integrity.digest:
        return "given on the current integrity record"
    if integrity.digest.startswith(review.digest.lower().replace(" ", "")) and len(review.digest) >= 12:
        return "given on the current integrity record (short form)"
    return "given on a different integrity record: the case or its data changed since"


def sign_words(x: float | None, positive: str, negative: str, zero: str = "zero") -> str:
    if x is None:
        return "not assessed"
    return positive if x > 0 else negative if x < 0 else zero


# --------------------------------------------------------------------------
# The template environment

@functools.lru_cache(maxsize=1)
def environment():
    """The jinja2 environment (autoescape on, undefined names are errors)."""
    import jinja2

    from dossier.assess.evaluate import CAUTIONS

    root = files("dossier.templates")
    env = jinja2.Environment(loader=jinja2.FileSystemLoader(str(root)), autoescape=True,
                             undefined=jinja2.StrictUndefined, trim_blocks=True,
                             lstrip_blocks=True, keep_trailing_newline=True)
    env.filters.update(num=num, sig=sig, unit=unit, temp=temp, pct=pct, words=words,
                       reaction=reaction_html, key=key_html, formula=formula_html,
                       math=mathml)
    env.globals.update(
        SEVERITIES=SEVERITIES, FAVOURABLE_WORDS=FAVOURABLE_WORDS, verdict_summary=verdict_summary,
        crossover_summary=crossover_summary, worst_finding=worst_finding,
        review_record_status=review_record_status, sign_words=sign_words,
        narrative_html=narrative_html, KIRCHHOFF=KIRCHHOFF, kirchhoff_assets=kirchhoff_assets,
        T0=T0, cautions=CAUTIONS, METHODS_MATH=METHODS_MATH)
    return env


def _render(template: str, **context) -> str:
    return environment().get_template(template).render(**context)


def template_text(name: str) -> str:
    """A file of the templates package as text (CSS, scripts)."""
    return files("dossier.templates").joinpath(name).read_text(encoding="utf-8")


def _script_hash(script: str) -> str:
    return "sha256-" + base64.b64encode(hashlib.sha256(script.encode("utf-8")).digest()).decode()


def content_policy(scripts: Iterable[str] = ()) -> str:
    """The page's Content-Security-Policy: only our own files and our own inline scripts."""
    hashes = " ".join(f"'{_script_hash(s)}'" for s in scripts)
    return ("default-src 'none'; img-src 'self'; style-src 'self'; "
            f"script-src {hashes or chr(39) + 'none' + chr(39)}; "
            "base-uri 'none'; form-action 'none'")


# --------------------------------------------------------------------------
# Pages

def render_register(cases: Sequence[CaseView], failed: Sequence[FailedCase] = (),
                    meetings: Sequence[MeetingView] = (), packets: bool = True) -> str:
    """The register; ``packets`` says whether the PDF packets exist to be linked."""
    open_cases = sorted((c for c in cases if c.assessment.status in OPEN_STATUSES),
                        key=lambda c: (OPEN_STATUSES.index(c.assessment.status),
                                       c.assessment.meeting or "9999", c.id))
    decided = sorted((c for c in cases if c.assessment.status not in OPEN_STATUSES),
                     key=lambda c: (DECIDED_STATUSES.index(c.assessment.status)
                                    if c.assessment.status in DECIDED_STATUSES else 99, c.id))
    script = template_text("filter.js")
    return _render("register.html", root="", open_cases=open_cases, decided=decided,
                   failed=failed, meetings=meetings, count=len(cases), filter_script=script,
                   packets=packets,
                   csp=content_policy([script]), page_title="Register of cases")


def render_case_page(view: CaseView, packets: bool = True) -> str:
    a = view.assessment
    return _render("case.html", root="../", v=view, a=a, print_mode=False, packets=packets,
                   csp=content_policy(), page_title=f"{a.case_id}: {a.title}")


def render_derivation_page(view: CaseView) -> str:
    a = view.assessment
    return _render("derivation.html", root="../", v=view, a=a, print_mode=False,
                   csp=content_policy(), page_title=f"{a.case_id}: derivation")


def render_species_page(view: SpeciesView) -> str:
    return _render("species.html", root="../", s=view, r=view.record, csp=content_policy(),
                   page_title=f"{view.record.name} ({view.record.phase})")


def method_sources() -> tuple[tuple[str, str], ...]:
    """(topic, source text) of every threshold table and method, from the engine's constants."""
    from dossier.engine import energetics
    from dossier.assess import rules
    from dossier.engine import safety

    out = [
        ("Severity on the adiabatic temperature rise", safety.SEVERITY_SOURCE),
        ("Probability on TMRad at the MTSR", safety.PROBABILITY_SOURCE),
        ("Criticality classes", safety.CRITICALITY_SOURCE),
        ("TMRad and TD24", safety.TMR_SOURCE),
        ("UN Appendix 6 screening", energetics.UN_SCREENING_SOURCE),
        ("Explosophore groups", energetics.GROUPS_SOURCE),
        ("Maximum decomposition energy: products", energetics.WATER_CHOICE),
        ("Standard-state thermodynamics", rules.THERMO_SOURCE),
    ]
    return tuple(out)


def render_methods_page() -> str:
    from dossier.engine import energetics
    from dossier.engine import safety
    from dossier.assess.evaluate import CAUTIONS, METHOD_SETTINGS

    return _render("methods.html", root="", csp=content_policy(), page_title="Methods",
                   sources=method_sources(), settings=METHOD_SETTINGS, cautions=CAUTIONS,
                   safety=safety, energetics=energetics)


# --------------------------------------------------------------------------
# The user guide (docs/*.md, shipped as the package dossier.docs)

GUIDE_PAGES = (("guide", "index", "User guide"), ("case-format", "case-format", "The case file format"),
               ("signatures", "signatures", "Integrity records and signatures"))


def _guide_link(tag: str, attr: str, value: str) -> str | None:
    """Keep links between guide pages (x.md → x.html), anchors and web links."""
    if tag == "img":
        return None
    if tag == "a" and attr == "href":
        v = value.strip()
        m = re.fullmatch(r"(?:docs/)?([a-z0-9-]+)\.md(#[\w-]+)?", v)
        if m:
            names = {doc: page for doc, page, _t in GUIDE_PAGES}
            if m.group(1) in names:
                return f"{names[m.group(1)]}.html{m.group(2) or ''}"
            return None
        if v.lower().startswith(("https://", "http://", "mailto:")) or v.startswith("#"):
            return v
        return None
    return value


def guide_html(markdown_text: str) -> Markup:
    """The guide's Markdown as sanitised HTML (same allow-list as narratives)."""
    import markdown
    import nh3

    raw = markdown.markdown(markdown_text, extensions=["tables", "fenced_code", "sane_lists", "toc"],
                            output_format="html")
    clean = nh3.clean(raw, tags=NARRATIVE_TAGS | {"h1", "h2"}, clean_content_tags={"script", "style"},
                      attributes={"a": {"href", "title"}, "th": {"align"}, "td": {"align"},
                                  "h1": {"id"}, "h2": {"id"}, "h3": {"id"}, "h4": {"id"}},
                      attribute_filter=_guide_link, url_schemes={"http", "https", "mailto"},
                      link_rel="noopener noreferrer nofollow", strip_comments=True)
    return Markup(clean)


def render_guide_pages() -> dict[str, bytes]:
    """Site path → page for every guide document that ships with dossier."""
    import importlib.resources

    docs = importlib.resources.files("dossier.docs")
    out: dict[str, bytes] = {}
    for doc, page, title in GUIDE_PAGES:
        source = docs / f"{doc}.md"
        if not source.is_file():
            continue
        body = guide_html(source.read_text(encoding="utf-8"))
        html = _render("guide.html", root="../", body=body, csp=content_policy(), page_title=title,
                       pages=GUIDE_PAGES)
        out[f"guide/{page}.html"] = html.encode("utf-8")
    return out


# --------------------------------------------------------------------------
# Packet HTML (turned into PDF by dossier.render.packets)

def render_case_packet(view: CaseView) -> str:
    a = view.assessment
    return _render("packet_case.html", root="../", v=view, a=a, print_mode=True,
                   sources=method_sources(), page_title=f"{a.case_id}, revision {a.revision}")


def render_meeting_packet(meeting: MeetingView, starts: Sequence[int] = ()) -> str:
    """Cover and agenda of a meeting packet; ``starts`` are the pages where the cases begin
    (each case follows as its own packet)."""
    starts = tuple(starts) or (None,) * len(meeting.cases)
    return _render("packet_meeting.html", root="../", m=meeting, starts=starts,
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
    "CaseView", "DerivationView", "FailedCase", "MeetingView", "SpeciesView",
    "content_policy", "derivation_view", "equation_lines", "formula_html", "mathml",
    "narrative_html", "num", "print_assets", "reaction_html", "render_case_page",
    "render_case_packet", "render_derivation_page", "render_meeting_packet",
    "render_methods_page", "render_register", "render_species_page", "slugify", "temp",
    "unique_slugs",
]
