"""The uncertainty of a figure as the pages and the terminal write it.

One source for both: the criticality class with its probabilities
("class 4 (82 %), class 3 (18 %)"), a 95 % interval beside a figure, and the
list of what carried an uncertainty.  The numbers come from
:mod:`dossier.assess.uncertainty`.
"""
from __future__ import annotations

from dossier import number_policy as policy
from dossier.model.assessment import Safety
from dossier.render.numbers import NBSP

#: Below this share a class is not named beside the most likely one.
LEAST_SHARE = 0.005


def class_text(safety: Safety | None) -> str:
    """'class 3', or 'class 4 (82 %), class 3 (18 %)' where the stated uncertainties leave
    more than one class possible; 'not assessed' without a class."""
    if safety is None or not safety.criticality_class:
        return "not assessed"
    shares = [(k, p) for k, p in safety.criticality_class_probabilities if p >= LEAST_SHARE]
    if len(shares) <= 1:
        return f"class {safety.criticality_class}"
    return ", ".join(f"class {k} ({_share(p)})" for k, p in shares)


def _share(p: float) -> str:
    if p > 0.995:
        return f">{NBSP}99{NBSP}%"
    if p < 0.01:
        return f"<{NBSP}1{NBSP}%"
    return f"{p * 100:.0f}{NBSP}%"


def interval_text(pair, unit: str, nominal: float | None = None) -> str:
    """'95 % interval 359 to 375 K' (digits and unit scale by the number policy, as for
    the ``nominal`` figure beside it), or '' when there is no interval or it has no width
    at the digits printed (nothing uncertain was stated)."""
    return policy.interval(pair, unit, nominal)


def profile_banded(thermo) -> bool:
    """True when the profile's ΔG° intervals have a width worth printing (0.005 kJ/mol)."""
    return any(r.dG_low_kJ_mol is not None and r.dG_high_kJ_mol is not None
               and r.dG_high_kJ_mol - r.dG_low_kJ_mol >= 0.005 for r in thermo.profile)


def conversion_banded(thermo) -> bool:
    """True when some conversion's interval is wide enough to print (0.005 percentage
    points, the digits of the conversion column); 100.00 to 100.00 says nothing."""
    return any(r.conversion_low is not None and r.conversion_high is not None
               and (r.conversion_high - r.conversion_low) * 100 >= 0.005
               for r in thermo.profile)


def stated_text(safety: Safety | None) -> str:
    """What the intervals rest on, in one sentence."""
    if safety is None or not safety.samples:
        return ""
    if not safety.uncertain_inputs:
        return ("No input of this case states an uncertainty, so its figures are printed "
                "without intervals.")
    return (f"Intervals are central 95{NBSP}% intervals from {policy.count(safety.samples)} Monte "
            "Carlo draws "
            f"of the stated uncertainties of: {', '.join(safety.uncertain_inputs)}. Every "
            "other input is taken as exact.")


__all__ = ["LEAST_SHARE", "class_text", "conversion_banded", "interval_text", "profile_banded",
           "stated_text"]
