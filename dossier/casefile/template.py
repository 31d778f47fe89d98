"""New case files: a template with every key of the case format, explained.

:func:`case_template` returns the text of a new case file.  Every key that
:data:`dossier.casefile.schema.SCHEMA` defines appears in it, each with a comment
saying what it means, its unit and whether it is required.  Only the
required top-level keys are active; every optional key and every optional
table is commented out (``# key = ...``), so that nothing invented is
computed: a newcomer removes the ``#`` in front of a line when they have the
real value.  With a reaction given, the file loads and can be assessed as it
stands (the window is then the one starting value to replace).  Without one,
``dossier check`` asks for the reaction.

:func:`write_new_case` writes that template to ``<cases_dir>/<id>.md``; it
never overwrites a file and accepts only safe ids.

The template is built from the schema, so a key added to the schema without
a line of help here is caught by the tests (see :data:`KEY_HELP`).
"""
from __future__ import annotations

import json
import re
from pathlib import Path

from dossier.casefile.schema import DELIMITER, SCHEMA, VARIANT_TABLES, FieldSpec, TableSpec
from dossier.casefile.units import DIMENSIONS
from dossier.chem.phases import split_phase
from dossier.chem.reaction import formula_of, parse_reaction
from dossier.errors import DossierError, Problem

#: Longest case id accepted (the id is the file stem and part of web addresses).
MAX_ID_LENGTH = 64

_ID_RE = re.compile(r"[a-z0-9][a-z0-9-]*")

#: The window written into a new case: a starting value the owner replaces.
STARTING_WINDOW = ('"25 degC"', '"100 degC"')

#: What each key means and what it takes.  Paths as in the schema: table keys
#: are joined with "."; array tables ([[species]], [[review]]) use their name.
_TABLE_HELP: dict[str, str] = {
    # -- top level --------------------------------------------------------
    "format": "Case-file format version. This version of dossier reads format 1.",
    "title": "Short title for the register, the dossier page and the packet.",
    "revision": "Revision of this case: a whole number from 1, raised by one each "
                "time the case is resubmitted to the board.",
    "status": "Where the case stands: draft, submitted, accepted, "
              "accepted-with-conditions, declined or withdrawn.",
    "owner": "Who owns the case: group, building, person.",
    "gate": "The design gate this dossier serves (free text, e.g. laboratory, "
            "pilot, production); the register groups cases by it.",
    "meeting": "Date of the board meeting the case goes to: YYYY-MM-DD, without "
               "quotes.",
    "reaction": "The reaction: species with their phase (g), (l), (s) or (cr), (aq); "
                "coefficients as whole numbers, decimals or fractions; '->' for a "
                "forward reaction, '<=>' for an equilibrium. Use a library name where "
                "a formula is shared by several species (find them with "
                "`dossier species QUERY`).",
    "temperature": "Operating window [low, high], two temperatures with units "
                   "(K, degC, degF), low first.",
    "pressure": "Operating pressure, absolute (bar, kPa, MPa, atm, psi; no gauge "
                "units). Default 1 bar.",
    "inerts": "Gases and liquids fed with the reactants that take no part in the "
              "reaction (a diluent gas, a solvent), as \"species(phase)\" = amount per mol "
              "of the basis species fed (mol). Gases dilute the gas phase and liquids the "
              "liquid solution in the equilibrium.",
    # -- [equilibrium] ------------------------------------------------------
    "equilibrium": "How the equilibrium treats a liquid mixture (optional).",
    "equilibrium.activity_model": "Activities of the liquid solution: \"ideal\" (mole "
                                  "fractions; the default), \"unifac\" or "
                                  "\"unifac-dortmund\" (activity coefficients by group "
                                  "contribution, where the groups of every liquid are known).",
    # -- [charge] -----------------------------------------------------------
    "charge": "The batch. Needed for every figure at scale: heat released, "
              "entropy, adiabatic rise, MTSR, criticality class, gas.",
    "charge.basis": "The reactant the amount refers to, written exactly as in the "
                    "reaction, phase included. Conversions are of this species.",
    "charge.amount": "Mass (kg, g, t, lb) or amount of substance (mol, kmol) of the "
                     "basis species per batch.",
    "charge.mass": "Total reaction mass in the vessel (kg, t) at the worst moment.",
    "charge.cp": "Specific heat capacity of that reaction mass (kJ/(kg*K), J/(g*K)).",
    "charge.process_temperature": "Temperature at which the reaction is run; the "
                                  "runaway scenario starts from it.",
    "charge.accumulation": "Share of the basis species unreacted at the worst "
                           "moment, 0 % to 100 % (100 % for an all-in batch). "
                           "MTSR = T_process + accumulation x adiabatic rise.",
    "charge.feed_time": "Dosing time (h, min, s); with the cooling data it gives the "
                        "mean heat-release rate for the cooling check.",
    # -- [vessel] -----------------------------------------------------------
    "vessel": "The equipment. Every key is optional; figures that need a missing "
              "key are listed as not assessed.",
    "vessel.mtt": "Maximum technical temperature: the boiling point of the mass at "
                  "the set pressure, or a relief or equipment limit.",
    "vessel.free_volume": "Gas space of the vessel (m3, L), for the pressure of "
                          "evolved gas in a closed vessel.",
    "vessel.design_pressure": "Design pressure of the vessel, absolute (bar).",
    "vessel.cooling_ua": "Overall heat-transfer coefficient times area of jacket or "
                         "coil, U*A (kW/K, W/K). Leave it out when there is no cooling.",
    "vessel.coolant_temperature": "Temperature of the coolant entering the jacket "
                                  "or coil.",
    # -- [decomposition] ----------------------------------------------------
    "decomposition": "The secondary (decomposition) reaction of the reaction mass, "
                     "as far as it is known (DSC, adiabatic calorimetry).",
    "decomposition.energy": "Heat released by the decomposition per mass of "
                            "reaction mass, as a positive number (J/g, kJ/kg).",
    "decomposition.onset": "Onset temperature of the decomposition in a screening "
                           "test (e.g. DSC); shown, not used as TD24.",
    "decomposition.td24": "Temperature at which the adiabatic time to maximum rate "
                          "is 24 h, if measured; otherwise it is computed from the "
                          "kinetics below.",
    "decomposition.activation_energy": "Activation energy of the decomposition "
                                       "(kJ/mol).",
    "decomposition.rate": "One measured point of the heat-release rate: "
                          "{ temperature = ..., power = ... }. With the activation "
                          "energy it gives TMRad and TD24.",
    "decomposition.rate.temperature": "Temperature at which the rate was measured.",
    "decomposition.rate.power": "Heat-release rate per mass at that temperature "
                                "(W/kg).",
    # -- [not_applicable] ---------------------------------------------------
    "not_applicable": "Why a safety input does not apply to this case: a submitted case "
                      "gives [charge], [vessel] and [decomposition], or names the one "
                      "that does not apply here with the reason (a sentence the board "
                      "can judge). Give the table or the reason, never both.",
    "not_applicable.charge": "Why the case has no batch ([charge]), e.g. a continuous "
                             "process.",
    "not_applicable.vessel": "Why the case has no vessel data ([vessel]).",
    "not_applicable.decomposition": "Why no decomposition data ([decomposition]) are "
                                    "needed, e.g. no species that can decompose in the "
                                    "reaction mass.",
    # -- [measured] ---------------------------------------------------------
    "measured": "A measured reaction enthalpy (calorimetry). When given, it is used "
                "for the safety figures instead of the computed one, and compared "
                "with it.",
    "measured.reaction_enthalpy": "Measured reaction enthalpy per mole of reaction "
                                  "as written (kJ/mol; negative when heat is "
                                  "released).",
    "measured.method": "How it was measured: method, scale, conditions.",
    "measured.uncertainty": "Uncertainty of the measured value (kJ/mol).",
    # -- [[species]] --------------------------------------------------------
    "species": "Data for a species the library does not hold (one [[species]] "
               "table each). Give the source of every value; an estimate must say so "
               "and how it was made.",
    "species.name": "Name used for the species in the reaction string, without the "
                    "phase (e.g. intermediate B). It may contain spaces and digits, but "
                    "a number followed by a space at its start reads as a coefficient.",
    "species.formula": "Molecular formula (e.g. C8H9NO2), used for balance checks "
                       "and the molar mass.",
    "species.phase": "Phase: g, l, s, cr or aq.",
    "species.hf": "Standard enthalpy of formation at 298.15 K (kJ/mol).",
    "species.s": "Standard molar entropy at 298.15 K (J/(mol*K)).",
    "species.cp": "Molar heat capacity, taken as constant (J/(mol*K)).",
    "species.source": "Where the values come from (reference, or the estimation "
                      "method).",
    "species.uncertainty": "Stated uncertainties: { hf = ..., s = ..., cp = ... }; "
                           "any of the three.",
    "species.uncertainty.hf": "Uncertainty of hf (kJ/mol).",
    "species.uncertainty.s": "Uncertainty of s (J/(mol*K)).",
    "species.uncertainty.cp": "Uncertainty of cp (J/(mol*K)).",
    "species.smiles": "Structure as SMILES; lets the dossier look for groups "
                      "associated with explosive properties, and is what an "
                      "estimate is made from.",
    "species.t_range": "Temperatures [low, high] between which the data may be "
                       "used; outside it values are marked as extrapolated. Default: "
                       "298.15 K and the window.",
    "species.estimate": "Estimate hf, s and cp from the structure (smiles): "
                        "\"benson\" (Benson group additivity, with Joback for what "
                        "Benson's groups lack) or \"joback\". Without hf, s and cp "
                        "the estimate is used, with the method's uncertainty; with "
                        "them, they are used and the estimate is shown beside them as "
                        "a check. Gas or liquid only.",
    # -- [[review]] ---------------------------------------------------------
    "review": "A reviewer's verdict on this revision (one [[review]] table each), "
              "written after the board meeting.",
    "review.name": "Reviewer's name.",
    "review.role": "Reviewer's role on the board.",
    "review.date": "Date of the verdict: YYYY-MM-DD, without quotes.",
    "review.verdict": "accepted, accepted-with-conditions or declined.",
    "review.conditions": "The conditions of the verdict; required with "
                         "accepted-with-conditions. One text; or, so that a [[closure]] "
                         "can close it, a table with its id and text, or one "
                         "[[review.conditions]] table per condition.",
    "review.conditions.id": "The condition's id in this case: C1, C2, ...",
    "review.conditions.text": "What the condition asks for.",
    "review.digest": "The integrity digest of the case the verdict was given on "
                     "(see docs/signatures.md).",
    # -- [[closure]] ---------------------------------------------------------
    "closure": "A condition closed out (one [[closure]] table each), added when the "
               "evidence is in, without raising the revision: closures, like verdicts, "
               "are outside the integrity digest.",
    "closure.condition": "The id of the condition closed: C1, C2, ... (R<n> or S<n> for a "
                         "condition written without an id; see docs/signatures.md).",
    "closure.evidence": "What shows the condition is met: a test record, a document.",
    "closure.by": "Who closed it (name and role).",
    "closure.date": "Date of the closure: YYYY-MM-DD, without quotes.",
    # -- [[variant]] ---------------------------------------------------------
    "variant": "A what-if variant of the case (one [[variant]] table each): a few "
               "inputs changed, assessed beside the base case. Every key it does not "
               "give is the base case's.",
    "variant.name": "Short name of the variant, shown as its column heading.",
    "variant.note": "What the variant stands for, in a sentence.",
}


def _variant_help(table_help: dict[str, str]) -> dict[str, str]:
    """Help for the keys of a variant's tables: each key's is its base table's."""
    out: dict[str, str] = {}

    def walk(spec: TableSpec, base_path: str, path: str) -> None:
        for f in spec.fields:
            out[f"{path}.{f.name}"] = table_help[f"{base_path}.{f.name}"]
            if f.table is not None:
                walk(f.table, f"{base_path}.{f.name}", f"{path}.{f.name}")

    for name, table in VARIANT_TABLES.items():
        but = " but basis (a variant keeps the base case's basis)" if name == "charge" else ""
        out[f"variant.{name}"] = (f"Inputs of [{name}] that differ in this variant: any key "
                                  f"of [{name}]{but}.")
        walk(table, name, f"variant.{name}")
    return out


#: The help line of every key path of the schema (the tests keep it complete).
KEY_HELP: dict[str, str] = {**_TABLE_HELP, **_variant_help(_TABLE_HELP)}


def check_case_id(case_id: str) -> str:
    """``case_id`` if it is a safe case id, else :class:`DossierError`.

    A case id is the file stem and part of the site's addresses: 1 to
    :data:`MAX_ID_LENGTH` characters from a-z, 0-9 and '-', not starting
    with '-'.
    """
    if not isinstance(case_id, str) or not _ID_RE.fullmatch(case_id) \
            or len(case_id) > MAX_ID_LENGTH:
        shown = case_id if isinstance(case_id, str) else repr(case_id)
        raise DossierError(Problem(
            f"case id '{shown}' is not allowed: use 1 to {MAX_ID_LENGTH} characters "
            "from a-z, 0-9 and '-', not starting with '-' (e.g. 'nitro-hydrogenation')"))
    return case_id


def _toml_string(text: str) -> str:
    """``text`` as a TOML basic string (JSON escapes are valid TOML escapes)."""
    return json.dumps(text, ensure_ascii=False)


def _what(spec: FieldSpec) -> str:
    """The kind of value a field takes, in words."""
    if spec.kind == "quantity":
        noun = DIMENSIONS[spec.dimension].noun if spec.dimension else "a quantity"
        return f"{noun} with a unit, like {spec.example}"
    return {
        "text": "text in quotes",
        "whole": "a whole number, without quotes",
        "format": "a whole number, without quotes",
        "date": "a date YYYY-MM-DD, without quotes",
        "choice": "one of: " + ", ".join(f'"{c}"' for c in spec.choices),
        "mass_or_amount": "a mass or an amount with a unit, like \"120 kg\" or "
                          "\"3 kmol\"",
        "temperature_pair": "two temperatures with units, like [\"40 degC\", \"80 degC\"]",
        "quantity_map": "a table of species with their phase, like { \"N2(g)\" = "
                        "\"0.5 mol\" }",
        "table": "a table",
        "tables": "tables",
        "text_or_tables": "text in quotes, or a table (or tables) of the keys below",
    }.get(spec.kind, spec.kind)


def _need(spec: FieldSpec, in_table: str | None) -> str:
    if spec.required:
        return "Required" + (f" when {in_table} is given" if in_table else "") + "."
    if spec.required_unless:
        return f"Required unless '{spec.required_unless}' is given."
    return "Optional."


def _comment_block(text: str, prefix: str = "# ", width: int = 78) -> list[str]:
    """``text`` wrapped into comment lines.

    No line starts with a word that would make it look like a commented-out
    key or table (``[charge]``, ``power =``), so that removing the '#' from
    the key lines never turns help text into TOML.
    """
    words = text.split()
    lines: list[str] = []
    line = ""
    for i, word in enumerate(words):
        nxt = words[i + 1] if i + 1 < len(words) else ""
        keeps_with_previous = word[:1] in "[{=" or nxt == "="
        if line and not keeps_with_previous \
                and len(prefix) + len(line) + 1 + len(word) > width:
            lines.append(prefix + line)
            line = word
        else:
            line = f"{line} {word}" if line else word
    if line:
        lines.append(prefix + line)
    return lines


def _help(path: str) -> str:
    try:
        return KEY_HELP[path]
    except KeyError:  # pragma: no cover - the tests keep KEY_HELP complete
        raise KeyError(f"no help text for case key '{path}'; add it to "
                       "dossier.casefile.template.KEY_HELP") from None


def _field_lines(spec: FieldSpec, path: str, in_table: str | None,
                 example: str | None = None) -> list[str]:
    """Comment lines and a commented-out example line for one optional field."""
    lines = _comment_block(f"{spec.name}: {_help(path)} Takes {_what(spec)}. "
                           f"{_need(spec, in_table)}")
    if path.startswith("variant.") and spec.table is not None:
        pass  # the keys of the base table, explained there
    elif spec.kind in ("table", "text_or_tables") and spec.table is not None:
        for sub in spec.table.fields:
            lines += _comment_block(f"{spec.name}.{sub.name}: "
                                    f"{_help(path + '.' + sub.name)} "
                                    f"Takes {_what(sub)}. {_need(sub, spec.name)}",
                                    prefix="#   ")
    lines.append(f"# {spec.name} = {example if example is not None else spec.example}")
    return lines


def _table_lines(spec: FieldSpec, examples: dict[str, str]) -> list[str]:
    """An optional table, commented out: its header line and every key."""
    table: TableSpec = spec.table  # type: ignore[assignment]
    path = spec.name
    out = [""]
    out += _comment_block(f"{table.title} {_help(path)} Optional table; remove the "
                          "'#' in front of its lines to use it.", prefix="## ")
    out.append(f"# {table.title}")
    for field in table.fields:
        out += _field_lines(field, f"{path}.{field.name}", table.title,
                            examples.get(f"{path}.{field.name}"))
    return out


def _unknown_species_examples(unknown: tuple[str, ...]) -> dict[str, str]:
    """The commented-out [[species]] table's name, phase (and formula, where the term is
    written as one) for the first of the reaction's species the library does not hold
    (``unknown``: terms such as "intermediate B(l)")."""
    if not unknown:
        return {}
    label, phase = split_phase(unknown[0])
    if phase is None:
        return {}
    out = {"species.name": _toml_string(label), "species.phase": _toml_string(phase)}
    if formula_of(label) is not None:
        out["species.formula"] = _toml_string(label)
    return out


def _first_reactant(reaction: str | None) -> str | None:
    if not reaction:
        return None
    try:
        return parse_reaction(reaction).reactants[0].key
    except DossierError:
        return None


def case_template(case_id: str, reaction: str | None, unknown: tuple[str, ...] = ()) -> str:
    """The text of a new case file ``<case_id>.md``, every key explained.

    The required keys are filled in: ``title`` (the case id, to be replaced),
    ``revision = 1``, ``status = "draft"``, ``reaction`` (when given) and the
    ``temperature`` window (a starting value to replace).  Every optional key
    and table is present but commented out; the [[species]] table's example names the
    first of ``unknown`` (terms of the reaction the library does not hold, such as
    "intermediate B(l)") when there are any.  Raises :class:`DossierError` for
    an unsafe ``case_id``.  The reaction is written as given (its arrow too).
    """
    check_case_id(case_id)
    if reaction is not None and not isinstance(reaction, str):
        raise DossierError(Problem(f"expected the reaction as text; got {reaction!r}",
                                   key="reaction"))
    reaction = " ".join(reaction.split()) if reaction is not None else None
    basis = _first_reactant(reaction)
    # examples of the commented-out lines: the schema's, showing every sub-key
    examples = {"species.uncertainty": '{ hf = "15 kJ/mol", s = "10 J/(mol*K)", '
                                       'cp = "20 J/(mol*K)" }'}
    if basis:
        examples["charge.basis"] = _toml_string(basis)
    examples.update(_unknown_species_examples(unknown))

    out = [DELIMITER]
    out += _comment_block(
        f"Case '{case_id}', case-file format 1 (see docs/case-format.md). Lines "
        "starting with '#' are comments. Every key of the format is listed below "
        "with what it means and takes. Optional keys and tables are commented out "
        "as lines '# key = value': remove the '#' in front of such a line when you "
        "have the real value, and replace the example value. Quantities "
        "are text with a unit (\"25 degC\", \"5 bar\"); pressures are absolute.")
    out += _top_level_lines(case_id, reaction)
    for field in SCHEMA.fields:
        if field.kind in ("table", "tables"):
            out += _table_lines(field, examples)
    out.append(DELIMITER)
    out += _narrative_lines(case_id)
    return "\n".join(out)


def _top_level_lines(case_id: str, reaction: str | None) -> list[str]:
    """The header's top-level keys: the required ones filled in, the others commented out."""
    active: dict[str, str] = {
        "format": "1",
        "title": _toml_string(case_id),
        "revision": "1",
        "status": '"draft"',
        "temperature": f"[{STARTING_WINDOW[0]}, {STARTING_WINDOW[1]}]",
    }
    notes: dict[str, str] = {
        "title": "Replace the case id with a short description.",
        "temperature": "The window below is only a starting value: replace it with "
                       "the operating window before the case is submitted.",
        "status": "A new case is a draft.",
    }
    if reaction:
        active["reaction"] = _toml_string(reaction)
    out: list[str] = []
    for field in SCHEMA.fields:
        if field.kind in ("table", "tables"):
            continue
        out.append("")
        text = f"{field.name}: {_help(field.name)} Takes {_what(field)}. {_need(field, None)}"
        if field.name in notes:
            text += " " + notes[field.name]
        out += _comment_block(text)
        if field.name in active:
            out.append(f"{field.name} = {active[field.name]}")
        elif field.name == "reaction":
            out += _comment_block("No reaction was given: write it here and remove "
                                  "the '#'; `dossier check` asks for it until then.")
            out.append(f"# reaction = {field.example}")
        else:
            out.append(f"# {field.name} = {field.example}")
    return out


def _narrative_lines(case_id: str) -> list[str]:
    """The narrative below the header: a heading and a comment for each section."""
    return [
        "",
        f"# {case_id}",
        "",
        "<!-- The narrative, in Markdown. Fill in each section; these comments are",
        "     not shown in the dossier. -->",
        "",
        "## Purpose",
        "",
        "<!-- What is proposed, where, and why. -->",
        "",
        "## Route",
        "",
        "<!-- The chemistry: reagents, solvent, catalyst, order of addition. -->",
        "",
        "## Scale and equipment",
        "",
        "<!-- Batch size, vessel, cooling, where each figure in the header comes from. -->",
        "",
        "## What the board is asked",
        "",
        "<!-- The decision wanted, with the measures proposed. -->",
        "",
        "## Open questions",
        "",
        "<!-- What is not yet known, and how it will be found out. -->",
        "",
        "## Data and references",
        "",
        "<!-- The source of every species record (`dossier species QUERY` prints it)",
        "     and of every measured value. -->",
        "",
    ]


def write_new_case(cases_dir: str | Path, case_id: str, reaction: str | None,
                   unknown: tuple[str, ...] = ()) -> Path:
    """Write :func:`case_template` to ``<cases_dir>/<case_id>.md``; return the path.

    Refuses (with :class:`DossierError`) an unsafe id, a reaction that cannot
    be parsed, a ``cases_dir`` that is not a folder, and an existing file: an
    existing case is never overwritten.  ``cases_dir`` is created if missing.
    ``unknown``: see :func:`case_template` (``dossier new`` finds them in the library).
    """
    check_case_id(case_id)
    if reaction is not None:
        try:
            parse_reaction(reaction)
        except DossierError as err:
            raise DossierError([Problem(p.message, key="reaction")
                                for p in err.problems]) from None
    text = case_template(case_id, reaction, unknown)
    folder = Path(cases_dir)
    if folder.exists() and not folder.is_dir():
        raise DossierError(Problem(f"{folder} is not a folder; give the folder that "
                                   "holds the case files"))
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"{case_id}.md"
    try:
        with open(path, "x", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
    except FileExistsError:
        raise DossierError(Problem("the file already exists; a case file is never "
                                   "overwritten: edit it, or choose another case id",
                                   str(path))) from None
    return path


__all__ = ["case_template", "write_new_case", "check_case_id", "KEY_HELP",
           "MAX_ID_LENGTH"]
