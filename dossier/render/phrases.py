"""The phrases the terminal and the pages both show, written once.

The crossover summary (with the temperatures actually searched), the rows of
the runaway scenario's results, the cautions, and the page forms of the
assessment's texts: symbols typeset (``T_p`` → T<sub>p</sub>) and case-file
keys and model codes in words.  :mod:`dossier.render.terminal` prints these
strings as they are; the templates print the same strings through
:func:`board_html`, which only typesets symbols and puts identifiers in words,
so the two cannot drift (``tests/unit/render/test_same_texts.py`` compares
them case by case).
"""
from __future__ import annotations

import re

from html import escape

from dossier import number_policy as policy
from dossier.model.assessment import Safety, Thermodynamics
from dossier.render.intervals import class_text, interval_text
from dossier.temperature import kelvin_celsius


# -- crossovers -----------------------------------------------------------------
def searched_range(t: Thermodynamics) -> tuple[float, float]:
    """The temperatures the crossover search covered: the window, widened to the species
    data's common range (the evaluation clips that range to the method settings' scan
    limits; ``crossover_search_K`` carries the range used where the assessment has it)."""
    searched = t.crossover_search_K
    if searched:
        return searched
    lo, hi = t.window_K
    return min(lo, t.data_range_K[0]), max(hi, t.data_range_K[1])


def crossover_text(t: Thermodynamics) -> str:
    """'none between 279.0 and 356.0 K (the temperatures searched)', or each crossover
    with its direction and whether it lies in the window."""
    if not t.crossovers:
        lo, hi = searched_range(t)
        return (f"none between {policy.fixed(lo, 1, group=False)} and "
                f"{policy.fixed(hi, 1, group=False)}{policy.UNIT_SPACE}K (the temperatures "
                "searched)")
    lo, hi = t.window_K
    intervals = t.crossover_intervals_K or ((None, None),) * len(t.crossovers)
    parts = []
    for c, pair in zip(t.crossovers, intervals):
        where = "in the window" if lo <= c.T <= hi else "outside the window"
        band = interval_text(pair, "K", c.T) if pair and None not in pair else ""
        parts.append(f"{kelvin_celsius(c.T, interval=pair if band else None)}, {c.direction}, "
                     f"{where}" + (f" ({band})" if band else ""))
    return "; ".join(parts)


# -- the runaway scenario's results ------------------------------------------------
def _with(text: str, pair, unit: str, nominal) -> str:
    band = interval_text(pair, unit, nominal)
    return f"{text}; {band}" if band else text


def temperature_text(T, pair=None, missing: str = "not assessed", origin: str | None = None) -> str:
    if T is None:
        return missing
    band = interval_text(pair, "K", T)
    return (kelvin_celsius(T, interval=pair if band else None)
            + (f", {origin}" if origin else "") + (f"; {band}" if band else ""))


def safety_rows(s: Safety) -> tuple[tuple[str, str], ...]:
    """(label, text) of each result of the cooling-failure scenario, as both the terminal
    and the dossier page list them; symbols in the plain form (ΔT_ad)."""
    sc = s.scale
    rise = ("not assessed" if s.adiabatic_rise_K is None else
            _with(policy.quantity(s.adiabatic_rise_K, "K", s.adiabatic_rise_interval_K),
                  s.adiabatic_rise_interval_K, "K", s.adiabatic_rise_K) + (f"; severity {s.severity}" if s.severity else ""))
    td24 = temperature_text(s.td24_K, s.td24_interval_K, origin=s.td24_origin)
    tmrad = ("not assessed" if s.tmrad_at_mtsr_h is None else
             _with(policy.quantity(s.tmrad_at_mtsr_h, "h", s.tmrad_at_mtsr_interval_h),
                   s.tmrad_at_mtsr_interval_h, "h", s.tmrad_at_mtsr_h)
             + (f"; probability {s.probability}" if s.probability else ""))
    if s.cooling_capacity_kW is not None:
        cooling = (f"mean release rate {policy.quantity(s.release_rate_kW, 'kW')} against a "
                   f"capacity U·A·(T_p − T_coolant) of {policy.quantity(s.cooling_capacity_kW, 'kW')}: "
                   f"margin {policy.quantity(s.cooling_margin_kW, 'kW')}, "
                   + ("sufficient" if s.cooling_sufficient else "not sufficient"))
    else:
        cooling = "not assessed"
    no_gas = sc is not None and sc.gas_mol <= 0
    if no_gas:
        gas = "no gas released"
    elif s.gas_volume_normal_m3 is not None:
        gas = (f"{policy.quantity(s.gas_volume_normal_m3, 'm³')} at 0{policy.UNIT_SPACE}°C and "
               f"1.01325{policy.UNIT_SPACE}bar"
               + (f" ({policy.quantity(sc.gas_mol, 'mol')})" if sc else ""))
    else:
        gas = "not assessed"
    if no_gas:
        pressure = "no gas released"
    elif s.pressure_at_mtsr_bar is not None:
        pressure = _with(policy.quantity(s.pressure_at_mtsr_bar, "bar",
                                         s.pressure_at_mtsr_interval_bar),
                         s.pressure_at_mtsr_interval_bar, "bar", s.pressure_at_mtsr_bar)
        if s.design_pressure_bar is not None:
            pressure += (f" against a design pressure of "
                         f"{policy.given(s.design_pressure_bar, 'bar')}: "
                         + ("exceeds it" if s.pressure_exceeds_design else "within it"))
    else:
        pressure = "not assessed"
    return (
        ("adiabatic rise ΔT_ad", rise),
        ("MTSR", temperature_text(s.mtsr_K, s.mtsr_interval_K)),
        ("MTT", temperature_text(s.mtt_K, missing="not given")),
        ("TD24", td24),
        ("TMRad at the MTSR", tmrad),
        ("criticality class", class_text(s)),
        ("decomposition rise", policy.quantity(s.decomposition_rise_K, "K")),
        ("after decomposition", temperature_text(s.final_temperature_K)),
        ("cooling", cooling),
        ("gas evolved", gas),
        ("pressure at the MTSR", pressure),
    )


def not_assessed_rows(s: Safety | None) -> tuple[tuple[str, str], ...]:
    """(figure, what it needs) of each figure that could not be assessed."""
    if s is None:
        return ()
    return tuple((fig, "; ".join(miss)) for fig, miss in s.not_assessed)


# -- page forms: symbols typeset, identifiers in words ------------------------------
#: Symbols written with an underscore in the plain texts, and their typeset form.
SYMBOLS: dict[str, str] = {
    "ΔT_ad": "ΔT<sub>ad</sub>", "T_p": "T<sub>p</sub>", "X_acc": "X<sub>acc</sub>",
    "T_process": "T<sub>process</sub>", "T_coolant": "T<sub>coolant</sub>",
    "T_b": "T<sub>b</sub>", "X_eq": "X<sub>eq</sub>", "q_surr": "q<sub>surr</sub>",
    "ΔS_surr": "ΔS<sub>surr</sub>", "ΔS_univ": "ΔS<sub>univ</sub>", "c_p": "c<sub>p</sub>",
    "p_initial": "p<sub>0</sub>", "p_0": "p<sub>0</sub>",
    "ΔH_measured": "ΔH<sub>measured</sub>", "ΔG_r": "Δ<sub>r</sub>G", "ΔH_r": "Δ<sub>r</sub>H",
}
_SYMBOL_RE = re.compile("(?<![\\w.])(" + "|".join(
    re.escape(k) for k in sorted(SYMBOLS, key=len, reverse=True)) + ")(?![\\w])")

#: Model codes and unit spellings of the case file, in words.
CODE_WORDS: dict[str, str] = {
    "nasa7": "NASA 7-coefficient polynomials", "shomate": "Shomate equation",
    "constant-cp": "constant heat capacity", "degC": "°C", "degF": "°F",
}
_CODE_RE = re.compile(r"(?<![\w.-])(" + "|".join(map(re.escape, CODE_WORDS)) + r")(?![\w-])")

#: A case-file key ("decomposition.activation_energy"), with its words in brackets
#: after it when the text gives them.
_KEY_RE = re.compile(r"(?<![\w.])(charge|vessel|decomposition|measured|equilibrium|reaction)"
                     r"\.([a-z_]+(?:\.[a-z_]+)*)(?: \(([^()]*)\))?")


def key_words(match: re.Match) -> str:
    """A case-file key as words: its own explanation where the text gives one,
    else the key read out ("decomposition.activation_energy" → "the decomposition's
    activation energy")."""
    table, path, said = match.group(1), match.group(2), match.group(3)
    if said:
        return said
    return f"the {table}'s {path.replace('.', ' ').replace('_', ' ')}"


def in_words(text: str) -> str:
    """A text of the assessment with case-file keys and model codes in words (the
    page form, plain text)."""
    return _CODE_RE.sub(lambda m: CODE_WORDS[m.group(1)], _KEY_RE.sub(key_words, text))


def board_html(text) -> str:
    """The page form of a plain text as HTML: escaped, keys and codes in words, symbols
    typeset (the template filter marks it safe)."""
    escaped = escape(in_words(str(text)), quote=True)
    return _SYMBOL_RE.sub(lambda m: SYMBOLS[m.group(1)], escaped)


__all__ = ["CODE_WORDS", "SYMBOLS", "board_html", "crossover_text", "in_words",
           "not_assessed_rows", "safety_rows", "searched_range", "temperature_text"]
