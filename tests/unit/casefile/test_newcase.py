"""New case files: the template round-trips through the loader and the
assessment, documents every key of the schema, computes nothing from
example values, and write_new_case refuses what it must refuse."""
from __future__ import annotations

import re
from pathlib import Path

import pytest

from dossier.assess.evaluate import assess_case
from dossier.model.case import Status
from dossier.casefile.load import parse_case_text
from dossier.casefile.schema import SCHEMA
from dossier.errors import CaseError, DossierError
from dossier.casefile.template import KEY_HELP, MAX_ID_LENGTH, case_template, write_new_case
from dossier.library.lookup import Library
from paths import ROOT

COMBUSTION = "CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(g)"

#: A commented-out key or table line of the template.
KEY_LINE = re.compile(r"(?m)^# (\[|[a-z][a-z0-9_]* = )")

BAD_ID = ("case id '{}' is not allowed: use 1 to 64 characters from a-z, 0-9 and '-', "
          "not starting with '-' (e.g. 'nitro-hydrogenation')")


def schema_paths() -> set[str]:
    """Every key path the schema defines, tables included (arrays by name)."""
    out: set[str] = set()

    def walk(table, prefix):
        for f in table.fields:
            path = f"{prefix}.{f.name}" if prefix else f.name
            out.add(path)
            if f.table is not None:
                walk(f.table, path)

    walk(SCHEMA, "")
    return out


def uncommented(text: str) -> str:
    """The template with every commented-out key and table line switched on."""
    return KEY_LINE.sub(r"\1", text)


# --- the template ---------------------------------------------------------------

def test_template_with_a_real_reaction_loads_and_assesses():
    text = case_template("methane-combustion", COMBUSTION)
    case = parse_case_text(text, "cases/methane-combustion.md")
    assert case.id == "methane-combustion"
    assert case.reaction == COMBUSTION
    assert case.status is Status.DRAFT and case.revision == 1
    assert case.format_version == 1
    a = assess_case(case, Library.default())
    assert a.thermo.favourable == "everywhere"   # methane burns (sign only)
    assert a.cautions


def test_template_computes_nothing_from_example_values():
    case = parse_case_text(case_template("methane-combustion", COMBUSTION), "x.md")
    assert (case.charge, case.vessel, case.decomposition, case.measured) == (None,) * 4
    assert case.species == () and case.reviews == () and case.inerts == ()
    assert (case.owner, case.gate, case.meeting) == (None, None, None)
    assert case.pressure == 1e5
    a = assess_case(case, Library.default())
    assert a.safety.scale is None
    assert a.safety.adiabatic_rise_K is None and a.safety.criticality_class is None


def test_template_without_a_reaction_asks_for_it():
    with pytest.raises(CaseError) as info:
        parse_case_text(case_template("new-step", None), "cases/new-step.md")
    assert [str(p) for p in info.value.problems] == [
        "cases/new-step.md:1: key 'reaction': required key is missing; add a line like: "
        'reaction = "C6H5NO2(l) + 3 H2(g) -> C6H5NH2(l) + 2 H2O(l)"']


def test_every_schema_key_is_explained():
    assert set(KEY_HELP) == schema_paths()


def test_every_schema_key_is_present_in_the_template():
    text = case_template("methane-combustion", COMBUSTION)
    header = text.split("+++")[1]
    for field in SCHEMA.fields:
        if field.kind == "table":
            assert f"\n# [{field.name}]\n" in header
        elif field.kind == "tables":
            assert f"\n# [[{field.name}]]\n" in header
        else:
            assert re.search(rf"(?m)^(# )?{field.name} = ", header), field.name
        for sub in field.table.fields if field.table else ():
            assert re.search(rf"(?m)^# {sub.name} = ", header), f"{field.name}.{sub.name}"
            if field.name == "variant" and sub.table is not None:
                # a variant's tables take the base tables' keys, explained there once
                assert f"\n# {sub.name}: Inputs of [{sub.name}] that differ" in header
                continue
            for subsub in sub.table.fields if sub.table else ():
                assert f"#   {sub.name}.{subsub.name}: " in header
                assert re.search(rf"(?m)^# {sub.name} = {{.*\b{subsub.name} = ", header)


def test_every_key_line_says_what_it_is_and_whether_it_is_required():
    header = case_template("x", COMBUSTION).split("+++")[1]
    comments: list[str] = []
    keys = 0
    for line in header.splitlines():
        key = re.match(r"^(?:# )?([a-z][a-z0-9_]*) = ", line)
        if key:
            said = " ".join(comments)
            assert f"{key.group(1)}: " in said, line
            assert "Required" in said or "Optional." in said, line
            assert "Takes " in said, line
            comments, keys = [], keys + 1
        elif line.startswith("#") and not re.match(r"^# \[", line):
            comments.append(line)
        elif not line.strip():
            comments = []
    tables = {f.name for f in SCHEMA.fields if f.kind in ("table", "tables")}
    assert keys == sum(1 for p in schema_paths() if p.count(".") <= 1 and p not in tables)


def test_commented_examples_are_valid_when_switched_on():
    text = uncommented(case_template("methane-combustion", COMBUSTION))
    case = parse_case_text(text, "x.md")
    assert case.charge is not None and case.charge.basis == "CH4(g)"
    assert case.vessel and case.decomposition and case.measured
    assert len(case.species) == 1 and len(case.reviews) == 1
    assert case.decomposition.rate_power is not None
    assert dict(case.species[0].uncertainty).keys() == {"hf", "s", "cp"}


def test_basis_example_is_the_first_reactant():
    text = case_template("x", "NaHCO3(s) + H+(aq) -> Na+(aq) + H2O(l) + CO2(g)")
    assert '# basis = "NaHCO3(s)"' in text


def test_reaction_is_written_as_a_safe_toml_string():
    text = case_template("x", 'A(g) -> "B(g)" \\ C(g)')
    case = parse_case_text(text, "x.md")
    assert case.reaction == 'A(g) -> "B(g)" \\ C(g)'


def test_template_is_deterministic_and_ends_with_a_narrative():
    a = case_template("methane-combustion", COMBUSTION)
    assert a == case_template("methane-combustion", COMBUSTION)
    narrative = a.split("+++\n", 2)[2]
    assert "## Purpose" in narrative and "## Data and references" in narrative
    assert a.endswith("\n")


@pytest.mark.parametrize("bad", ["", "-leading", "Upper", "under_score", "a.b", "a/b",
                                 "../up", "sp ace", "ünï", "a" * (MAX_ID_LENGTH + 1)])
def test_template_refuses_unsafe_ids(bad):
    with pytest.raises(DossierError) as info:
        case_template(bad, None)
    assert [str(p) for p in info.value.problems] == [BAD_ID.format(bad)]


# --- writing ----------------------------------------------------------------------

def test_write_new_case_writes_the_template(tmp_path):
    path = write_new_case(tmp_path / "cases", "methane-combustion", COMBUSTION)
    assert path == tmp_path / "cases" / "methane-combustion.md"
    assert path.read_text(encoding="utf-8") == case_template("methane-combustion", COMBUSTION)


def test_write_new_case_accepts_the_longest_id(tmp_path):
    longest = "b-" * (MAX_ID_LENGTH // 2 - 1) + "b9"
    assert len(longest) == MAX_ID_LENGTH
    assert write_new_case(tmp_path, longest, None).name == f"{longest}.md"


def test_write_new_case_never_overwrites(tmp_path):
    path = tmp_path / "taken.md"
    path.write_text("existing case\n", encoding="utf-8")
    with pytest.raises(DossierError) as info:
        write_new_case(tmp_path, "taken", COMBUSTION)
    assert [str(p) for p in info.value.problems] == [
        f"{path}: the file already exists; a case file is never overwritten: edit it, "
        "or choose another case id"]
    assert path.read_text(encoding="utf-8") == "existing case\n"


@pytest.mark.parametrize("bad", ["-x", "X", "../escape", "a" * (MAX_ID_LENGTH + 1)])
def test_write_new_case_refuses_unsafe_ids(tmp_path, bad):
    with pytest.raises(DossierError) as info:
        write_new_case(tmp_path, bad, None)
    assert [str(p) for p in info.value.problems] == [BAD_ID.format(bad)]
    assert list(tmp_path.iterdir()) == []


def test_write_new_case_refuses_a_reaction_it_cannot_read(tmp_path):
    with pytest.raises(DossierError) as info:
        write_new_case(tmp_path, "no-arrow", "CH4(g) + 2 O2(g)")
    assert [str(p) for p in info.value.problems] == [
        "key 'reaction': reaction 'CH4(g) + 2 O2(g)' has no arrow: write '->' (forward) "
        "or '<=>' (equilibrium) between reactants and products"]
    assert list(tmp_path.iterdir()) == []


def test_write_new_case_refuses_a_file_as_the_folder(tmp_path):
    not_a_folder = tmp_path / "cases"
    not_a_folder.write_text("", encoding="utf-8")
    with pytest.raises(DossierError) as info:
        write_new_case(not_a_folder, "x", None)
    assert [str(p) for p in info.value.problems] == [
        f"{not_a_folder} is not a folder; give the folder that holds the case files"]


def test_write_new_case_creates_a_missing_folder(tmp_path):
    path = write_new_case(tmp_path / "new" / "cases", "first", None)
    assert path.is_file() and path.parent == tmp_path / "new" / "cases"


def test_demo_register_ids_would_be_accepted():
    root = ROOT / "cases"
    for path in root.glob("*.md"):
        case_template(path.stem, None)  # raises for an unsafe id
