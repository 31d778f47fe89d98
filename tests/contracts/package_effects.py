"""The rules about what a module does, as checks over a module's source: which
modules may touch files or the terminal, that nothing registers itself by
being imported, and the size of modules and functions.

Like those in :mod:`package_imports`, every check takes a :class:`Module` and
returns one message per violation, naming the file, the line and the call or
function that breaks the rule.
"""
from __future__ import annotations

import ast
from dataclasses import dataclass
from typing import Mapping

from package_imports import (Module, Where, aliases, dotted, imports, is_ours,
                             package_module_names, root_name, walk)


@dataclass(frozen=True)
class Grant:
    """What one module may do with files and the terminal ("" = nothing)."""
    reads: str = ""
    writes: str = ""
    prints: str = ""


# Every module that reads or writes files, or prints, with what it reads, writes
# or prints.  A file-touching call in a module not granted it here is a violation.
CASE_FILE_READER = "dossier.casefile.load"
SITE_WRITER = "dossier.build.writer"
CACHE_WRITER = "dossier.build.cache"
FILE_IO = {
    CASE_FILE_READER: Grant(reads="case files and their revisions: the one reader"),
    "dossier.casefile.template": Grant(writes="one new case file (`dossier new`)"),
    "dossier.library.datafile": Grant(reads="the package's species data (importlib.resources)"),
    "dossier.review.signatures": Grant(reads="signature files",
                                       writes="signature files (append under a lock)"),
    "dossier.review.keys": Grant(reads="private keys and the trusted-keys file",
                                 writes="a new private key and its folder"),
    "dossier.review.optional": Grant(reads="the signature and trusted-keys files beside a case "
                                           "and the board's policy file, once per build"),
    "dossier.render.pages": Grant(reads="the page templates (importlib.resources)"),
    "dossier.render.guide": Grant(reads="the guide's Markdown sources (importlib.resources)"),
    "dossier.build.keys": Grant(reads="templates, guide sources and species data, "
                                      "to key the build (importlib.resources)"),
    SITE_WRITER: Grant(reads="the manifest of the site it replaces",
                       writes="the site, whole, by renaming a finished folder into place"),
    CACHE_WRITER: Grant(reads="the cache", writes="the cache"),
    "dossier.cli.main": Grant(prints="command output, errors and progress"),
    "dossier.cli.signing": Grant(prints="command output and errors"),
    "dossier.cli.checking": Grant(prints="check's verdict per file, its problems and notes"),
    "dossier.cli.site": Grant(prints="build progress, the build report and serve's messages"),
}


def file_of(name: str) -> str:
    return name.replace(".", "/") + ".py"


def shorten(text: str, width: int = 60) -> str:
    text = " ".join(text.split())
    return text if len(text) <= width else text[:width - 3] + "..."


# -- 6. file and terminal I/O only where the table says ----------------------------
@dataclass(frozen=True)
class Operation:
    line: int
    kind: str    # "read", "write" or "print"
    call: str    # the call as written, on one line
    where: Where

    @property
    def shown(self) -> str:
        return shorten(self.call)

    @property
    def about_the_cache(self) -> bool:
        """Which folder a call touches is known only when it runs; a call whose
        path is spelled with "cache" is taken to be about the cache."""
        return "cache" in self.call.lower()


# Functions (by dotted name, through the module's import aliases) that change the
# file system; every shutil and tempfile function does, except those in HARMLESS.
WRITING_FUNCTIONS = frozenset({
    "os.replace", "os.rename", "os.renames", "os.remove", "os.unlink", "os.rmdir",
    "os.removedirs", "os.mkdir", "os.makedirs", "os.link", "os.symlink", "os.chmod",
    "os.chown", "os.truncate", "os.utime", "os.mkfifo", "os.mknod"})
HARMLESS = frozenset({"shutil.which", "shutil.get_terminal_size", "shutil.disk_usage",
                      "shutil.get_archive_formats", "shutil.get_unpack_formats",
                      "tempfile.gettempdir", "tempfile.gettempdirb", "tempfile.gettempprefix"})
# Functions that open a file; the mode (second argument) says whether they write.
OPENING_FUNCTIONS = frozenset({"open", "io.open", "codecs.open", "os.fdopen", "gzip.open",
                               "bz2.open", "lzma.open", "tarfile.open", "zipfile.ZipFile"})
WRITING_FLAGS = frozenset({"O_WRONLY", "O_RDWR", "O_CREAT", "O_APPEND", "O_TRUNC", "O_EXCL"})
# Methods of Path (and of importlib.resources' Traversable), whatever the receiver,
# unless the receiver is an imported module (webbrowser.open, dataclasses.replace).
READING_METHODS = frozenset({"read_bytes", "read_text"})
WRITING_METHODS = frozenset({"write_bytes", "write_text", "mkdir", "touch", "unlink", "rmdir",
                             "chmod", "symlink_to", "hardlink_to", "link_to"})
# Functions that take a path and read or write the file it names.
READING_FUNCTIONS = frozenset({"numpy.load", "numpy.loadtxt", "numpy.genfromtxt", "numpy.fromfile"})
WRITING_FUNCTIONS |= {"numpy.save", "numpy.savez", "numpy.savez_compressed", "numpy.savetxt"}
PRINTING_FUNCTIONS = frozenset({"print", "click.echo", "click.secho", "sys.stdout.write",
                                "sys.stderr.write", "pprint.pprint", "tqdm.tqdm"})


def module_aliases(module: Module) -> set[str]:
    """Local names bound to modules by ``import x`` / ``import x.y as z``."""
    return {a.asname or a.name.split(".")[0]
            for node in ast.walk(module.tree) if isinstance(node, ast.Import) for a in node.names}


def _argument(call: ast.Call, position: int, keyword: str) -> ast.expr | None:
    if len(call.args) > position:
        return call.args[position]
    return next((k.value for k in call.keywords if k.arg == keyword), None)


def _mode_writes(mode: ast.expr | None) -> bool:
    """An open() mode that writes; a mode that is not a literal counts as writing."""
    if mode is None:
        return False
    if isinstance(mode, ast.Constant) and isinstance(mode.value, str):
        return any(c in mode.value for c in "wax+")
    return True


def _flags_write(flags: ast.expr | None, modules: set[str]) -> bool:
    """os.open() flags that write; flags held in a variable count as writing."""
    if flags is None:
        return False
    attrs = {n.attr for n in ast.walk(flags) if isinstance(n, ast.Attribute)}
    variables = {n.id for n in ast.walk(flags) if isinstance(n, ast.Name)} - modules - {"getattr"}
    return bool(attrs & WRITING_FLAGS or variables)


def _kind(call: ast.Call, names: dict[str, str], modules: set[str]) -> str | None:
    func = call.func
    name = dotted(func, names)
    if name in PRINTING_FUNCTIONS:
        return "print"
    if name in OPENING_FUNCTIONS:
        return "write" if _mode_writes(_argument(call, 1, "mode")) else "read"
    if name == "os.open":
        return "write" if _flags_write(_argument(call, 1, "flags"), modules) else "read"
    if name in READING_FUNCTIONS:
        return "read"
    if name in WRITING_FUNCTIONS:
        return "write"
    if name and name.count(".") == 1 and name.split(".")[0] in ("shutil", "tempfile"):
        return None if name in HARMLESS else "write"
    if not isinstance(func, ast.Attribute) or root_name(func.value) in modules:
        return None
    if func.attr in READING_METHODS:
        return "read"
    if func.attr in WRITING_METHODS:
        return "write"
    if func.attr == "open":  # Path.open(mode="r")
        return "write" if _mode_writes(_argument(call, 0, "mode")) else "read"
    if (func.attr in ("rename", "replace") and len(call.args) == 1 and not call.keywords
            and not isinstance(call.args[0], ast.Starred)):
        return "write"  # Path.rename(target); str.replace takes two arguments
    return None


def file_operations(module: Module) -> list[Operation]:
    """Every call in the module that reads or writes a file, or prints."""
    names, modules = aliases(module), module_aliases(module)
    found = []
    for node, where in walk(module.tree):
        if isinstance(node, ast.Call):
            kind = _kind(node, names, modules)
            if kind:
                text = " ".join(ast.unparse(node).split())
                found.append(Operation(node.lineno, kind, text, where))
    return found


def read_violations(module: Module, table: Mapping[str, Grant] = FILE_IO) -> list[str]:
    if table.get(module.name, Grant()).reads:
        return []
    return [f"{module.path}:{op.line}: `{op.shown}` {op.where.describe()} reads a file, but "
            f"{module.name} may read none (FILE_IO); case files are read only by "
            f"{file_of(CASE_FILE_READER)}"
            for op in file_operations(module) if op.kind == "read"]


def site_write_violations(module: Module, table: Mapping[str, Grant] = FILE_IO) -> list[str]:
    if table.get(module.name, Grant()).writes:
        return []
    return [f"{module.path}:{op.line}: `{op.shown}` {op.where.describe()} writes to the file "
            f"system, but {module.name} may write nothing (FILE_IO); the site is written only "
            f"by {file_of(SITE_WRITER)}"
            for op in file_operations(module) if op.kind == "write" and not op.about_the_cache]


def cache_write_violations(module: Module) -> list[str]:
    if module.name == CACHE_WRITER:
        return []
    return [f"{module.path}:{op.line}: `{op.shown}` {op.where.describe()} writes to the cache; "
            f"only {file_of(CACHE_WRITER)} writes the cache"
            for op in file_operations(module) if op.kind == "write" and op.about_the_cache]


def print_violations(module: Module, table: Mapping[str, Grant] = FILE_IO) -> list[str]:
    if table.get(module.name, Grant()).prints:
        return []
    return [f"{module.path}:{op.line}: `{op.shown}` {op.where.describe()} prints, but "
            f"{module.name} may not (FILE_IO); only the command line prints"
            for op in file_operations(module) if op.kind == "print"]


# -- 7. nothing registers itself on import -----------------------------------------
# Methods that add to a container, and calls that change the interpreter's
# global state; both are the way a module registers itself when imported.
# (click's ``@group.command()`` is not among them: it builds the command tree
# in the one module that declares it, and nothing else can add to it.)
FILLING_METHODS = frozenset({"append", "extend", "insert", "add", "update", "setdefault",
                             "register", "appendleft", "extendleft", "__setitem__"})
GLOBAL_REGISTRATIONS = frozenset({
    "atexit.register", "copyreg.pickle", "codecs.register", "mimetypes.add_type",
    "warnings.filterwarnings", "warnings.simplefilter", "matplotlib.use", "signal.signal",
    "sys.setrecursionlimit", "logging.basicConfig"})


def _module_level_names(module: Module, known: frozenset[str]) -> set[str]:
    """Names a module binds by assignment at import, and names it imports from our modules."""
    names = set()
    for node, where in walk(module.tree):
        if where.qualname:
            continue
        if isinstance(node, (ast.Assign, ast.AnnAssign, ast.AugAssign)):
            for target in (node.targets if isinstance(node, ast.Assign) else [node.target]):
                names |= {n.id for n in ast.walk(target) if isinstance(n, ast.Name)}
    for imp in imports(module, known):
        if is_ours(imp.target) and not imp.where.qualname:
            names |= set(imp.names)
    return names


def _local_names(function: ast.AST | None) -> set[str]:
    if function is None:
        return set()
    args = function.args
    names = {a.arg for a in [*args.posonlyargs, *args.args, *args.kwonlyargs]}
    names |= {a.arg for a in (args.vararg, args.kwarg) if a is not None}
    for node in ast.walk(function):
        if isinstance(node, ast.Name) and isinstance(node.ctx, ast.Store):
            names.add(node.id)
    return names


def _changed_container(node: ast.AST, names: dict[str, str]) -> tuple[str, ast.AST] | None:
    """(what it changes, the node) when ``node`` adds to or assigns into a container,
    or registers with the interpreter."""
    if isinstance(node, ast.Call) and dotted(node.func, names) in GLOBAL_REGISTRATIONS:
        return "the state of " + dotted(node.func, names).rpartition(".")[0], node
    if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute):
        if node.func.attr in FILLING_METHODS and root_name(node.func.value):
            return root_name(node.func.value), node
    targets = (node.targets if isinstance(node, (ast.Assign, ast.Delete))
               else [node.target] if isinstance(node, (ast.AugAssign, ast.AnnAssign)) else [])
    for target in targets:
        if isinstance(target, (ast.Subscript, ast.Attribute)) and root_name(target):
            return root_name(target), node
    return None


def _short(node: ast.AST) -> str:
    return shorten(ast.unparse(node))


def _innermost(functions: dict[str, ast.AST], where: Where) -> ast.AST | None:
    qualname = where.qualname
    while qualname and qualname not in functions:
        qualname = qualname.rpartition(".")[0]
    return functions.get(qualname)


def registration_violations(module: Module, known: frozenset[str] | None = None) -> list[str]:
    """Code that runs at import and adds to a container, and functions that fill a
    module-level container or rebind module state (``global``)."""
    known = (package_module_names() if known is None else known) | {module.name}
    names = aliases(module)
    module_names = _module_level_names(module, known)
    functions = {}
    for node, where in walk(module.tree):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda)):
            functions[where.inside(getattr(node, "name", "<lambda>"), True).qualname] = node
    found = []
    for node, where in walk(module.tree):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef)):
            for decorator in node.decorator_list:
                if isinstance(decorator, ast.Attribute) and decorator.attr in FILLING_METHODS:
                    found.append(f"{module.path}:{decorator.lineno}: `@{_short(decorator)}` on "
                                 f"{node.name} registers it when the module is imported")
        if isinstance(node, ast.Global):
            found.append(f"{module.path}:{node.lineno}: `{_short(node)}` {where.describe()}: "
                         "a function rebinds module state; define it whole where it is defined")
            continue
        changed = _changed_container(node, names)
        if changed is None:
            continue
        name, statement = changed
        if not where.in_function:
            found.append(f"{module.path}:{node.lineno}: `{_short(statement)}` {where.describe()} "
                         f"changes {name} when the module is imported: define it whole "
                         "(nothing registers itself by being imported)")
        elif name in module_names and name not in _local_names(_innermost(functions, where)):
            found.append(f"{module.path}:{node.lineno}: `{_short(statement)}` {where.describe()} "
                         f"fills the module-level {name}: a container filled by calls is a "
                         "registry (make it an explicit tuple or pass it along)")
    return found


# -- 8. sizes ---------------------------------------------------------------------------
MAX_MODULE_LINES = 600
MAX_FUNCTION_LINES = 80


def module_size_violations(module: Module) -> list[str]:
    lines = len(module.source.splitlines())
    if lines <= MAX_MODULE_LINES:
        return []
    return [f"{module.path}: {lines} lines (at most {MAX_MODULE_LINES})"]


def function_size_violations(module: Module) -> list[str]:
    """A function counts from its ``def`` line to the last line of its body."""
    found = []
    for node, where in walk(module.tree):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
            lines = node.end_lineno - node.lineno + 1
            if lines > MAX_FUNCTION_LINES:
                found.append(f"{module.path}:{node.lineno}: "
                             f"{where.inside(node.name, True).qualname}() has {lines} lines "
                             f"(at most {MAX_FUNCTION_LINES})")
    return found
