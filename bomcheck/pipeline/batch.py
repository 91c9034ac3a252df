"""Batch audit: many boards from a TOML manifest, audited on a pool of worker processes, with one
combined JSON report, Markdown summary and CSV, streamed board by board.

Each worker audits one board and writes that board's outputs to a temporary folder; the parent
only stitches the pieces together in manifest order, so its memory holds one board's summary at
a time and the combined report is byte-identical whichever worker finished first.
"""

from __future__ import annotations

import dataclasses
import tempfile
from collections.abc import Callable, Iterator
from pathlib import Path

from bomcheck.errors import BomcheckError, InputError
from bomcheck.frozen import frozen
from bomcheck.parse.importer import ImportOptions
from bomcheck.pipeline.audit import run_audit
from bomcheck.read.reader import read_toml
from bomcheck.report.model import worst_status

WORKERS = 2  # the machines this runs on have two cores or more
BOARD_KEYS = ("product", "bom", "design", "parts", "rules", "waivers", "design_sheet", "sheet")
BATCH_OUTPUTS = ("json", "markdown", "csv")  # what a batch run can write


@frozen
class Board:
    """One board of a manifest: its product name, input files and own options."""

    product: str
    bom: str
    design: str | None = None
    parts: str | None = None
    rules: tuple[str, ...] = ()
    waivers: str | None = None
    design_sheet: str | None = None
    sheet: str | int | None = None


@frozen
class BoardResult:
    """What a worker hands back: the board's status and totals, and its output pieces."""

    product: str
    status: str
    totals: dict
    inputs: tuple[dict, ...]
    pieces: dict  # output kind -> path of this board's piece


def _problem(manifest: str, where: str, problem: str, expected: str) -> InputError:
    return InputError(f"{where}: {problem}", path=manifest, expected=expected)


def _board(manifest: str, base: Path, i: int, entry, defaults: dict) -> Board:
    """The ``i``-th ``[[board]]`` table, its paths taken relative to the manifest's folder."""
    where = f"board {i + 1}"
    if not isinstance(entry, dict):
        raise _problem(manifest, where, "not a table", "[[board]] tables")
    unknown = sorted(set(entry) - set(BOARD_KEYS))
    if unknown:
        raise _problem(manifest, where, f"unknown key {unknown[0]!r}", ", ".join(BOARD_KEYS))
    values = {**defaults, **entry}
    for key in ("product", "bom"):
        if not isinstance(values.get(key), str) or not values[key].strip():
            raise _problem(manifest, where, f"'{key}' is missing", f"{key} = \"...\" (text)")
    for key in ("design", "parts", "waivers", "design_sheet"):
        if values.get(key) is not None and not isinstance(values[key], str):
            raise _problem(manifest, f"{where} ({values['product']})", f"'{key}' is not text",
                           f"{key} = \"...\"")
    rules = values.get("rules", ())
    rules = (rules,) if isinstance(rules, str) else rules
    if not isinstance(rules, (list, tuple)) or not all(isinstance(r, str) for r in rules):
        raise _problem(manifest, f"{where} ({values['product']})", "'rules' is not a list of "
                       "names or paths", 'rules = ["industrial"]')

    def path(key: str) -> str | None:
        value = values.get(key)
        return None if value is None else str(base / value)

    return Board(product=values["product"].strip(), bom=path("bom"), design=path("design"),
                 parts=path("parts"), waivers=path("waivers"),
                 rules=tuple(r if r.isidentifier() else str(base / r) for r in rules),
                 design_sheet=values.get("design_sheet"), sheet=values.get("sheet"))


def read_manifest(path: str) -> tuple[Board, ...]:
    """The boards of a TOML manifest: ``[[board]]`` tables (product, bom, and optional design,
    parts, rules, waivers, design_sheet, sheet); top-level keys of the same names are defaults
    for every board."""
    data, _ = read_toml(path, "manifest")
    boards = data.pop("board", None)
    if not isinstance(boards, list) or not boards:
        raise InputError("the manifest lists no boards", path=path,
                         expected='[[board]] tables with product = "..." and bom = "..."')
    unknown = sorted(set(data) - set(BOARD_KEYS) - {"product", "bom"})
    if unknown or "product" in data or "bom" in data:
        raise InputError(f"unknown top-level key {(unknown or ['product'])[0]!r}", path=path,
                         expected="[[board]] tables, and defaults among " + ", ".join(
                             k for k in BOARD_KEYS if k not in ("product", "bom")))
    base = Path(path).parent
    out = tuple(_board(path, base, i, entry, data) for i, entry in enumerate(boards))
    seen: set[str] = set()
    for board in out:
        if board.product in seen:
            raise InputError(f"product {board.product!r} is listed twice", path=path,
                             expected="one [[board]] per product")
        seen.add(board.product)
    return out


def _options(board: Board, base):
    """The board's audit options: its own where given, else the batch's (``base``)."""
    imports = base.import_options or ImportOptions()
    if board.sheet is not None:
        imports = dataclasses.replace(imports, sheet=board.sheet)
    return dataclasses.replace(base, rules=board.rules or base.rules, import_options=imports,
                               design_sheet=board.design_sheet, parts=board.parts,
                               waivers=board.waivers)


# A renderer of one board's piece of a combined output: (kind, report, product) -> text chunks.
# The caller passes it (bomcheck.render.batch_out.board_piece): the pipeline renders nothing.
Piece = Callable[[str, object, str], Iterator[str]]


def audit_board(board: Board, base, kinds: tuple[str, ...], folder: str, index: int,
                piece: Piece):
    """Audit one board and write its output pieces into ``folder`` (run in a worker). Returns a
    ``BoardResult``, or the error text of a ``BomcheckError`` (errors cross processes as text)."""
    try:
        report = run_audit(board.bom, board.design, _options(board, base))
    except BomcheckError as exc:
        return f"board {board.product!r}: {exc}"
    pieces = {}
    for kind in kinds:
        target = Path(folder) / f"{index:05d}.{kind}"
        with target.open("w", encoding="utf-8", newline="") as f:
            f.writelines(piece(kind, report, board.product))
        pieces[kind] = str(target)
    return BoardResult(board.product, report.status, dict(report.totals), tuple(report.inputs),
                       pieces)


def run_batch(boards: tuple[Board, ...], base, kinds: tuple[str, ...], folder: str,
              piece: Piece, workers: int = WORKERS) -> tuple[BoardResult, ...]:
    """Audit every board (``workers`` processes; in this process for one board) and write each
    board's pieces of the outputs ``kinds`` (rendered by ``piece``) into ``folder``. The first board whose inputs are
    unusable stops the batch with an ``InputError`` naming the board and the file."""
    jobs = [(b, base, kinds, folder, i, piece) for i, b in enumerate(boards)]
    if workers <= 1 or len(boards) == 1:
        results = [audit_board(*job) for job in jobs]
    else:
        from concurrent.futures import ProcessPoolExecutor  # multiprocessing: only for a pool

        with ProcessPoolExecutor(max_workers=min(workers, len(boards))) as pool:
            results = list(pool.map(audit_board, *zip(*jobs)))
    for r in results:
        if isinstance(r, str):
            raise InputError(r)
    return tuple(results)


def worst(results: tuple[BoardResult, ...]) -> str:
    """The worst status of the boards."""
    return worst_status(r.status for r in results)


def temporary_folder() -> tempfile.TemporaryDirectory:
    """Where the workers put their pieces; removed with everything in it when closed."""
    return tempfile.TemporaryDirectory(prefix="bomcheck-batch-")

