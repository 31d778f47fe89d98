"""The words for a figure's uncertainty, shared by the pages and the terminal."""
from __future__ import annotations

import dataclasses

from dossier.model.assessment import Safety
from dossier.render.intervals import class_text, interval_text, stated_text

NB = "\u00a0"


def safety(**kw) -> Safety:
    base = dict(scale=None, adiabatic_rise_K=None, severity=None, mtsr_K=None, mtt_K=None,
                td24_K=None, td24_origin=None, tmrad_at_mtsr_h=None, probability=None,
                probability_basis=None, criticality_class=None, criticality_reason="",
                decomposition_rise_K=None, final_temperature_K=None, release_rate_kW=None,
                cooling_capacity_kW=None, cooling_margin_kW=None, cooling_sufficient=None,
                gas_volume_normal_m3=None, pressure_at_mtsr_bar=None, design_pressure_bar=None,
                pressure_exceeds_design=None, not_assessed=(), missing_inputs=(), notes=())
    base.update(kw)
    return Safety(**base)


def test_class_text_names_every_possible_class_most_likely_first():
    s = safety(criticality_class=4, criticality_class_probabilities=((4, 0.82), (3, 0.18)))
    assert class_text(s) == f"class 4 (82{NB}%), class 3 (18{NB}%)"
    s = dataclasses.replace(s, criticality_class_probabilities=((4, 1.0),))
    assert class_text(s) == "class 4"
    # a share below half a percent is not named beside the others
    s = dataclasses.replace(s, criticality_class_probabilities=((4, 0.997), (3, 0.003)))
    assert class_text(s) == "class 4"
    assert class_text(safety()) == "not assessed" and class_text(None) == "not assessed"


def test_interval_text_is_empty_without_width():
    # half-width 3.1 K: one digit, so whole kelvin (number policy)
    assert interval_text((359.67, 365.84), "K") == f"95{NB}% interval 360 to 366{NB}K"
    assert interval_text((359.67, 360.84), "K") == f"95{NB}% interval 359.7 to 360.8{NB}K"
    assert interval_text((391.6, 391.6), "K") == ""
    assert interval_text(None, "K") == ""
    # no width known: the end at the default three figures
    assert interval_text((1.0, None), "h") == f"95{NB}% interval 1.00 to unbounded{NB}h"


def test_stated_text_says_what_carried_an_uncertainty():
    s = safety(samples=4000, uncertain_inputs=("the accumulation (charge.accumulation)",))
    # a four-digit count is not grouped (number policy)
    assert stated_text(s) == (f"Intervals are central 95{NB}% intervals from 4000 Monte Carlo "
                              "draws of the stated uncertainties of: the accumulation "
                              "(charge.accumulation). Every other input is taken as exact.")
    assert stated_text(safety(samples=4000)).startswith("No input of this case states")
    assert stated_text(safety()) == ""
