"""Stated uncertainties carried into a case's figures, the class probabilities, the
borderline finding, the what-if variants and the operating envelope (issue 13, parts
1 to 4)."""
from __future__ import annotations

import dataclasses
import json
import math

import pytest

from dossier.assess.evaluate import evaluate
from dossier.casefile.load import parse_case_text
from dossier.engine.settings import DEFAULT
from dossier.library.lookup import Library
from dossier.render.intervals import class_text

LIB = Library.default()
RX = "C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)"


def case_text(cp="1.9 kJ/(kg*K)", acc="35 %", extra="", measured='"-545 kJ/mol"'):
    return ('+++\ntitle = "test"\nrevision = 1\nstatus = "draft"\n'
            f'reaction = "{RX}"\ntemperature = ["40 degC", "80 degC"]\npressure = "5 bar"\n'
            '[charge]\nbasis = "C6H5NO2(l)"\namount = "120 kg"\nmass = "950 kg"\n'
            f'cp = "{cp}"\nprocess_temperature = "60 degC"\naccumulation = "{acc}"\n'
            'feed_time = "4 h"\n'
            '[vessel]\nmtt = "100 degC"\ncooling_ua = "2.5 kW/K"\ncoolant_temperature = "15 degC"\n'
            '[decomposition]\nenergy = "450 J/g"\nactivation_energy = "110 kJ/mol"\n'
            'rate = { temperature = "180 degC", power = "25 W/kg" }\n'
            f'[measured]\nreaction_enthalpy = {measured}\nmethod = "calorimetry"\n'
            + extra + "+++\n")


def evaluation(text, settings=DEFAULT):
    return evaluate(parse_case_text(text, "inline.md"), LIB, settings=settings)


def borderline(a):
    return [f for f in a.findings if f.rule == "borderline"]


def test_mtsr_half_width_from_the_accumulation_alone_is_linear():
    # hand calculation (linear propagation): MTSR = T_p + X dT_ad, so with only X
    # uncertain the MTSR's 95 % half-width is dT_ad * u_X
    a = evaluation(case_text(acc="35 ± 5 %")).assessment
    s = a.safety
    lo, hi = s.mtsr_interval_K
    assert (hi - lo) / 2 == pytest.approx(s.adiabatic_rise_K * 0.05, rel=0.03)
    assert s.adiabatic_rise_interval_K[1] - s.adiabatic_rise_interval_K[0] == pytest.approx(0.0)


def test_a_case_a_few_kelvin_from_a_class_boundary_shows_two_classes_and_borderline():
    # accumulation 20 %: MTSR about 392 K against TD24 391.6 K, with cp known to +-0.15
    e = evaluation(case_text(cp="1.9 ± 0.15 kJ/(kg*K)", acc="20 %"))
    s = e.assessment.safety
    assert abs(s.mtsr_K - s.td24_K) < 5.0
    probs = dict(s.criticality_class_probabilities)
    assert set(probs) == {3, 4} and sum(probs.values()) == pytest.approx(1.0)
    assert min(probs.values()) > 0.2
    text = class_text(s)
    assert text.startswith(f"class {max(probs, key=probs.get)} (") and ", class " in text
    found = borderline(e.assessment)
    assert any(f.text.startswith("MTSR below TD24: margin ") and "includes zero" in f.text
               for f in found)
    assert all(f.severity == "warning" for f in found)


def test_no_uncertainty_no_borderline_and_a_certain_class():
    a = evaluation(case_text(measured='"-545 kJ/mol"')).assessment
    assert borderline(a) == []
    assert a.safety.criticality_class_probabilities == ((4, 1.0),)
    assert class_text(a.safety) == "class 4"


def test_the_json_carries_every_interval_key():
    d = evaluation(case_text(cp="1.9 ± 0.15 kJ/(kg*K)")).assessment.to_dict()
    for row in d["profile"]:
        for key in ("dG_low_kJ_mol", "dG_high_kJ_mol", "conversion_low", "conversion_high"):
            assert key in row
        assert row["dG_low_kJ_mol"] <= row["dG_kJ_mol"] + 1e-6 <= row["dG_high_kJ_mol"] + 2e-6
    assert "crossover_intervals_K" in d
    s = d["safety"]
    for key in ("mtsr_interval_K", "td24_interval_K", "tmrad_at_mtsr_interval_h"):
        assert len(s[key]) == 2 and s[key][0] <= s[key][1]
    assert s["samples"] == DEFAULT.uncertainty_samples
    assert sum(s["criticality_class_probabilities"].values()) == pytest.approx(1.0)
    json.dumps(d)  # JSON-ready


def test_the_same_case_gives_the_same_intervals_every_time():
    t = case_text(cp="1.9 ± 0.15 kJ/(kg*K)", acc="20 ± 3 %")
    assert evaluation(t).assessment.to_dict() == evaluation(t).assessment.to_dict()


def test_species_uncertainty_reaches_the_profile_as_root_sum_of_squares():
    # a case-local species with only a hf uncertainty: the 95 % half-width of ΔrG° (and
    # ΔrH°) at every temperature is |nu| * u (GUM linear propagation); the library
    # species add their own ATcT half-widths in quadrature, read from the records
    species = ('[[species]]\nname = "aniline"\nformula = "C6H7N"\nphase = "l"\n'
               'hf = "31.3 kJ/mol"\ns = "191.9 J/(mol*K)"\ncp = "191.9 J/(mol*K)"\n'
               'source = "test value"\nuncertainty = { hf = "8 kJ/mol" }\n')
    text = ('+++\ntitle = "t"\nrevision = 1\nstatus = "draft"\n'
            f'reaction = "C6H5NO2(l) + 3 H2(g) -> aniline(l) + 2 H2O(l)"\n'
            'temperature = ["40 degC", "80 degC"]\n' + species + "+++\n")
    e = evaluation(text)
    us = [dict(r.uncertainty).get("hf", 0.0) for r in e.reaction_records]
    nus = (-1, -3, 1, 2)
    expected = math.sqrt(sum((nu * u) ** 2 for nu, u in zip(nus, us))) / 1e3
    assert expected == pytest.approx(8.0, rel=0.01)  # the local species dominates
    for row in e.assessment.thermo.profile:
        assert (row.dG_high_kJ_mol - row.dG_low_kJ_mol) / 2 == pytest.approx(expected, rel=0.05)
        assert (row.dH_high_kJ_mol - row.dH_low_kJ_mol) / 2 == pytest.approx(expected, rel=0.05)


def test_a_crossover_gets_an_interval_and_borderline_at_the_process_temperature():
    # N2O4 -> 2 NO2 crosses zero near 330 K (ΔrH° 57.2 kJ/mol, ΔrS° 175.8 J/(mol K), CRC
    # Handbook standard data, from memory); with a local N2O4 whose hf carries
    # +-5 kJ/mol the crossover moves by about u / ΔrS° = 5000 / 176 = 28 K (hand
    # estimate), so a process temperature at the crossover is borderline
    text = ('+++\ntitle = "t"\nrevision = 1\nstatus = "draft"\n'
            'reaction = "dimer(g) -> 2 NO2(g)"\n'
            'temperature = ["300 K", "360 K"]\n'
            '[charge]\nbasis = "dimer(g)"\namount = "100 mol"\nmass = "10 kg"\n'
            'cp = "1 kJ/(kg*K)"\nprocess_temperature = "330 K"\naccumulation = "0 %"\n'
            '[[species]]\nname = "dimer"\nformula = "N2O4"\nphase = "g"\n'
            'hf = "11.1 kJ/mol"\ns = "304.4 J/(mol*K)"\ncp = "79.2 J/(mol*K)"\n'
            'source = "CRC Handbook, N2O4(g) at 298.15 K"\nuncertainty = { hf = "5 kJ/mol" }\n'
            '+++\n')
    a = evaluation(text).assessment
    t = a.thermo
    assert len(t.crossover_intervals_K) == len(t.crossovers) == 1
    (lo, hi), c = t.crossover_intervals_K[0], t.crossovers[0]
    assert 310.0 < c.T < 350.0 and lo < c.T < hi
    assert (hi - lo) / 2 == pytest.approx(5000.0 / 175.8, rel=0.25)
    found = [f for f in borderline(a) if f.text.startswith("The crossover at")]
    assert len(found) == 1 and "includes the process temperature" in found[0].text


def test_a_board_policy_sets_the_severity_of_the_borderline_finding():
    t = case_text(cp="1.9 ± 0.15 kJ/(kg*K)", acc="20 %")
    strict = dataclasses.replace(DEFAULT, limit_findings=DEFAULT.limit_findings[:2]
                                 + (("borderline", "critical"),))
    assert {f.severity for f in borderline(evaluation(t, strict).assessment)} == {"critical"}


# --------------------------------------------------------------------------
# variants and the envelope

VARIANTS = ('[[variant]]\nname = "slower dosing"\ncharge.feed_time = "8 h"\n'
            'charge.accumulation = "20 %"\n\n'
            '[[variant]]\nname = "weak cooling"\nvessel.cooling_ua = "0.5 kW/K"\n')


def test_a_variant_is_assessed_as_the_case_with_its_values():
    a = evaluation(case_text(extra=VARIANTS)).assessment
    slow, weak = a.variants
    # independent route: the same values written into the case itself
    direct = evaluation(case_text(acc="20 %").replace('feed_time = "4 h"',
                                                      'feed_time = "8 h"')).assessment
    assert slow.safety.mtsr_K == pytest.approx(direct.safety.mtsr_K, rel=1e-12)
    assert slow.safety.criticality_class == direct.safety.criticality_class
    assert [f.rule for f in slow.findings] == [f.rule for f in direct.findings]
    assert weak.safety.cooling_margin_kW < 0 < a.safety.cooling_margin_kW
    assert "cooling-shortfall" in [f.rule for f in weak.findings]
    d = a.to_dict()
    assert [v["name"] for v in d["variants"]] == ["slower dosing", "weak cooling"]
    assert d["variants"][0]["changes"][1] == {"key": "charge.accumulation", "value": "20 %"}


def test_the_envelope_agrees_with_the_case_and_its_boundaries():
    a = evaluation(case_text(extra=VARIANTS)).assessment
    env, s = a.envelope, a.safety
    assert env is not None and env.points[0][0] == "this case"
    # the class on the grid nearest the case's point is the case's class
    j = min(range(len(env.T_K)), key=lambda k: abs(env.T_K[k] - env.points[0][1]))
    i = min(range(len(env.accumulation)), key=lambda k: abs(env.accumulation[k] - 0.35))
    assert env.classes[i][j] == s.criticality_class
    # on the boundary "MTSR = TD24" the MTSR is TD24: T + X dT_ad = TD24 (hand check at
    # the case's own temperature, where dT_ad is the case's)
    curve = dict(env.boundaries)["MTSR = TD24"]
    x = curve[j]
    assert env.T_K[j] + x * s.adiabatic_rise_K == pytest.approx(s.td24_K, rel=1e-9) \
        or not 0.0 < x < 1.0


def test_no_envelope_without_td24():
    text = case_text().replace('activation_energy = "110 kJ/mol"\n', '').replace(
        'rate = { temperature = "180 degC", power = "25 W/kg" }\n', '')
    assert evaluation(text).assessment.envelope is None
