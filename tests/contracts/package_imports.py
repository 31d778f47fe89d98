"""The import rules that keep the package in layers, as checks over a module's
source: imports go only down the layers, no circles, no presentation library
below render/, function-local imports only for heavy packages, no private name
taken from another module.  (What a module may *do* is in :mod:`package_effects`.)

Every check takes a :class:`Module` (a dotted name and its source text) and
returns a list of messages, one per violation, each naming the file, the line
and the import, call or function that breaks the rule.  The tests in this
folder run the checks over every ``dossier/**/*.py`` and, to show that no check
can pass by accident, over small made-up modules that break each rule.

The walk is an :mod:`ast` walk of the whole tree: imports and calls inside
function bodies count as much as those at the top of a module.

``if TYPE_CHECKING:`` blocks are *not* exempt from any import rule.  They
never run, but an annotation that names a type from a higher layer is still a
dependency on that layer (the lower module must change when the higher one
does), and it is exactly the kind of import that hides a circle.  A type that
two layers share belongs in ``model/`` (or lower), where both can import it.
"""
from __future__ import annotations

import ast
import sys
from collections import deque
from dataclasses import dataclass
from functools import cache, cached_property
from pathlib import Path
from typing import Iterator

PACKAGE = "dossier"
SOURCE_ROOT = Path(__file__).resolve().parents[2]

# -- the layers, lowest first -----------------------------------------------
BASE_MODULES = ("dossier", "dossier.constants", "dossier.number_policy", "dossier.temperature",
                "dossier.errors")
LAYERS = ("base", "chem", "model", "casefile", "library", "engine", "assess", "review",
          "render", "build", "cli")

# Libraries that make pages, pictures, PDFs or terminals: only render/ and above.
PRESENTATION_LIBRARIES = frozenset({
    "jinja2", "markdown", "nh3", "matplotlib", "weasyprint", "click", "tqdm", "watchfiles",
    "markupsafe", "latex2mathml", "pikepdf", "pypdf"})

# Third-party packages that may be imported inside a function, because importing
# them is slow (cost measured with `python -X importtime`, cumulative) or may fail,
# and most commands never need them.  Everything else, our own modules and the
# standard library included, is imported at the top of the module.  (Not listed:
# numpy, imported everywhere anyway.)
HEAVY_PACKAGES = {
    "sympy": "about 330 ms; only for formulas shown as mathematics",
    "matplotlib": "200-450 ms; only for figures",
    "weasyprint": "about 550 ms and native libraries; only for PDF packets",
    "pikepdf": "about 50 ms (qpdf's native library); only to put meeting packets together "
               "from the case packets",
    "pypdf": "about 100-120 ms; only the tests read PDFs with it",
    "cryptography": "about 25-35 ms (exceptions, serialization, ed25519; cumulative); only to "
                    "make keys, sign and verify, which `dossier evaluate` and `check` never do",
    "scipy": "scipy.optimize about 420 ms; only for the solvers",
    "pint": "about 170 ms and a unit registry; only at the unit edge",
    "rdkit": "optional (installed for the tests); rdkit.Chem about 85 ms",
    "jinja2": "about 40 ms; only when pages are rendered",
    "latex2mathml": "about 50 ms; only when pages are rendered",
    "markdown": "about 20 ms; only when pages are rendered",
    "nh3": "about 3 ms, but only ever used with markdown, so loaded with it",
    "tqdm": "about 40 ms; only for a progress bar on a terminal",
    "watchfiles": "about 30 ms and a native extension; only for `dossier serve`",
    "thermo": "about 125 ms (thermo.unifac, cumulative); only for a case that asks for "
              "UNIFAC activity coefficients or a group-contribution estimate",
    "pgradd": "about 880 ms (GroupAdd.Library 145 ms + ThermoChem 735 ms, which pulls in "
              "scipy and matplotlib) and 340 ms to load its Benson groups; only for a "
              "[[species]] table that asks for a Benson estimate",
    "rapidfuzz": "12-22 ms; only for `dossier species` and the nearest names of a species "
                 "the library does not hold",
    "chemicals": "120-180 ms per submodule (vapor_pressure, acentric, heat_capacity); "
                 "only for the liquid step of a group-contribution estimate",
}
# Standard-library modules that may be imported inside a function.  Most cost
# about 1 ms and go at the top; the exceptions are listed with their reason.
LAZY_STANDARD_LIBRARY = {
    "http.server": "about 30 ms (email, html, socketserver); only for `dossier serve`",
    "importlib.metadata": "about 18 ms (email, zipfile, csv; `python -X importtime`, "
                          "cumulative); only to name the versions of the method libraries "
                          "an integrity record rests on, which `dossier evaluate` never prints",
}


# -- modules ----------------------------------------------------------------
@dataclass(frozen=True)
class Module:
    """One module of the package: its dotted name and its source text."""
    name: str
    source: str
    is_package: bool = False  # an __init__.py

    @property
    def path(self) -> str:
        return "/".join(self.name.split(".")) + ("/__init__.py" if self.is_package else ".py")

    @property
    def package(self) -> str:
        """The package relative imports start from."""
        return self.name if self.is_package else self.name.rpartition(".")[0]

    @cached_property
    def tree(self) -> ast.Module:
        return ast.parse(self.source, filename=self.path)


@cache
def package_modules() -> tuple[Module, ...]:
    """Every ``dossier/**/*.py`` of this source tree, sorted by name."""
    modules = []
    for path in sorted((SOURCE_ROOT / PACKAGE).rglob("*.py")):
        rel = path.relative_to(SOURCE_ROOT).with_suffix("")
        is_package = rel.name == "__init__"
        parts = rel.parts[:-1] if is_package else rel.parts
        modules.append(Module(".".join(parts), path.read_text(encoding="utf-8"), is_package))
    return tuple(sorted(modules, key=lambda m: m.name))


@cache
def package_module_names() -> frozenset[str]:
    return frozenset(m.name for m in package_modules())


def is_ours(name: str) -> bool:
    return name == PACKAGE or name.startswith(PACKAGE + ".")


def layer_of(name: str) -> str | None:
    if name in BASE_MODULES:
        return "base"
    parts = name.split(".")
    if len(parts) >= 2 and parts[0] == PACKAGE and parts[1] in LAYERS[1:]:
        return parts[1]
    return None


# -- where a node sits -----------------------------------------------------
@dataclass(frozen=True)
class Where:
    """The scope a node sits in."""
    qualname: str = ""         # "" at module level, "Cache.put", "build_site.<lambda>" ...
    in_function: bool = False  # True inside a def or lambda body (does not run at import)
    type_checking: bool = False

    def describe(self) -> str:
        if not self.qualname:
            return "at module level"
        return f"in {self.qualname}()" if self.in_function else f"in class {self.qualname}"

    def inside(self, name: str, function: bool) -> Where:
        qualname = f"{self.qualname}.{name}" if self.qualname else name
        return Where(qualname, function or self.in_function, self.type_checking)


def _is_type_checking(test: ast.expr) -> bool:
    return ((isinstance(test, ast.Name) and test.id == "TYPE_CHECKING")
            or (isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING"))


def walk(tree: ast.AST, where: Where = Where()) -> Iterator[tuple[ast.AST, Where]]:
    """Every node below ``tree`` with its scope."""
    for child in ast.iter_child_nodes(tree):
        yield from _visit(child, where)


def _visit(node: ast.AST, where: Where) -> Iterator[tuple[ast.AST, Where]]:
    """``node`` and the nodes below it.  Decorators, defaults, bases and annotations
    of a def or class run in the enclosing scope, as in Python; only the body is inside."""
    yield node, where
    if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda, ast.ClassDef)):
        inner = where.inside(getattr(node, "name", "<lambda>"),
                             function=not isinstance(node, ast.ClassDef))
        body = {id(n) for n in (node.body if isinstance(node.body, list) else [node.body])}
        for child in ast.iter_child_nodes(node):
            yield from _visit(child, inner if id(child) in body else where)
    elif isinstance(node, ast.If) and _is_type_checking(node.test):
        checking = Where(where.qualname, where.in_function, type_checking=True)
        for child in node.body:
            yield from _visit(child, checking)
        for child in node.orelse:
            yield from _visit(child, where)
    else:
        for child in ast.iter_child_nodes(node):
            yield from _visit(child, where)


# -- imports ------------------------------------------------------------------
@dataclass(frozen=True)
class Import:
    line: int
    target: str               # absolute dotted name of the module imported
    names: tuple[str, ...]    # names taken from it by a from-import
    text: str                 # the statement as written
    where: Where


def _absolute(module: Module, level: int, name: str | None) -> str:
    if level == 0:
        return name or ""
    parts = module.package.split(".")
    base = ".".join(parts[:len(parts) - (level - 1)]) if level - 1 < len(parts) else ""
    return f"{base}.{name}" if name and base else (name or base)


def aliases(module: Module) -> dict[str, str]:
    """Local name -> the dotted name it stands for, from every import in the module."""
    found: dict[str, str] = {}
    for node in ast.walk(module.tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                top = a.name.split(".")[0]
                found[a.asname or top] = a.name if a.asname else top
        elif isinstance(node, ast.ImportFrom):
            base = _absolute(module, node.level, node.module)
            for a in node.names:
                found[a.asname or a.name] = f"{base}.{a.name}"
    return found


def dotted(node: ast.expr, names: dict[str, str]) -> str | None:
    """``os.path.join`` -> "os.path.join", through the module's import aliases."""
    if isinstance(node, ast.Name):
        return names.get(node.id, node.id)
    if isinstance(node, ast.Attribute):
        head = dotted(node.value, names)
        return f"{head}.{node.attr}" if head else None
    return None


def root_name(node: ast.expr) -> str | None:
    while isinstance(node, (ast.Attribute, ast.Subscript)):
        node = node.value
    return node.id if isinstance(node, ast.Name) else None


def imports(module: Module, known: frozenset[str] | None = None) -> list[Import]:
    """Every import of the module, anywhere in it, resolved to absolute names.
    ``from p import n`` imports the module p.n when that is a module, else p."""
    known = (package_module_names() if known is None else known) | {module.name}
    names = aliases(module)
    found = []
    for node, where in walk(module.tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                found.append(Import(node.lineno, a.name, (), ast.unparse(node), where))
        elif isinstance(node, ast.ImportFrom):
            base = _absolute(module, node.level, node.module)
            taken = []
            for a in node.names:
                if f"{base}.{a.name}" in known:
                    found.append(Import(node.lineno, f"{base}.{a.name}", (), ast.unparse(node),
                                        where))
                else:
                    taken.append(a.name)
            if taken:
                found.append(Import(node.lineno, base, tuple(taken), ast.unparse(node), where))
        elif (isinstance(node, ast.Call) and node.args
              and dotted(node.func, names) in ("importlib.import_module", "__import__")
              and isinstance(node.args[0], ast.Constant) and isinstance(node.args[0].value, str)):
            found.append(Import(node.lineno, node.args[0].value, (), ast.unparse(node), where))
    return found


def _at(module: Module, imp: Import) -> str:
    scope = "" if not imp.where.qualname else f" ({imp.where.describe()})"
    checking = " (under TYPE_CHECKING)" if imp.where.type_checking else ""
    return f"{module.path}:{imp.line}: `{imp.text}`{scope}{checking}"


# -- 1. imports go only down the layers -----------------------------------------
def layer_violations(module: Module, known: frozenset[str] | None = None) -> list[str]:
    own = layer_of(module.name)
    if own is None:
        return [f"{module.path}: {module.name} is in no layer (layers: {', '.join(LAYERS)})"]
    found = []
    for imp in imports(module, known):
        if not is_ours(imp.target):
            continue
        theirs = layer_of(imp.target)
        if theirs is None:
            found.append(f"{_at(module, imp)} imports {imp.target}, which is in no layer")
        elif LAYERS.index(theirs) > LAYERS.index(own):
            found.append(f"{_at(module, imp)} imports {imp.target}: "
                         f"layer {own} may not import the higher layer {theirs}")
    return found


# -- 2. no import cycles ------------------------------------------------------------
def import_graph(modules: tuple[Module, ...]) -> dict[str, dict[str, Import]]:
    """module -> {module it imports: the first import that does it}, our modules only."""
    known = frozenset(m.name for m in modules)
    graph: dict[str, dict[str, Import]] = {m.name: {} for m in modules}
    for m in modules:
        for imp in imports(m, known):
            if imp.target in known and imp.target != m.name:
                graph[m.name].setdefault(imp.target, imp)
    return graph


def _strongly_connected(graph: dict[str, dict[str, Import]]) -> list[list[str]]:
    """Tarjan's algorithm, iterative; components of more than one module."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    components = []
    for start in sorted(graph):
        if start in index:
            continue
        work = [(start, iter(sorted(graph[start])))]
        index[start] = low[start] = len(index)
        stack.append(start)
        on_stack.add(start)
        while work:
            node, edges = work[-1]
            for nxt in edges:
                if nxt not in index:
                    index[nxt] = low[nxt] = len(index)
                    stack.append(nxt)
                    on_stack.add(nxt)
                    work.append((nxt, iter(sorted(graph[nxt]))))
                    break
                if nxt in on_stack:
                    low[node] = min(low[node], index[nxt])
            else:
                work.pop()
                if work:
                    low[work[-1][0]] = min(low[work[-1][0]], low[node])
                if low[node] == index[node]:
                    component = []
                    while True:
                        member = stack.pop()
                        on_stack.discard(member)
                        component.append(member)
                        if member == node:
                            break
                    if len(component) > 1:
                        components.append(sorted(component))
    return sorted(components)


def _shortest_cycle(graph: dict[str, dict[str, Import]], start: str, within: set[str]) -> list[str]:
    """The shortest way start -> ... -> start inside one component (breadth first)."""
    parent: dict[str, str | None] = {start: None}
    queue = deque([start])
    while queue:
        node = queue.popleft()
        for nxt in sorted(graph[node]):
            if nxt == start:
                path = [node]
                while parent[path[-1]] is not None:
                    path.append(parent[path[-1]])
                return [*reversed(path), start]
            if nxt in within and nxt not in parent:
                parent[nxt] = node
                queue.append(nxt)
    return [start]


def import_cycles(modules: tuple[Module, ...]) -> list[str]:
    """One message per circle of imports: its modules, and one way round it with
    the file and line of each import on the way."""
    by_name = {m.name: m for m in modules}
    graph = import_graph(modules)
    found = []
    for component in _strongly_connected(graph):
        cycle = _shortest_cycle(graph, component[0], set(component))
        steps = [f"{a} ({by_name[a].path}:{graph[a][b].line}: `{graph[a][b].text}`)"
                 for a, b in zip(cycle, cycle[1:])]
        found.append(f"import cycle among {', '.join(component)}: "
                     + " -> ".join(steps) + f" -> {cycle[-1]}")
    return found


# -- 3. presentation libraries only from render/ up -------------------------------
def presentation_violations(module: Module, known: frozenset[str] | None = None) -> list[str]:
    own = layer_of(module.name)
    if own is None or LAYERS.index(own) >= LAYERS.index("render"):
        return []
    found = []
    for imp in imports(module, known):
        top = imp.target.split(".")[0]
        if top in PRESENTATION_LIBRARIES:
            found.append(f"{_at(module, imp)} imports {top}, a presentation library: "
                         f"layer {own} is below render")
    return found


# -- 4. function-local imports only for heavy third-party packages -----------------
def _lazy_import_allowed(target: str) -> str | None:
    """Why ``target`` may be imported inside a function, or None."""
    top = target.split(".")[0]
    if is_ours(target):
        return None
    if top in sys.stdlib_module_names:
        return next((why for name, why in LAZY_STANDARD_LIBRARY.items()
                     if target == name or target.startswith(name + ".")), None)
    return HEAVY_PACKAGES.get(top)


def local_import_violations(module: Module, known: frozenset[str] | None = None) -> list[str]:
    found = []
    for imp in imports(module, known):
        if not imp.where.qualname or _lazy_import_allowed(imp.target):
            continue
        top = imp.target.split(".")[0]
        if is_ours(imp.target):
            why = "our own modules are imported at the top of the module"
        elif top in sys.stdlib_module_names:
            why = (f"{imp.target} is a standard-library module not in LAZY_STANDARD_LIBRARY: "
                   "import it at the top of the module")
        else:
            why = f"{top} is not in HEAVY_PACKAGES: import it at the top of the module"
        found.append(f"{_at(module, imp)} imports {imp.target} below the top of the module: {why}")
    return found


# -- 5. private names stay in their module -------------------------------------------
def _private(name: str) -> bool:
    return name.startswith("_") and not (name.startswith("__") and name.endswith("__"))


def private_name_violations(module: Module, known: frozenset[str] | None = None) -> list[str]:
    known = (package_module_names() if known is None else known) | {module.name}
    found = []
    for imp in imports(module, known):
        if not is_ours(imp.target):
            continue
        for part in imp.target.split(".")[1:]:
            if _private(part):
                found.append(f"{_at(module, imp)} imports the private module {imp.target}")
                break
        for name in imp.names:
            if _private(name):
                found.append(f"{_at(module, imp)} imports the private name {name} "
                             f"from {imp.target}: make it public where it belongs")
    names = aliases(module)
    seen = set()
    for node, where in walk(module.tree):
        if not isinstance(node, ast.Attribute):
            continue
        full = dotted(node, names)
        if not full or not is_ours(full) or (node.lineno, full) in seen:
            continue
        owner, _, attr = full.rpartition(".")
        if owner in known and owner != module.name and _private(attr):
            seen.add((node.lineno, full))
            found.append(f"{module.path}:{node.lineno}: `{ast.unparse(node)}` "
                         f"({where.describe()}) uses the private name {attr} of {owner}: "
                         "make it public where it belongs")
    return found


# -- 6. the one dynamic import ---------------------------------------------------------
#: The only module that may import a module named at run time: the command line's
#: table of commands loaded on first use (dossier.cli.main.COMMAND_MODULES).
DYNAMIC_IMPORTER = "dossier.cli.main"


def dynamic_import_violations(module: Module) -> list[str]:
    """Calls of importlib.import_module or __import__ with a name that is not written
    out, outside :data:`DYNAMIC_IMPORTER` (they would hide a dependency from every
    check above)."""
    if module.name == DYNAMIC_IMPORTER:
        return []
    names = aliases(module)
    out = []
    for node, where in walk(module.tree):
        if (isinstance(node, ast.Call)
                and dotted(node.func, names) in ("importlib.import_module", "__import__")
                and not (node.args and isinstance(node.args[0], ast.Constant))):
            scope = "" if not where.qualname else f" ({where.describe()})"
            out.append(f"{module.path}:{node.lineno}: `{ast.unparse(node)[:60]}`{scope} imports "
                       f"a module named at run time; only {DYNAMIC_IMPORTER} may (its command "
                       "table)")
    return out
