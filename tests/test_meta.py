"""Guards on the project itself: lazy imports, layering, help text and docs."""

import ast
import subprocess
import sys
from pathlib import Path

import pytest

from bomcheck.cli import build_parser

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "bomcheck"
# The edges (reading files, writing the terminal and spreadsheets) may import rich/openpyxl;
# the core may not.
EDGE = {"cli.py", "commands.py", "render.py", "xlsx.py", "xlsx_substitutes.py", "reader.py",
        "__main__.py"}


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(a.name.split(".")[0] for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.add(node.module.split(".")[0])
    return names


@pytest.mark.parametrize("module", sorted(p.name for p in PACKAGE.glob("*.py") if p.name not in EDGE))
def test_core_modules_import_no_rich_or_openpyxl(module):
    assert not _imports(PACKAGE / module) & {"rich", "openpyxl"}


def test_help_path_imports_no_heavy_modules():
    code = ("import sys, bomcheck.cli as c; c.build_parser().format_help(); "
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
    for path in PACKAGE.glob("*.py"):
        doc = ast.get_docstring(ast.parse(path.read_text(encoding="utf-8")))
        assert doc and doc.strip().endswith((".", ")")) or doc.split("\n")[0].endswith("."), path.name


def test_version_and_help_answer():
    for flag in ("--version", "--help"):
        out = subprocess.run([sys.executable, "-m", "bomcheck", flag], capture_output=True,
                             text=True)
        assert out.returncode == 0 and "bomcheck" in out.stdout


# Modules that may open files themselves, and why; every other module reads its inputs through
# bomcheck.reader (limits, regular files only, one TOML loader) and writes through outfiles.
FILE_ACCESS = {
    "reader.py": "the input reader",
    "workbook_scan.py": "the input reader's look inside a workbook before a library reads it",
    "outfiles.py": "the atomic writer",
    "batch.py": "the per-board outputs its worker processes write and read back",
    "commands.py": "counting a BOM's lines to decide on a progress bar",
    "importer.py": "hashing the BOM file the reader has read",
    "rules.py": "the shipped rule sets and schema (package data)",
}


def test_only_the_reader_and_writers_open_files():
    import ast

    offenders = []
    for path in sorted((ROOT / "bomcheck").glob("*.py")):
        if path.name in FILE_ACCESS:
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
                    offenders.append(f"{path.name}:{node.lineno}")
    assert offenders == []
