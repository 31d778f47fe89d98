"""The package keeps the shape DEVELOPERS.md describes: each rule is checked over
every ``dossier/**/*.py``, and a failure lists every module, line and import or
call that breaks it.  (test_contract_checks_catch_violations.py shows that each
check fails on a module that breaks its rule.)"""
from __future__ import annotations

import pytest

from package_effects import (FILE_IO, cache_write_violations, function_size_violations,
                             module_size_violations, print_violations, read_violations,
                             registration_violations, site_write_violations)
from package_imports import (dynamic_import_violations, import_cycles, layer_violations,
                             local_import_violations,
                             package_module_names, package_modules, presentation_violations,
                             private_name_violations)


def violations_of(check) -> list[str]:
    return [message for module in package_modules() for message in check(module)]


def assert_none(violations: list[str]) -> None:
    if violations:
        pytest.fail(f"{len(violations)} violation(s):\n" + "\n".join(violations), pytrace=False)


def test_the_walk_sees_the_whole_package():
    # A walk that found no modules would let every rule below pass.
    names = package_module_names()
    assert {"dossier", "dossier.constants", "dossier.casefile.load", "dossier.build.writer",
            "dossier.build.cache", "dossier.cli.main"} <= names
    assert len(names) >= 40


def test_imports_go_only_down_the_layers():
    violations = violations_of(layer_violations)
    assert_none(violations)


def test_no_import_cycles():
    cycles = import_cycles(package_modules())
    assert_none(cycles)


def test_nothing_below_render_imports_presentation_libraries():
    violations = violations_of(presentation_violations)
    assert_none(violations)


def test_function_local_imports_are_only_heavy_third_party_packages():
    violations = violations_of(local_import_violations)
    assert_none(violations)


def test_no_private_names_imported_across_modules():
    violations = violations_of(private_name_violations)
    assert_none(violations)


def test_the_file_io_table_names_only_modules_that_exist():
    missing = [f"FILE_IO names {name}, which is not a module of the package"
               for name in FILE_IO if name not in package_module_names()]
    assert_none(missing)


def test_the_table_grants_case_files_the_site_and_the_cache_to_one_module_each():
    assert [n for n, g in FILE_IO.items() if "case files" in g.reads] == ["dossier.casefile.load"]
    assert [n for n, g in FILE_IO.items() if "the site" in g.writes] == ["dossier.build.writer"]
    assert [n for n, g in FILE_IO.items() if "cache" in g.writes] == ["dossier.build.cache"]


def test_only_the_loader_reads_case_files():
    violations = violations_of(read_violations)
    assert_none(violations)


def test_only_the_writer_writes_the_site():
    violations = violations_of(site_write_violations)
    assert_none(violations)


def test_only_the_cache_writes_the_cache():
    violations = violations_of(cache_write_violations)
    assert_none(violations)


def test_only_the_command_line_prints():
    violations = violations_of(print_violations)
    assert_none(violations)


def test_nothing_registers_itself_on_import():
    violations = violations_of(registration_violations)
    assert_none(violations)


def test_no_module_over_600_lines():
    violations = violations_of(module_size_violations)
    assert_none(violations)


def test_no_function_over_80_lines():
    violations = violations_of(function_size_violations)
    assert_none(violations)


def test_modules_are_imported_by_name_except_in_the_command_table():
    assert_none(violations_of(dynamic_import_violations))


def test_the_command_table_names_only_command_line_modules_that_exist():
    from dossier.cli.main import COMMAND_MODULES

    names = package_module_names()
    wrong = [f"{command} -> {target}" for command, target in COMMAND_MODULES.items()
             if not target.startswith("dossier.cli.") or target not in names]
    assert_none(wrong)
