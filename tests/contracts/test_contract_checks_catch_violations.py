"""Each contract check fails on a small made-up module that breaks its rule, with
the exact message a maintainer would read, so that no check can pass by
accident; beside each, the nearest module that keeps the rule passes."""
from __future__ import annotations

import textwrap

import pytest

from package_effects import (cache_write_violations, file_operations,
                             function_size_violations, module_size_violations, print_violations,
                             read_violations, registration_violations, site_write_violations)
from package_imports import (Module, dynamic_import_violations, import_cycles,
                             layer_violations, local_import_violations,
                             presentation_violations, private_name_violations)


# The modules the made-up ones may name, so that ``from dossier.review import digest``
# resolves to the module dossier.review.digest whatever the real tree holds today.
KNOWN = frozenset({"dossier", "dossier.constants", "dossier.chem.formula",
                   "dossier.review.digest", "dossier.review.signatures", "dossier.build.cache",
                   "dossier.build.writer", "dossier.render.pages"})


def module(name: str, source: str, is_package: bool = False) -> Module:
    return Module(name, textwrap.dedent(source), is_package)


# -- 1. imports go only down the layers -------------------------------------------
def test_an_import_of_a_higher_layer_is_reported_with_its_file_line_and_layers():
    m = module("dossier.engine.safety", """\
        from dossier.chem.formula import parse_formula
        from dossier.render.numbers import fmt
    """)
    assert layer_violations(m, KNOWN) == [
        "dossier/engine/safety.py:2: `from dossier.render.numbers import fmt` imports "
        "dossier.render.numbers: layer engine may not import the higher layer render"]


def test_an_upward_import_inside_a_function_is_reported_with_the_function():
    m = module("dossier.assess.evaluate", """\
        def evaluate(case):
            from dossier.review import digest
            return digest
    """)
    assert layer_violations(m, KNOWN) == [
        "dossier/assess/evaluate.py:2: `from dossier.review import digest` (in evaluate()) "
        "imports dossier.review.digest: layer assess may not import the higher layer review"]


def test_an_upward_import_under_type_checking_is_still_reported():
    m = module("dossier.model.case", """\
        from typing import TYPE_CHECKING
        if TYPE_CHECKING:
            from dossier.library.lookup import Library
    """)
    assert layer_violations(m, KNOWN) == [
        "dossier/model/case.py:3: `from dossier.library.lookup import Library` "
        "(under TYPE_CHECKING) imports dossier.library.lookup: "
        "layer model may not import the higher layer library"]


def test_a_relative_import_is_resolved_before_its_layer_is_checked():
    m = module("dossier.chem.reaction", """\
        from .formula import parse_formula
        from ..build import writer
    """)
    assert layer_violations(m, KNOWN) == [
        "dossier/chem/reaction.py:2: `from ..build import writer` imports dossier.build.writer: "
        "layer chem may not import the higher layer build"]


def test_an_import_module_call_with_a_literal_name_counts_as_an_import():
    m = module("dossier.casefile.load", """\
        import importlib
        def later():
            return importlib.import_module("dossier.cli.main")
    """)
    assert layer_violations(m, KNOWN) == [
        "dossier/casefile/load.py:3: `importlib.import_module('dossier.cli.main')` (in later()) "
        "imports dossier.cli.main: layer casefile may not import the higher layer cli"]


def test_a_module_outside_every_layer_and_an_import_of_one_are_reported():
    assert layer_violations(module("dossier.utils", "x = 1\n"), KNOWN) == [
        "dossier/utils.py: dossier.utils is in no layer (layers: base, chem, model, casefile, "
        "library, engine, assess, review, render, build, cli)"]
    cli = module("dossier.cli.main", "from dossier.helpers import go\n")
    assert layer_violations(cli, KNOWN) == [
        "dossier/cli/main.py:1: `from dossier.helpers import go` imports dossier.helpers, "
        "which is in no layer"]


def test_imports_of_the_same_and_lower_layers_pass():
    m = module("dossier.review.digest", """\
        import json
        from dossier import __version__
        from dossier.constants import R
        from dossier.review.signatures import sign
        from dossier.assess.evaluate import evaluate
        def later():
            from dossier.chem import formula
    """)
    assert layer_violations(m, KNOWN) == []


# -- 2. no import cycles --------------------------------------------------------------
def test_a_circle_hidden_in_a_function_local_import_is_reported_with_each_step():
    evaluate = module("dossier.assess.evaluate", """\
        from dossier.chem.formula import parse_formula

        def evaluate(case):
            from dossier.assess.batch import assess_safety
            return assess_safety(case)
    """)
    batch = module("dossier.assess.batch", """\
        from dossier.assess.evaluate import Safety
    """)
    formula = module("dossier.chem.formula", "def parse_formula(text): ...\n")
    assert import_cycles((evaluate, batch, formula)) == [
        "import cycle among dossier.assess.batch, dossier.assess.evaluate: "
        "dossier.assess.batch (dossier/assess/batch.py:1: "
        "`from dossier.assess.evaluate import Safety`) -> "
        "dossier.assess.evaluate (dossier/assess/evaluate.py:4: "
        "`from dossier.assess.batch import assess_safety`) -> dossier.assess.batch"]
    assert import_cycles((batch, formula)) == []


def test_a_circle_through_three_modules_and_a_type_checking_import_is_reported():
    a = module("dossier.render.views", "from dossier.render.pages import Page\n")
    b = module("dossier.render.pages", "from dossier.render.figures import figure\n")
    c = module("dossier.render.figures", """\
        from typing import TYPE_CHECKING
        if TYPE_CHECKING:
            from dossier.render.views import CaseView
    """)
    assert import_cycles((a, b, c)) == [
        "import cycle among dossier.render.figures, dossier.render.pages, dossier.render.views: "
        "dossier.render.figures (dossier/render/figures.py:3: "
        "`from dossier.render.views import CaseView`) -> "
        "dossier.render.views (dossier/render/views.py:1: "
        "`from dossier.render.pages import Page`) -> "
        "dossier.render.pages (dossier/render/pages.py:1: "
        "`from dossier.render.figures import figure`) -> dossier.render.figures"]


# -- 3. presentation libraries only from render/ up ------------------------------------
def test_a_presentation_library_below_render_is_reported_even_inside_a_function():
    m = module("dossier.review.signatures", """\
        import click

        def ask():
            from markupsafe import escape
            return escape
    """)
    assert presentation_violations(m, KNOWN) == [
        "dossier/review/signatures.py:1: `import click` imports click, a presentation library: "
        "layer review is below render",
        "dossier/review/signatures.py:4: `from markupsafe import escape` (in ask()) imports "
        "markupsafe, a presentation library: layer review is below render"]


def test_presentation_libraries_in_render_and_above_pass():
    for name in ("dossier.render.pages", "dossier.build.serve", "dossier.cli.main"):
        assert presentation_violations(module(name, "import jinja2\nimport click\n"), KNOWN) == []


# -- 4. function-local imports only for heavy third-party packages ---------------------
def test_function_local_imports_of_our_modules_and_light_packages_are_reported():
    m = module("dossier.build.pipeline", """\
        def build_site():
            import pickle
            import numpy as np
            from dossier.build import cache
            from .writer import write_site

        class Runner:
            import multiprocessing
    """)
    assert local_import_violations(m, KNOWN) == [
        "dossier/build/pipeline.py:2: `import pickle` (in build_site()) imports pickle below the "
        "top of the module: pickle is a standard-library module not in LAZY_STANDARD_LIBRARY: "
        "import it at the top of the module",
        "dossier/build/pipeline.py:3: `import numpy as np` (in build_site()) imports numpy below "
        "the top of the module: numpy is not in HEAVY_PACKAGES: import it at the top of the module",
        "dossier/build/pipeline.py:4: `from dossier.build import cache` (in build_site()) imports "
        "dossier.build.cache below the top of the module: our own modules are imported at the "
        "top of the module",
        "dossier/build/pipeline.py:5: `from .writer import write_site` (in build_site()) imports "
        "dossier.build.writer below the top of the module: our own modules are imported at the "
        "top of the module",
        "dossier/build/pipeline.py:8: `import multiprocessing` (in class Runner) imports "
        "multiprocessing below the top of the module: multiprocessing is a standard-library "
        "module not in LAZY_STANDARD_LIBRARY: import it at the top of the module"]


def test_function_local_imports_of_heavy_packages_and_top_level_imports_pass():
    m = module("dossier.render.figures", """\
        import pickle
        from dossier.render.numbers import fmt
        try:
            import fcntl
        except ImportError:
            fcntl = None

        def figure():
            import matplotlib
            from matplotlib.figure import Figure
            from scipy.optimize import brentq
            from http.server import ThreadingHTTPServer
    """)
    assert local_import_violations(m, KNOWN) == []


# -- 5. private names stay in their module ----------------------------------------------
def test_a_private_name_imported_or_reached_from_another_module_is_reported():
    m = module("dossier.build.pipeline", """\
        from dossier.build.writer import _is_within, write_site
        from dossier.render import pages as site

        def run():
            return site._template("case.html")
    """)
    assert private_name_violations(m, KNOWN) == [
        "dossier/build/pipeline.py:1: `from dossier.build.writer import _is_within, write_site` "
        "imports the private name _is_within from dossier.build.writer: "
        "make it public where it belongs",
        "dossier/build/pipeline.py:5: `site._template` (in run()) uses the private name "
        "_template of dossier.render.pages: make it public where it belongs"]


def test_public_names_dunder_names_and_private_names_of_the_same_module_pass():
    m = module("dossier.build.pipeline", """\
        from dossier import __version__
        from dossier.build.writer import is_within
        def _helper():
            return is_within
        value = _helper()
    """)
    assert private_name_violations(m, KNOWN) == []


# -- 6. file and terminal I/O only where FILE_IO says ----------------------------------------
@pytest.mark.parametrize("call, kind", [
    ("path.read_bytes()", "read"),
    ("Path(p).read_text(encoding='utf-8')", "read"),
    ("files('dossier.templates').joinpath(n).read_text()", "read"),
    ("open(path, 'rb')", "read"),
    ("open(path)", "read"),
    ("path.open()", "read"),
    ("os.open(path, os.O_RDONLY)", "read"),
    ("open(path, 'x')", "write"),
    ("open(path, mode)", "write"),
    ("path.open('a')", "write"),
    ("os.open(path, os.O_RDWR | os.O_APPEND)", "write"),
    ("os.open(path, flags, 0o600)", "write"),
    ("path.write_text(text)", "write"),
    ("folder.mkdir(parents=True)", "write"),
    ("tmp.replace(target)", "write"),
    ("os.replace(tmp, path)", "write"),
    ("os.link(src, dest)", "write"),
    ("shutil.rmtree(tmp)", "write"),
    ("tempfile.mkdtemp(dir=parent)", "write"),
    ("rmtree(tmp)", "write"),
    ("print('hello')", "print"),
    ("click.echo('hello', err=True)", "print"),
    ("sys.stderr.write('hello')", "print"),
])
def test_file_and_terminal_calls_are_recognised(call, kind):
    m = module("dossier.engine.thermo", f"""\
        import os, shutil, sys, tempfile
        import click
        from importlib.resources import files
        from pathlib import Path
        from shutil import rmtree
        {call}
    """)
    assert [op.kind for op in file_operations(m)] == [kind]


def test_calls_that_only_look_like_file_calls_are_not_taken_for_them():
    m = module("dossier.engine.thermo", """\
        import dataclasses, shutil, tempfile, webbrowser
        text.replace('a', 'b')
        text.replace(*pair)
        dataclasses.replace(record, hf=1.0)
        webbrowser.open(url)
        shutil.which('dot')
        tempfile.gettempdir()
        path.exists()
        sorted(folder.glob('*.md'))
    """)
    assert file_operations(m) == []


def test_a_file_read_outside_the_table_is_reported():
    m = module("dossier.review.digest", """\
        def digest_for_case(path):
            return path.read_bytes()
    """)
    assert read_violations(m) == [
        "dossier/review/digest.py:2: `path.read_bytes()` in digest_for_case() reads a file, but "
        "dossier.review.digest may read none (FILE_IO); case files are read only by "
        "dossier/casefile/load.py"]
    assert read_violations(module("dossier.casefile.load", "data = open(p, 'rb').read()\n")) == []


def test_a_write_outside_the_table_is_reported_against_the_site_writer():
    m = module("dossier.render.pages", """\
        import shutil

        def publish(site, out):
            shutil.copytree(site, out)
    """)
    assert site_write_violations(m) == [
        "dossier/render/pages.py:4: `shutil.copytree(site, out)` in publish() writes to the file "
        "system, but dossier.render.pages may write nothing (FILE_IO); the site is written only "
        "by dossier/build/writer.py"]
    writer = module("dossier.build.writer", "import os\nos.rename(a, b)\n")
    assert site_write_violations(writer) == []


def test_a_cache_write_outside_the_cache_is_reported_even_in_the_writer():
    pipeline = module("dossier.build.pipeline", """\
        import shutil

        def drop_new_cache(cache):
            shutil.rmtree(cache.root, ignore_errors=True)
    """)
    assert cache_write_violations(pipeline) == [
        "dossier/build/pipeline.py:4: `shutil.rmtree(cache.root, ignore_errors=True)` in "
        "drop_new_cache() writes to the cache; only dossier/build/cache.py writes the cache"]
    writer = module("dossier.build.writer", "cache_dir.mkdir()\n")
    assert cache_write_violations(writer) == [
        "dossier/build/writer.py:1: `cache_dir.mkdir()` at module level writes to the cache; "
        "only dossier/build/cache.py writes the cache"]
    assert cache_write_violations(module("dossier.build.cache", "cache_dir.mkdir()\n")) == []


def test_printing_outside_the_command_line_is_reported():
    m = module("dossier.engine.safety", """\
        class Screen:
            def show(self):
                print(self)
    """)
    assert print_violations(m) == [
        "dossier/engine/safety.py:3: `print(self)` in Screen.show() prints, but "
        "dossier.engine.safety may not (FILE_IO); only the command line prints"]
    assert print_violations(module("dossier.cli.main", "print('ok')\n")) == []


# -- 7. nothing registers itself on import ----------------------------------------------------
def test_a_decorator_that_fills_a_module_level_list_is_reported():
    m = module("dossier.model.findings", """\
        _RULES = []

        def rule(name):
            def register(fn):
                _RULES.append((name, fn))
                return fn
            return register
    """)
    assert registration_violations(m, KNOWN) == [
        "dossier/model/findings.py:5: `_RULES.append((name, fn))` in rule.register() fills the "
        "module-level _RULES: a container filled by calls is a registry "
        "(make it an explicit tuple or pass it along)"]


def test_code_that_fills_containers_at_import_is_reported():
    m = module("dossier.assess.rules", """\
        import atexit
        from functools import singledispatch
        from dossier.model.findings import RULES
        RULES.append(check)
        TABLE = {}
        TABLE['x'] = 1
        atexit.register(flush)

        @describe.register
        def _(x): ...

        def later():
            RULES.extend([check])
    """)
    assert registration_violations(m, KNOWN) == [
        "dossier/assess/rules.py:4: `RULES.append(check)` at module level changes RULES when the "
        "module is imported: define it whole (nothing registers itself by being imported)",
        "dossier/assess/rules.py:6: `TABLE['x'] = 1` at module level changes TABLE when the "
        "module is imported: define it whole (nothing registers itself by being imported)",
        "dossier/assess/rules.py:7: `atexit.register(flush)` at module level changes "
        "the state of atexit when the module is imported: define it whole "
        "(nothing registers itself by being imported)",
        "dossier/assess/rules.py:9: `@describe.register` on _ registers it when the module is "
        "imported",
        "dossier/assess/rules.py:13: `RULES.extend([check])` in later() fills the module-level "
        "RULES: a container filled by calls is a registry "
        "(make it an explicit tuple or pass it along)"]


def test_a_global_statement_is_reported():
    m = module("dossier.library.lookup", """\
        _LIBRARY = None

        def default_library():
            global _LIBRARY
            _LIBRARY = load()
            return _LIBRARY
    """)
    assert registration_violations(m, KNOWN) == [
        "dossier/library/lookup.py:4: `global _LIBRARY` in default_library(): a function "
        "rebinds module state; define it whole where it is defined"]


def test_local_containers_instance_state_and_explicit_tuples_are_not_registries():
    m = module("dossier.assess.rules", """\
        import click
        RULES = (unfavourable, crossover)

        class Validator:
            def __init__(self):
                self.problems = []
            def add(self, problem):
                self.problems.append(problem)

        def run(rules=RULES):
            found = []
            for rule in rules:
                found.extend(rule())
            return found

        def shadowing(RULES):
            RULES.append(1)

        @click.group()
        def main(): ...

        @main.command()
        def build(): ...
    """)
    assert registration_violations(m, KNOWN) == []


# -- 8. sizes -------------------------------------------------------------------------------
def test_a_module_over_600_lines_is_reported():
    assert module_size_violations(module("dossier.build.pipeline", "x = 1\n" * 601)) == [
        "dossier/build/pipeline.py: 601 lines (at most 600)"]
    assert module_size_violations(module("dossier.build.pipeline", "x = 1\n" * 600)) == []


def test_a_function_over_80_lines_is_counted_from_def_to_its_last_line():
    body = "".join(f"    x{i} = {i}\n" for i in range(79))
    m = module("dossier.engine.roots", f"""\
@decorated
def brent(f):
{body}    return x0

class Solver:
    def solve(self):
{textwrap.indent(body, "    ")}
    def short(self):
        return 1
""")
    assert function_size_violations(m) == [
        "dossier/engine/roots.py:2: brent() has 81 lines (at most 80)"]
    assert function_size_violations(module("dossier.engine.roots", f"def ok():\n{body}")) == []


# -- 6. the one dynamic import ------------------------------------------------------
def test_a_module_imported_by_a_name_made_at_run_time_is_reported():
    m = module("dossier.build.units", """\
        import importlib

        def load(kind):
            return importlib.import_module("dossier.render." + kind)
    """)
    assert dynamic_import_violations(m) == [
        "dossier/build/units.py:4: `importlib.import_module('dossier.render.' + kind)` "
        "(in load()) imports a module named at run time; only dossier.cli.main may "
        "(its command table)"]


def test_the_command_table_of_the_command_line_may_import_by_name():
    m = module("dossier.cli.main", """\
        import importlib

        def command(name):
            return importlib.import_module(TABLE[name])
    """)
    assert dynamic_import_violations(m) == []
