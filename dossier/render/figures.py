"""Figures of a dossier as SVG text (matplotlib, Agg backend).

Pure functions: numbers in, :class:`Figure` out (the SVG text, a caption, a
text alternative and the figure's data as a table of formatted strings, which
the page prints beside the figure).  Nothing is written here.

The shared look, the SVG output and :class:`Figure` are in
:mod:`dossier.render.figure_style` (rebuilds are byte-stable there).
matplotlib is imported only inside functions, and only when a figure is drawn.
"""
from __future__ import annotations

import functools
import html
import math
from typing import TYPE_CHECKING, Sequence

import numpy as np

from dossier.constants import T_REF, ZERO_CELSIUS
from dossier.render.figure_style import (BLUE, GREY, INK, PALE, Figure, cell, celsius_axis,
                                         new_figure, svg_text, with_style)
from dossier.temperature import kelvin_celsius

if TYPE_CHECKING:  # pragma: no cover
    from dossier.engine.thermo import ReactionThermo
    from dossier.library.record import SpeciesRecord
    from dossier.model.assessment import Crossover, Envelope, ProfileRow, Safety

# --------------------------------------------------------------------------
# ΔG°(T)

def gibbs_range(window: tuple[float, float], crossovers: Sequence["Crossover"] = ()
                ) -> tuple[float, float]:
    """Temperatures shown in the ΔG° figure: the window widened on both sides,
    stretched to include the crossovers found nearby."""
    lo, hi = window
    span = max(hi - lo, 100.0)
    a, b = max(100.0, lo - span), hi + span
    for c in crossovers:
        a, b = min(a, max(100.0, c.T - 0.1 * span)), max(b, c.T + 0.1 * span)
    return a, min(b, max(hi + span, 3000.0))


def _band(profile: Sequence["ProfileRow"], low: str, high: str, scale: float = 1.0):
    """(T, low, high) of a 95 % band from the profile rows, or None when the rows carry no
    interval or it has no width."""
    rows = [r for r in profile if getattr(r, low) is not None and getattr(r, high) is not None]
    if not rows:
        return None
    T = np.array([r.T_K for r in rows])
    lo = np.array([getattr(r, low) for r in rows]) * scale
    hi = np.array([getattr(r, high) for r in rows]) * scale
    if not np.any(hi - lo > 1e-9 * np.maximum(np.abs(hi), 1.0)):
        return None
    return T, lo, hi


def gibbs_figure(thermo: "ReactionThermo", window: tuple[float, float],
                 data_range: tuple[float, float], crossovers: Sequence["Crossover"],
                 profile: Sequence["ProfileRow"] = ()) -> Figure:
    """ΔrG°(T) over a range wider than the window: window shaded, zero line,
    crossovers marked, values outside the data range dashed."""
    a, b = gibbs_range(window, crossovers)
    T = np.unique(np.concatenate([np.linspace(a, b, 400), list(window),
                                  [x for x in data_range if a < x < b]]))
    G = thermo.dG(T) / 1e3
    d_lo, d_hi = data_range
    inside = (T >= d_lo) & (T <= d_hi)
    shown = [c for c in crossovers if a <= c.T <= b]

    def draw():
        fig = new_figure()
        ax = fig.add_subplot()
        ax.axvspan(window[0], window[1], color=PALE, zorder=0, label="operating window")
        ax.axhline(0.0, color=GREY, linewidth=0.9, zorder=1)
        gin = np.where(inside, G, np.nan)
        # the dashed part includes the data-range ends, so it joins the solid line
        gout = np.where((T <= d_lo) | (T >= d_hi), G, np.nan)
        band = _band(profile, "dG_low_kJ_mol", "dG_high_kJ_mol")
        if band is not None:
            ax.fill_between(band[0], band[1], band[2], color=BLUE, alpha=0.25, linewidth=0,
                            zorder=2, label="95 % interval in the window")
        ax.plot(T, gin, color=BLUE, label=r"$\Delta_\mathrm{r}G^\circ$ within the data range")
        if np.any(~inside):
            ax.plot(T, gout, color=BLUE, linestyle=(0, (4, 3)),
                    label=r"$\Delta_\mathrm{r}G^\circ$ extrapolated beyond the data")
        for c in shown:
            ax.plot([c.T], [0.0], marker="o", markersize=6, markerfacecolor="white",
                    markeredgecolor=INK, zorder=3)
            ax.annotate(f"{c.T:.0f} K", (c.T, 0.0), textcoords="offset points",
                        xytext=(4, 8), color=INK)
        ax.set_xlim(a, b)
        ax.set_xlabel("T / K")
        ax.set_ylabel(r"$\Delta_\mathrm{r}G^\circ$ / kJ mol$^{-1}$")
        celsius_axis(ax)
        ax.legend(loc="best")
        return svg_text(fig)

    svg = with_style(draw)
    # data table: round temperatures across the range, the window ends, crossovers
    step = _nice_step((b - a) / 10.0)
    pts = sorted({*np.arange(math.ceil(a / step) * step, b + 1e-9, step).tolist(),
                  *window, *(c.T for c in shown)})
    rows = []
    for t in pts:
        g = float(thermo.dG(np.array([t]))[0]) / 1e3
        note = []
        if window[0] <= t <= window[1]:
            note.append("in window")
        if not (d_lo <= t <= d_hi):
            note.append("extrapolated")
        if any(abs(t - c.T) < 1e-9 for c in shown):
            note.append("crossover")
        rows.append((f"{t:.2f}", f"{t - ZERO_CELSIUS:.2f}", cell(g, 3), ", ".join(note)))
    if shown:
        cross = "; ".join(f"ΔG° = 0 at {kelvin_celsius(c.T, 1)}, {c.direction}"
                          for c in shown)
    else:
        cross = "ΔG° does not change sign in the range shown"
    caption = (f"Standard Gibbs energy of reaction against temperature, {a:.0f}–{b:.0f} K. "
               f"The shaded band is the operating window; the solid line lies within the "
               f"species data ({d_lo:.0f}–{d_hi:.0f} K), the dashed line is extrapolated. "
               f"{cross}."
               + (" The darker band over the window is the 95 % interval from the stated "
                  "uncertainties of the species data." if _band(profile, "dG_low_kJ_mol",
                                                                  "dG_high_kJ_mol") else ""))
    return Figure("gibbs", "ΔG° against temperature", caption,
                  f"Line plot of ΔG° from {a:.0f} to {b:.0f} K. {cross}.",
                  ("T / K", "t / °C", "ΔG° / kJ mol⁻¹", "note"), tuple(rows), svg)


def _nice_step(raw: float) -> float:
    if raw <= 0:
        return 1.0
    mag = 10 ** math.floor(math.log10(raw))
    for m in (1, 2, 2.5, 5, 10):
        if m * mag >= raw:
            return m * mag
    return 10 * mag


# --------------------------------------------------------------------------
# equilibrium conversion

def conversion_figure(profile: Sequence["ProfileRow"], pressure_bar: float, basis: str,
                      mode: str, note: str) -> Figure:
    T = np.array([r.T_K for r in profile])
    X = np.array([r.conversion for r in profile]) * 100.0

    def draw():
        fig = new_figure(6.4, 3.0)
        ax = fig.add_subplot()
        style = "steps-mid" if mode == "all-or-nothing" else "default"
        band = _band(profile, "conversion_low", "conversion_high", 100.0)
        if band is not None:
            ax.fill_between(band[0], band[1], band[2], color=BLUE, alpha=0.25, linewidth=0,
                            step="mid" if mode == "all-or-nothing" else None,
                            label="95 % interval")
            ax.legend(loc="best")
        ax.plot(T, X, color=BLUE, drawstyle=style, marker="o", markersize=2.5)
        ax.set_ylim(-3, 103)
        ax.set_xlim(T.min(), T.max()) if T.max() > T.min() else None
        ax.set_xlabel("T / K")
        ax.set_ylabel("equilibrium conversion / %")
        celsius_axis(ax)
        return svg_text(fig)

    svg = with_style(draw)
    banded = _band(profile, "conversion_low", "conversion_high") is not None
    rows = tuple((f"{r.T_K:.2f}", f"{r.T_K - ZERO_CELSIUS:.2f}", f"{r.conversion * 100:.2f}")
                 + ((f"{r.conversion_low * 100:.2f} to {r.conversion_high * 100:.2f}",)
                    if banded else ())
                 for r in profile)
    extra = f" {note}" if note else ""
    if banded:
        extra += (" The band is the 95 % interval from the stated uncertainties of the "
                  "species data.")
    caption = (f"Equilibrium conversion of {basis} against temperature across the operating "
               f"window at {pressure_bar:g} bar, from a stoichiometric feed (see Methods)."
               f"{extra}")
    lo, hi = float(X.min()), float(X.max())
    return Figure("conversion", "Equilibrium conversion", caption,
                  f"Equilibrium conversion of {basis} between {lo:.1f} % and {hi:.1f} % "
                  f"over {T.min():.0f}–{T.max():.0f} K.",
                  ("T / K", "t / °C", "conversion / %")
                  + (("95 % interval / %",) if banded else ()), rows, svg)


# --------------------------------------------------------------------------
# entropy balance

def entropy_figure(profile: Sequence["ProfileRow"]) -> Figure:
    T = np.array([r.T_K for r in profile])
    sys_ = np.array([r.dS_J_molK for r in profile])
    surr = np.array([r.dS_surr_J_molK for r in profile])
    univ = np.array([r.dS_univ_J_molK for r in profile])

    def draw():
        fig = new_figure(6.4, 3.2)
        ax = fig.add_subplot()
        ax.axhline(0.0, color=GREY, linewidth=0.9)
        ax.plot(T, sys_, color=INK, linestyle=(0, (1.5, 2)), label=r"$\Delta_\mathrm{r}S^\circ$ (system)")
        ax.plot(T, surr, color=GREY, linestyle=(0, (5, 2.5)), label=r"$\Delta S_\mathrm{surr} = -\Delta_\mathrm{r}H^\circ/T$ (surroundings)")
        ax.plot(T, univ, color=BLUE, linewidth=2.2, label=r"$\Delta S_\mathrm{univ} = \Delta_\mathrm{r}S^\circ + \Delta S_\mathrm{surr}$ (universe)")
        if T.max() > T.min():
            ax.set_xlim(T.min(), T.max())
        ax.set_xlabel("T / K")
        ax.set_ylabel(r"entropy change / J mol$^{-1}$ K$^{-1}$")
        celsius_axis(ax)
        ax.legend(loc="best")
        return svg_text(fig)

    svg = with_style(draw)
    rows = tuple((f"{r.T_K:.2f}", cell(r.dS_J_molK), cell(r.dS_surr_J_molK), cell(r.dS_univ_J_molK))
                 for r in profile)
    sign = ("positive throughout" if np.all(univ > 0) else
            "negative throughout" if np.all(univ < 0) else "changing sign")
    caption = ("Entropy balance per mole of reaction across the operating window: the system "
               "(ΔS°), the surroundings that receive the heat at constant temperature and "
               "pressure (−ΔH°/T) and the universe, their sum (equal to −ΔG°/T), which is "
               f"{sign}.")
    return Figure("entropy", "Entropy of system, surroundings and universe", caption,
                  f"Three lines against temperature: entropy change of the system, of the surroundings and of the universe; the universe's is {sign}.",
                  ("T / K", "ΔS° system / J mol⁻¹ K⁻¹", "ΔS surroundings / J mol⁻¹ K⁻¹",
                   "ΔS universe / J mol⁻¹ K⁻¹"), rows, svg)


# --------------------------------------------------------------------------
# temperature ladder of the runaway scenario

def ladder_levels(safety: "Safety") -> tuple[tuple[str, float, str], ...]:
    """(label, temperature K, meaning) of the scenario's temperatures, lowest first."""
    sc = safety.scale
    levels = []
    if sc is not None:
        levels.append(("T_p", sc.T_process_K, "process temperature"))
    if safety.mtsr_K is not None:
        levels.append(("MTSR", safety.mtsr_K, "maximum temperature of the synthesis reaction"))
    if safety.mtt_K is not None:
        levels.append(("MTT", safety.mtt_K, "maximum technical temperature"))
    if safety.td24_K is not None:
        levels.append(("TD24", safety.td24_K, "TMRad of 24 h"))
    if safety.final_temperature_K is not None:
        levels.append(("T_end", safety.final_temperature_K,
                       "final temperature if the decomposition follows"))
    return tuple(sorted(levels, key=lambda x: x[1]))


LADDER_TEX = {"T_p": r"$T_\mathrm{p}$", "T_end": r"$T_\mathrm{end}$"}
LADDER_TEXT = {"T_p": "Tₚ", "T_end": "T end"}


def ladder_figure(safety: "Safety") -> Figure | None:
    """The scenario's temperatures on one scale, or None when fewer than two are known."""
    levels = ladder_levels(safety)
    if len(levels) < 2:
        return None
    cls = safety.criticality_class
    values = dict((k, v) for k, v, _ in levels)

    def draw():
        fig = new_figure(6.4, 3.8, top_axis=False)
        ax = fig.add_subplot()
        ax.grid(False)
        ax.spines["bottom"].set_visible(False)
        ax.set_xticks([])
        ts = [v for _, v, _ in levels]
        pad = max(10.0, 0.08 * (max(ts) - min(ts)))
        ax.set_ylim(min(ts) - pad, max(ts) + pad)
        ax.set_xlim(0, 10)
        placed: list[float] = []
        min_gap = 0.06 * (max(ts) - min(ts) + 2 * pad)
        for label, t, meaning in levels:
            strong = label in ("MTSR", "TD24")
            ax.hlines(t, 2.4, 5.6, color=BLUE if strong else INK,
                      linewidth=2.2 if strong else 1.2)
            y = t
            if placed and y - placed[-1] < min_gap:
                y = placed[-1] + min_gap
            placed.append(y)
            # digits as the page prints them: from the 95 % interval where there is one
            known = {"MTSR": safety.mtsr_interval_K, "TD24": safety.td24_interval_K}.get(label)
            shown = kelvin_celsius(t, interval=known) if known else kelvin_celsius(t, 1)
            ax.annotate(f"{LADDER_TEX.get(label, label)}  {shown}", (5.6, t),
                        xytext=(6.0, y), textcoords="data", va="center", color=INK,
                        arrowprops=dict(arrowstyle="-", color=GREY, linewidth=0.6))
        if "T_p" in values and "MTSR" in values:
            ax.annotate("", xy=(1.0, values["MTSR"]), xytext=(1.0, values["T_p"]),
                        arrowprops=dict(arrowstyle="->", color=INK, linewidth=1.0))
            ax.text(0.75, (values["T_p"] + values["MTSR"]) / 2, "synthesis", va="center",
                    ha="right", color=GREY, fontsize=8, rotation=90)
        if "MTSR" in values and "T_end" in values:
            ax.annotate("", xy=(1.9, values["T_end"]), xytext=(1.9, values["MTSR"]),
                        arrowprops=dict(arrowstyle="->", color=INK, linewidth=1.0,
                                        linestyle=(0, (3, 2))))
            ax.text(1.65, (values["MTSR"] + values["T_end"]) / 2, "decomposition",
                    va="center", ha="right", color=GREY, fontsize=8, rotation=90)
        ax.set_ylabel("T / K")
        if cls is not None:
            ax.set_title(f"criticality class {cls}", loc="left", color=INK, fontsize=9)
        return svg_text(fig)

    svg = with_style(draw)
    rows = tuple((LADDER_TEXT.get(label, label), f"{t:.2f}", f"{t - ZERO_CELSIUS:.2f}", meaning)
                 for label, t, meaning in levels)
    order = " < ".join(LADDER_TEXT.get(label, label) for label, _, _ in levels)
    cls_text = f"criticality class {cls}" if cls is not None else "criticality class not assessed"
    caption = (f"Temperatures of the cooling-failure scenario on one scale ({order}); "
               f"{cls_text} (Stoessel). The solid arrow is the rise from the accumulated "
               "synthesis reaction, the dashed one the further rise if the decomposition follows.")
    return Figure("ladder", "Temperature ladder of the runaway scenario", caption,
                  f"Temperature levels of the runaway scenario: {order}; {cls_text}.",
                  ("level", "T / K", "t / °C", "meaning"), rows, svg)


# --------------------------------------------------------------------------
# species curves

def species_range(record: "SpeciesRecord") -> tuple[float, float]:
    m = record.model
    lo = float(m.t_min)
    hi = float(min(m.t_max, max(lo + 400.0, 1500.0)))
    return lo, hi


class _Record:
    """A species record compared by its digest (so that its figure can be remembered)."""

    __slots__ = ("record", "key")

    def __init__(self, record: "SpeciesRecord"):
        self.record = record
        self.key = record.digest()

    def __hash__(self) -> int:
        return hash(self.key)

    def __eq__(self, other: object) -> bool:
        return isinstance(other, _Record) and other.key == self.key


def species_figure(record: "SpeciesRecord") -> Figure:
    """Cp, H, S and G = H − TS of one species over (part of) its data range.

    The same record (same digest) always gives the same figure, so it is drawn once.
    """
    return _species_figure(_Record(record))


@functools.lru_cache(maxsize=512)
def _species_figure(held: _Record) -> Figure:
    record = held.record
    lo, hi = species_range(record)
    T = np.linspace(lo, hi, 300)
    m = record.model
    cp = np.asarray(m.cp(T), dtype=float)
    h = np.asarray(m.h(T), dtype=float) / 1e3
    s = np.asarray(m.s(T), dtype=float)
    g = h - T * s / 1e3
    panels = ((r"$C_p^\circ$ / J mol$^{-1}$ K$^{-1}$", cp), (r"$H^\circ$ / kJ mol$^{-1}$", h),
              (r"$S^\circ$ / J mol$^{-1}$ K$^{-1}$", s), (r"$G^\circ = H^\circ - TS^\circ$ / kJ mol$^{-1}$", g))

    def draw():
        fig = new_figure(6.4, 4.6, top_axis=False)
        fig.subplots_adjust(left=0.1, right=0.98, wspace=0.32, hspace=0.12, top=0.97)
        axes = fig.subplots(2, 2, sharex=True)
        for ax, (label, y) in zip(axes.flat, panels):
            ax.plot(T, y, color=BLUE)
            if lo <= T_REF <= hi:
                ax.axvline(T_REF, color=GREY, linewidth=0.7, linestyle=(0, (2, 2)))
            ax.set_ylabel(label, fontsize=8)
        for ax in axes[1]:
            ax.set_xlabel("T / K")
        return svg_text(fig)

    svg = with_style(draw)
    step = _nice_step((hi - lo) / 8.0)
    pts = sorted({lo, hi, *([T_REF] if lo <= T_REF <= hi else []),
                  *np.arange(math.ceil(lo / step) * step, hi, step).tolist()})
    rows = []
    for t in pts:
        ta = np.array([t])
        hv = float(m.h(ta)[0]) / 1e3
        sv = float(m.s(ta)[0])
        rows.append((f"{t:.2f}", cell(float(m.cp(ta)[0])), cell(hv, 3), cell(sv), cell(hv - t * sv / 1e3, 3)))
    caption = (f"Heat capacity, enthalpy (formation scale), entropy and Gibbs energy of "
               f"{record.name} ({record.phase}) from {lo:.0f} to {hi:.0f} K by its "
               f"{m.kind} model; the dotted line marks 298.15 K.")
    return Figure("curves", f"Cp, H, S and G of {record.name}", caption,
                  f"Four panels: Cp°, H°, S° and G° of {record.name} against temperature, "
                  f"{lo:.0f}–{hi:.0f} K.",
                  ("T / K", "Cp° / J mol⁻¹ K⁻¹", "H° / kJ mol⁻¹", "S° / J mol⁻¹ K⁻¹",
                   "G° / kJ mol⁻¹"), tuple(rows), svg)


# --------------------------------------------------------------------------
# formulas for print (weasyprint does not typeset MathML)

@functools.lru_cache(maxsize=256)
def formula_svg(latex: str, fontsize: float = 10.0) -> str:
    """One line of LaTeX mathematics as SVG, sized to the formula.

    matplotlib's mathtext lays the formula out once; its glyphs are written as
    text (one ``<tspan>`` per glyph at its place, the form matplotlib's own SVG
    writer gives mathematics when text stays text) and its fraction bars as
    rectangles.  (Drawn through a matplotlib figure instead, each formula was
    laid out three times: to size the figure, to place the text, to draw it.)
    Remembered per process: the general forms serve every packet of a build."""

    def draw():
        from matplotlib.font_manager import FontProperties
        from matplotlib.mathtext import MathTextParser

        text = "$" + latex.replace(r"\frac", r"\dfrac") + "$"  # fractions in display style
        parsed = MathTextParser("path").parse(text, 72, FontProperties(size=fontsize))
        return formula_svg_text(parsed, pad=2.0)

    return with_style(draw)


def formula_svg_text(parsed, pad: float) -> str:
    """The SVG of a mathtext ``VectorParse`` (sizes in points), ``pad`` points around it."""
    from matplotlib.font_manager import ttfFontProperty

    width, height, depth, glyphs, rects = parsed
    w, h = width + 2 * pad, height + 2 * pad
    spans: dict[str, list[tuple[float, float, int]]] = {}
    for font, size, code, *_index, x, y in glyphs:
        f = ttfFontProperty(font)
        style = [f"font-style: {f.style}"] if f.style != "normal" else []
        style += [f"font-variant: {f.variant}"] if f.variant != "normal" else []
        style += [f"font-weight: {f.weight}"] if f.weight != 400 else []
        style += [f"font-size: {_svg_num(size)}px", f"font-family: {f.name!r}"]
        style += [f"font-stretch: {f.stretch}"] if f.stretch != "normal" else []
        spans.setdefault("; ".join(style + [f"fill: {INK}"]), []).append(
            (x, -y, 0xA0 if code == 32 else code))
    out = ['<?xml version="1.0" encoding="utf-8" standalone="no"?>',
           f'<svg xmlns="http://www.w3.org/2000/svg" width="{_svg_num(w)}pt" '
           f'height="{_svg_num(h)}pt" viewBox="0 0 {_svg_num(w)} {_svg_num(h)}" version="1.1">',
           f' <g style="fill: {INK}" transform="translate({_svg_num(pad)} '
           f'{_svg_num(h - depth - pad)})">', "  <text>"]
    for style, chars in spans.items():
        out += [f'   <tspan x="{_svg_num(x)}" y="{_svg_num(y)}" style="{style}">'
                f"{html.escape(chr(c), quote=False)}</tspan>" for x, y, c in sorted(chars)]
    out.append("  </text>")
    out += [f'  <rect x="{_svg_num(x)}" y="{_svg_num(-y - 1)}" width="{_svg_num(rw)}" '
            f'height="{_svg_num(rh)}"/>' for x, y, rw, rh in rects]
    out += [" </g>", "</svg>", ""]
    return "\n".join(out)


def _svg_num(x: float) -> str:
    """A coordinate as matplotlib's SVG writer gives it: fixed point, no trailing zeros."""
    return f"{x:f}".rstrip("0").rstrip(".")


#: Shades of the criticality classes 1..5 in the envelope, pale to dark (each class is
#: also written on its region, so the map never relies on colour alone).
CLASS_SHADES = ("#eef2f4", "#c9d6de", "#97afbf", "#5f8099", "#2c4a60")


def envelope_figure(env: "Envelope", safety: "Safety") -> Figure:
    """The criticality class over process temperature × accumulation, the case and its
    variants marked."""
    T, X = np.array(env.T_K), np.array(env.accumulation) * 100.0
    K = np.array(env.classes)

    def draw():
        fig = new_figure(6.4, 3.8)
        ax = fig.add_subplot()
        curves = {name: np.array(x) * 100.0 for name, x in env.boundaries}
        mtt, td = curves["MTSR = MTT"], curves["MTSR = TD24"]
        top = np.full(T.shape, 100.0)
        if safety.mtt_K < safety.td24_K:   # classes 1, 3, 4 from the bottom up
            layers = ((1, 0 * top, np.minimum(mtt, top)),
                      (3, np.minimum(mtt, top), np.minimum(td, top)),
                      (4, np.minimum(td, top), top))
        else:                              # classes 2 and 5
            layers = ((2, 0 * top, np.minimum(td, top)), (5, np.minimum(td, top), top))
        for k, lo, hi in layers:
            ax.fill_between(T, lo, hi, where=hi > lo, color=CLASS_SHADES[k - 1], linewidth=0,
                            interpolate=True)
            inner = slice(len(T) // 5, len(T) - len(T) // 5)  # labels clear of the edges
            if np.any((hi - lo)[inner] > 5.0):
                j = inner.start + int(np.argmax((hi - lo)[inner]))
                ax.text(T[j], (lo[j] + hi[j]) / 2, f"class {k}", ha="center", va="center",
                        color="white" if k >= 4 else INK, fontsize=8)
        for name, x in curves.items():
            ax.plot(T, np.where(x <= 100.0, x, np.nan), color=INK, linewidth=0.8,
                    linestyle="-" if "TD24" in name else (0, (4, 2)), label=name)
        ax.set_ylim(0.0, 100.0)
        ax.set_xlim(T.min(), T.max())
        ax.legend(loc="upper right", fontsize=7, framealpha=0.9)
        for n, (label, tp, acc) in enumerate(env.points):
            ax.plot([tp], [acc * 100.0], marker="o" if n == 0 else "s", markersize=6,
                    markerfacecolor=INK if n == 0 else "white", markeredgecolor=INK, zorder=3)
            ax.annotate(label, (tp, acc * 100.0), textcoords="offset points", xytext=(5, 4),
                        color=INK, fontsize=8, zorder=3)
        ax.set_xlabel("process temperature T / K")
        ax.set_ylabel("accumulation / %")
        celsius_axis(ax)
        return svg_text(fig)

    svg = with_style(draw)
    rows = tuple((label, f"{tp:.2f}", f"{tp - ZERO_CELSIUS:.2f}", f"{acc * 100:.1f}",
                  str(int(K[np.abs(X - acc * 100).argmin(), np.abs(T - tp).argmin()])))
                 for label, tp, acc in env.points)
    seen = sorted(set(K.flat) - {0})
    caption = (f"Criticality class over process temperature ({T.min():.0f}–{T.max():.0f} K) "
               "and accumulation (0–100 %), every other input as the case gives it: MTSR = "
               f"T_p + X·ΔT_ad(T_p) against the MTT {kelvin_celsius(safety.mtt_K, 1)} and "
               f"TD24 {kelvin_celsius(safety.td24_K, 1)}. The filled circle is this case, "
               "the squares its variants (a variant that also changes other inputs has its own "
               "class in the variants table).")
    return Figure("envelope", "Operating envelope", caption,
                  f"Map of criticality classes {', '.join(map(str, seen))} over process "
                  f"temperature and accumulation, with this case and its variants marked.",
                  ("point", "T / K", "t / °C", "accumulation / %", "class on the map"),
                  rows, svg)


def case_figures(thermo: "ReactionThermo", assessment) -> tuple[Figure, ...]:
    """All figures of one case, in page order."""
    t = assessment.thermo
    figs = [gibbs_figure(thermo, t.window_K, t.data_range_K, t.crossovers, t.profile),
            conversion_figure(t.profile, t.pressure_bar, t.basis, t.equilibrium_mode,
                              t.equilibrium_note),
            entropy_figure(t.profile)]
    if assessment.safety is not None:
        lad = ladder_figure(assessment.safety)
        if lad is not None:
            figs.append(lad)
    if assessment.envelope is not None:
        figs.append(envelope_figure(assessment.envelope, assessment.safety))
    return tuple(figs)


__all__ = ["Figure", "CLASS_SHADES", "case_figures", "envelope_figure", "conversion_figure", "entropy_figure", "formula_svg",
           "gibbs_figure", "ladder_figure", "ladder_levels", "species_figure"]
