"""Guards on the project itself: lazy imports, layering, help text and docs."""

import ast
import subprocess
import sys
from pathlib import Path

import pytest

from bomcheck.cli.main import build_parser

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "bomcheck"
MODULES = sorted(PACKAGE.rglob("*.py"))
STAGES = ("read", "parse", "stress", "evaluate", "pipeline", "substitute", "report", "render", "cli")


def _rel(path: Path) -> str:
    return path.relative_to(PACKAGE).as_posix()


def _package(module: str) -> str:
    """``bomcheck.parse.values`` -> ``parse``; a top-level module (errors, status, vocabulary,
    spec, api) -> ``core``, the shared leaves every stage may import."""
    parts = module.split(".")
    return parts[1] if len(parts) > 2 and parts[1] in STAGES else "core"


# What each stage may import from the others: the pipeline's direction. The middle (parse to
# report) imports no renderer and no command line; only ``read`` opens inputs.
MAY_IMPORT = {
    "core": {"core"},
    "read": {"core"},
    "parse": {"core", "read"},
    "stress": {"core", "parse"},
    "evaluate": {"core", "read", "parse", "stress"},
    "report": {"core", "parse", "stress", "evaluate"},
    "pipeline": {"core", "read", "parse", "stress", "evaluate", "report"},
    "substitute": {"core", "read", "parse", "stress", "evaluate", "report", "pipeline"},
    "render": {"core", "parse", "report", "evaluate", "substitute"},
    "cli": set(STAGES) | {"core"},
}
# The library's front door may call any stage but the command line.
API = {"api.py": set(STAGES) - {"cli"} | {"core"}, "__init__.py": set(STAGES) - {"cli"} | {"core"},
       "__main__.py": {"core", "cli"}}
# Stages that may import these third-party libraries (the terminal and the workbook are edges).
HEAVY_EDGES = {"rich": {"render", "cli"}, "openpyxl": {"read", "render"}}


def _own_imports(path: Path):
    """(imported bomcheck module, line, at function level?) for each import of the package's own
    modules; ``from bomcheck.x import y`` counts ``bomcheck.x.y`` when that is a module."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    inner = {id(n) for f in ast.walk(tree) if isinstance(f, (ast.FunctionDef, ast.AsyncFunctionDef))
             for n in ast.walk(f)}
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names = [node.module]
        else:
            continue
        for name in names:
            if name.split(".")[0] == "bomcheck":
                yield name, node.lineno, id(node) in inner


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(a.name.split(".")[0] for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.add(node.module.split(".")[0])
    return names


def _stage_of_file(path: Path) -> str:
    rel = _rel(path)
    return rel.split("/")[0] if "/" in rel and rel.split("/")[0] in STAGES else "core"


@pytest.mark.parametrize("path", MODULES, ids=_rel)
def test_imports_follow_the_pipeline(path):
    rel = _rel(path)
    allowed = API.get(rel, MAY_IMPORT[_stage_of_file(path)])
    stage = _stage_of_file(path)
    wrong = [f"{name} (line {line})" for name, line, _ in _own_imports(path)
             if _package(name) not in allowed | {stage} and name != "bomcheck"]
    assert wrong == [], f"{rel} ({stage}) imports against the pipeline's direction: {wrong}"


@pytest.mark.parametrize("path", MODULES, ids=_rel)
def test_heavy_libraries_only_at_the_edges(path):
    stage = _stage_of_file(path)
    used = {lib for lib in HEAVY_EDGES if lib in _imports(path) and stage not in HEAVY_EDGES[lib]}
    assert not used, f"{_rel(path)} ({stage}) imports {sorted(used)}"


# Function-level imports of the package's own modules, each with its reason: they keep
# ``bomcheck --help`` and a run light (pandas, openpyxl, rich and the stages load only when the
# command needs them). Any other import of an own module belongs at the top of the module.
LAZY_IMPORTS = {
    "__init__.py": "the public API loads a stage on first use, so `import bomcheck` stays light",
    "cli/main.py": "argument parsing and --help import no stage",
    "cli/commands.py": "the terminal renderer (and rich) loads only when it prints: a --quiet run "
                       "into a log prints plain lines",
    "render/registry.py": "the output registry names writers; a run loads only the ones it writes",
    "render/writers.py": "each writer loads its library (openpyxl, the HTML page) only when used",
}


def test_function_level_imports_of_own_modules_have_a_reason():
    found = sorted({_rel(p) for p in MODULES for _, _, inner in _own_imports(p) if inner}
                   - set(LAZY_IMPORTS))
    assert found == [], f"move these imports to the top of the module: {found}"


MAX_MODULE_LINES = 500
MAX_FUNCTION_LINES = 60


def test_no_module_over_the_size_limit():
    sizes = {_rel(p): len(p.read_text(encoding="utf-8").splitlines()) for p in MODULES}
    over = {m: n for m, n in sizes.items()
            if n > MAX_MODULE_LINES}
    assert over == {}, f"split these modules (limit {MAX_MODULE_LINES} lines): {over}"


def test_no_function_over_the_size_limit():
    over = {}
    for path in MODULES:
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                key, n = f"{_rel(path)}:{node.name}", node.end_lineno - node.lineno + 1
                if n > MAX_FUNCTION_LINES:
                    over[key] = n
    assert over == {}, f"split these functions (limit {MAX_FUNCTION_LINES} lines): {over}"


def test_help_path_imports_no_heavy_modules():
    code = ("import sys, bomcheck.cli.main as c; c.build_parser().format_help(); "
            "print(sorted(m for m in ('pandas', 'pint', 'openpyxl', 'numpy', 'rich', 'jsonschema') "
            "if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def _commands():
    parser = build_parser()
    sub = next(a for a in parser._actions if a.__class__.__name__ == "_SubParsersAction")
    return sub.choices


@pytest.mark.parametrize("name", sorted(_commands()))
def test_every_command_has_help_and_is_in_readme(name):
    sub = _commands()[name]
    assert sub.description and len(sub.format_help()) > 200
    assert f"bomcheck {name}" in (ROOT / "README.md").read_text(encoding="utf-8")


def test_every_module_starts_with_a_sentence():
    for path in MODULES:
        doc = ast.get_docstring(ast.parse(path.read_text(encoding="utf-8")))
        assert doc and doc.strip().endswith((".", ")")) or doc.split("\n")[0].endswith("."), path.name


def test_version_and_help_answer():
    for flag in ("--version", "--help"):
        out = subprocess.run([sys.executable, "-m", "bomcheck", flag], capture_output=True,
                             text=True)
        assert out.returncode == 0 and "bomcheck" in out.stdout


# Modules outside ``read`` that may open files themselves, and why; every other module reads its
# inputs through bomcheck.read.reader (limits, regular files only, one TOML loader) and writes
# through render/outfiles.
FILE_ACCESS = {
    "render/outfiles.py": "the atomic writer",
    "pipeline/batch.py": "the per-board output pieces its worker processes write",
    "render/batch_out.py": "reading the per-board pieces back to stitch the combined outputs",
    "cli/commands.py": "counting a BOM's lines to decide on a progress bar",
    "evaluate/rules.py": "the shipped rule sets and schema (package data)",
}


def test_only_the_reader_and_writers_open_files():
    offenders = []
    for path in MODULES:
        if _rel(path) in FILE_ACCESS or _stage_of_file(path) == "read":
            continue
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Call):
                f = node.func
                name = f.id if isinstance(f, ast.Name) else getattr(f, "attr", None)
                direct = isinstance(f, ast.Name) and name == "open" or (
                    isinstance(f, ast.Attribute)
                    and name in ("open", "read_text", "read_bytes", "write_text", "write_bytes")
                    and not (isinstance(f.value, ast.Name) and f.value.id in ("reader",)))
                if direct:
                    offenders.append(f"{_rel(path)}:{node.lineno}")
    assert offenders == []


# Suites that guard the whole tool rather than one module; every other test module is named after
# the source module it tests (DEVELOPERS.md, "Tests").
CROSS_CUTTING = {"test_golden", "test_meta", "test_monotone", "test_no_wrong_pass",
                 "test_no_wrong_pass_stress", "test_extending", "test_hostile_inputs",
                 "test_packaging", "test_rule_examples"}


def _test_module_of(path: Path) -> str:
    """`test_<name>`, or `test_<package>_<name>` where the name is used twice or the package is
    the substitute check (its modules are named for their part of the check)."""
    package = path.parent.name
    shared = sum(other.stem == path.stem for other in MODULES) > 1
    if package == "substitute" or shared:
        return f"test_{package}_{path.stem}"
    return f"test_{path.stem}"


def test_one_test_module_per_source_module():
    wanted = {_test_module_of(p) for p in MODULES if p.name not in ("__init__.py", "__main__.py")}
    # pytest also collects *_test.py: such a module is named after no source module either
    present = {p.stem for p in (ROOT / "tests").glob("test_*.py")} | {
        p.stem for p in (ROOT / "tests").glob("*_test.py")}
    assert not wanted - present, f"source modules without a test module: {sorted(wanted - present)}"
    strays = present - wanted - CROSS_CUTTING
    assert not strays, f"test modules named after no source module: {sorted(strays)}"
