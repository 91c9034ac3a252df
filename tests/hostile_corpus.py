"""A corpus of malformed and hostile input files, built in a folder on demand.

Shared by ``tests/test_hostile_inputs.py`` (in process, bounded in time) and
``benchmarks/hostile_inputs.py`` (subprocesses under a memory limit, peak RSS measured). Each
case writes its files and gives the command-line arguments to run and the exit statuses that
are right for it: 2 (refused, one line naming the file) for a file that cannot be used, 0 or 1
for a file that is fine. Every board, part and value is invented.
"""

from __future__ import annotations

import io
import os
import stat
import zipfile
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import escape

GOOD_BOM = ("Designator,Qty,Value,Description\n"
            "C1,1,100nF 50V X7R 0603,CAP CER 100NF 50V X7R 0603\n"
            "C2,1,4.7uF 25V X5R 0805,CAP CER 4.7UF 25V X5R 0805\n")
GOOD_DESIGN = "refdes,v_dc,t_ambient_c\n*,12,40\n"
OK = (0, 1)  # a file that is fine: the audit's verdict decides between 0 and 1
REFUSED = (2,)


@dataclass(frozen=True)
class Case:
    """One hostile input: ``build(folder)`` writes the files and returns the arguments after
    the command name; ``commands`` are run each with those arguments; ``names`` is the file
    name a refusal must mention."""

    name: str
    build: Callable[[Path], list[str]]
    expect: tuple[int, ...]
    names: str
    commands: tuple[str, ...] = ("import", "audit")
    big: bool = False  # a file near a default limit: for memory figures, not for the tests


# --------------------------------------------------------------------------------------------
# Workbooks written by hand, so that any part can be broken.

def sheet_xml(rows: list[list[str]], *, dimension: str | None = None, extra: str = "",
              row_attrs: dict[int, str] | None = None, cols: str = "") -> str:
    """A worksheet part with inline-string cells (A1 notation)."""
    out = []
    for i, row in enumerate(rows, start=1):
        cells = "".join(
            f'<c r="{chr(65 + j)}{i}" t="inlineStr"><is><t>{escape(v)}</t></is></c>'
            for j, v in enumerate(row) if v != "")
        attrs = (row_attrs or {}).get(i, "")
        out.append(f'<row r="{i}"{attrs}>{cells}</row>')
    dim = f'<dimension ref="{dimension}"/>' if dimension else ""
    cols_xml = f"<cols>{cols}</cols>" if cols else ""
    return ('<?xml version="1.0" encoding="UTF-8" standalone="yes"?>'
            '<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
            f'{dim}{cols_xml}<sheetData>{"".join(out)}{extra}</sheetData></worksheet>')


def xlsx_bytes(sheets: list[tuple[str, str, str]], *, styles: str | None = None,
               drop: tuple[str, ...] = (), replace: dict[str, bytes] | None = None) -> bytes:
    """A workbook of ``(name, worksheet XML, state)`` sheets; ``drop`` leaves parts out and
    ``replace`` substitutes a part's bytes."""
    ns = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" ' \
         'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"'
    rel = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
    sheet_entries = "".join(
        f'<sheet name="{escape(n)}" sheetId="{i}" r:id="rId{i}"'
        + (f' state="{st}"' if st != "visible" else "") + "/>"
        for i, (n, _, st) in enumerate(sheets, start=1))
    rels = "".join(
        f'<Relationship Id="rId{i}" Type="{rel}/worksheet" Target="worksheets/sheet{i}.xml"/>'
        for i in range(1, len(sheets) + 1))
    rels += f'<Relationship Id="rIdS" Type="{rel}/styles" Target="styles.xml"/>'
    overrides = "".join(
        f'<Override PartName="/xl/worksheets/sheet{i}.xml" ContentType="application/'
        'vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
        for i in range(1, len(sheets) + 1))
    parts = {
        "[Content_Types].xml": (
            '<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats'
            '.org/package/2006/content-types"><Default Extension="rels" ContentType="application/'
            'vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" '
            'ContentType="application/xml"/><Override PartName="/xl/workbook.xml" ContentType='
            '"application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
            '<Override PartName="/xl/styles.xml" ContentType="application/vnd.openxmlformats-'
            f'officedocument.spreadsheetml.styles+xml"/>{overrides}</Types>'),
        "_rels/.rels": (
            '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.'
            'openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="'
            f'{rel}/officeDocument" Target="xl/workbook.xml"/></Relationships>'),
        "xl/workbook.xml": (f'<?xml version="1.0" encoding="UTF-8"?><workbook {ns}><sheets>'
                            f"{sheet_entries}</sheets></workbook>"),
        "xl/_rels/workbook.xml.rels": (
            '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.'
            f'openxmlformats.org/package/2006/relationships">{rels}</Relationships>'),
        "xl/styles.xml": styles or (
            '<?xml version="1.0" encoding="UTF-8"?><styleSheet xmlns="http://schemas.'
            'openxmlformats.org/spreadsheetml/2006/main"><fonts count="1"><font><sz val="11"/>'
            '</font></fonts><fills count="1"><fill><patternFill patternType="none"/></fill>'
            '</fills><borders count="1"><border><left/><right/><top/><bottom/><diagonal/>'
            '</border></borders><cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" '
            'borderId="0"/></cellStyleXfs><cellXfs count="2"><xf numFmtId="0" fontId="0" '
            'fillId="0" borderId="0" xfId="0"/><xf numFmtId="9" fontId="0" fillId="0" '
            'borderId="0" xfId="0" applyNumberFormat="1"/></cellXfs></styleSheet>'),
    }
    for i, (_, xml, _) in enumerate(sheets, start=1):
        parts[f"xl/worksheets/sheet{i}.xml"] = xml
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, text in parts.items():
            if name in drop:
                continue
            data = (replace or {}).get(name)
            zf.writestr(name, data if data is not None else text.encode("utf-8"))
    return buf.getvalue()


BOM_ROWS = [["Designator", "Qty", "Value", "Description"],
            ["C1", "1", "100nF 50V X7R 0603", "CAP CER 100NF 50V X7R 0603"],
            ["C2", "1", "4.7uF 25V X5R 0805", "CAP CER 4.7UF 25V X5R 0805"]]


def good_xlsx() -> bytes:
    return xlsx_bytes([("BOM", sheet_xml(BOM_ROWS), "visible")])


# --------------------------------------------------------------------------------------------
# Builders


def _bom(name: str, data: bytes | str, extra: tuple[str, ...] = ()) -> Callable[[Path], list[str]]:
    def build(d: Path) -> list[str]:
        p = d / name
        p.write_bytes(data.encode("utf-8") if isinstance(data, str) else data)
        return [str(p), *extra]
    return build


def _with_design(name: str, data: bytes | str) -> Callable[[Path], list[str]]:
    def build(d: Path) -> list[str]:
        (d / "bom.csv").write_text(GOOD_BOM, encoding="utf-8")
        p = d / name
        p.write_bytes(data.encode("utf-8") if isinstance(data, str) else data)
        return [str(d / "bom.csv"), "--design", str(p)]
    return build


def _with(option: str, name: str, data: bytes | str | Callable[[Path], None]
          ) -> Callable[[Path], list[str]]:
    """The good BOM and design, plus one side input given with ``option``."""
    def build(d: Path) -> list[str]:
        (d / "bom.csv").write_text(GOOD_BOM, encoding="utf-8")
        (d / "design.csv").write_text(GOOD_DESIGN, encoding="utf-8")
        p = d / name
        if callable(data):
            data(d)
        else:
            p.write_bytes(data.encode("utf-8") if isinstance(data, str) else data)
        return [str(d / "bom.csv"), "--design", str(d / "design.csv"), option, str(p)]
    return build


def _fifo(d: Path) -> list[str]:
    p = d / "pipe.csv"
    os.mkfifo(p)
    return [str(p)]


def _design_fifo(d: Path) -> list[str]:
    (d / "bom.csv").write_text(GOOD_BOM, encoding="utf-8")
    return [str(d / "bom.csv"), "--design", _fifo(d)[0]]


def _directory(d: Path) -> list[str]:
    p = d / "folder.csv"
    p.mkdir()
    return [str(p)]


def _zip_bomb() -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("[Content_Types].xml", "<Types/>")
        zf.writestr("xl/workbook.xml", "<workbook/>")
        with zf.open("xl/worksheets/sheet1.xml", "w", force_zip64=True) as f:
            block = b"<row>" + b" " * (1 << 20)
            for _ in range(80):  # 80 MiB of almost nothing
                f.write(block)
    return buf.getvalue()


def _ranges(n: int) -> str:
    lines = ["Designator,Value"]
    for i in range(n):
        p = "C" + "".join(chr(65 + int(k)) for k in f"{i:03d}")  # CAAA, CAAB...: a prefix each
        lines.append(f'"{p}1-{p}9999",100nF 50V X7R')
    return "\n".join(lines) + "\n"


def _extends_chain(n: int) -> Callable[[Path], None]:
    def build(d: Path) -> None:
        for i in range(n):
            base = f'extends = "r{i + 1}.toml"' if i + 1 < n else 'extends = "industrial"'
            (d / f"r{i}.toml").write_text(
                f'[ruleset]\nname = "r{i}"\ntitle = "chain {i}"\nversion = "1"\n{base}\n',
                encoding="utf-8")
    return build


def _extends_cycle(d: Path) -> None:
    for a, b in (("r0", "r1"), ("r1", "r0")):
        (d / f"{a}.toml").write_text(
            f'[ruleset]\nname = "{a}"\ntitle = "{a}"\nversion = "1"\nextends = "{b}.toml"\n',
            encoding="utf-8")


GARBAGE = ("C1" + "x" * 9 + "-") * 9000  # about 100 KB of designator-like garbage
DEEP = "a = " + "[" * 5000 + "]" * 5000 + "\n"
UTF8_PLUS_ONE_CP1252 = ("Designator,Value,Description\n"
                        "C1,4.7µF 25V X5R,CAP CER\n").encode("utf-8") + \
                       "C2,100nF 50V X7R,CAP CER 10 µ\n".encode("cp1252")


def cases() -> list[Case]:
    """Every case of the corpus (about fifty)."""
    header = "Designator,Qty,Value,Description\n"
    c: list[Case] = [
        # Text tables: cell sizes, line ends, encodings.
        Case("field-200k", _bom("b.csv", header + "C1,1,100nF 50V X7R,\"" + "x" * 200_000
                                + "\"\n"), OK, "b.csv"),
        Case("field-2m", _bom("b.csv", header + "C1,1,100nF 50V X7R," + "x" * 2_100_000 + "\n"),
             REFUSED, "b.csv"),
        Case("field-2m-quoted", _bom("b.csv", header + "C1,1,100nF,\"" + "x\n" * 1_100_000
                                     + "\"\n"), REFUSED, "b.csv"),
        Case("header-200k", _bom("b.csv", "Designator,Value," + "H" * 200_000 + "\nC1,100nF,x\n"),
             OK, "b.csv"),
        Case("lone-cr", _bom("b.csv", GOOD_BOM.replace("\n", "\r")), OK, "b.csv"),
        Case("mixed-line-ends", _bom("b.csv", "Designator,Value\r\nC1,100nF 50V X7R\rC2,1uF 25V"
                                     " X5R\nC3,10nF 50V C0G\r\n"), OK, "b.csv"),
        Case("quoted-cr", _bom("b.csv", header + 'C1,1,100nF 50V X7R,"CAP\rCER"\r\n'), OK,
             "b.csv"),
        Case("mixed-encoding", _bom("b.csv", UTF8_PLUS_ONE_CP1252), OK, "b.csv"),
        Case("garbage-designator", _bom("b.csv", header + f'"{GARBAGE}",1,100nF,x\n'), OK,
             "b.csv"),
        Case("spaces-designator", _bom("b.csv", header + '"C1' + " " * 100_000 + 'x",1,1uF,x\n'),
             OK, "b.csv"),
        Case("range-5000-digits", _bom("b.csv", header + "C1-C" + "9" * 5000 + ",1,1uF,x\n"),
             OK, "b.csv"),
        Case("ranges-2m-placements", _bom("b.csv", _ranges(200)), REFUSED, "b.csv"),
        Case("cell-expands-too-far", _bom("b.csv", header + '"C1-C9999, D1-D9999",1,1uF,x\n'),
             OK, "b.csv"),
        Case("columns-5000", _bom("b.csv", "Designator,Value," + ",".join(f"h{i}" for i in range(5000))
                                  + "\nC1,1\n"), REFUSED, "b.csv"),
        Case("wide-data-row", _bom("b.csv", header + "C1,1,1uF" + "," * 20_000 + "\n"),
             REFUSED, "b.csv"),
        Case("rows-over-limit", _bom("b.csv", header + "".join(f"C{i},1,1uF,x\n"
                                                              for i in range(1, 3001)),
                                     ("--max-rows", "1000")), REFUSED, "b.csv"),
        Case("file-over-limit", _bom("b.csv", header + "C1,1,1uF," + "y" * (1 << 20) + "\n"
                                     + "C2,1,1uF,x\n" * 1000, ("--max-file-mb", "1")),
             REFUSED, "b.csv"),
        Case("binary", _bom("b.csv", bytes(range(256)) * 64), REFUSED, "b.csv"),
        Case("empty", _bom("b.csv", b""), REFUSED, "b.csv"),
        Case("bom-only", _bom("b.csv", b"\xef\xbb\xbf"), REFUSED, "b.csv"),
        Case("utf16-no-bom", _bom("b.csv", GOOD_BOM.encode("utf-16-le")), REFUSED, "b.csv"),
        Case("unterminated-quote", _bom("b.csv", header + 'C1,1,"100nF 50V X7R,x\nC2,1,1uF,x\n'),
             OK + REFUSED, "b.csv"),
        Case("no-header", _bom("b.csv", "a,b\n1,2\n"), REFUSED, "b.csv"),
        Case("directory", _directory, REFUSED, "folder.csv"),
        Case("dev-zero", lambda d: ["/dev/zero"], REFUSED, "/dev/zero"),
        # Workbooks.
        Case("xlsx-good", _bom("b.xlsx", good_xlsx()), OK, "b.xlsx"),
        Case("xlsx-cell-at-xfd1048576", _bom("b.xlsx", xlsx_bytes([("BOM", sheet_xml(
            BOM_ROWS, extra='<row r="1048576"><c r="XFD1048576"><v>1</v></c></row>'),
            "visible")])), REFUSED, "b.xlsx"),
        Case("xlsx-declared-huge", _bom("b.xlsx", xlsx_bytes([("BOM", sheet_xml(
            BOM_ROWS, dimension="A1:XFD1048576"), "visible")])), REFUSED, "b.xlsx"),
        Case("xlsx-10m-rows", _bom("b.xlsx", xlsx_bytes([("BOM", sheet_xml(
            BOM_ROWS, extra='<row r="10000000"><c r="A10000000"><v>1</v></c></row>'),
            "visible")])), REFUSED, "b.xlsx"),
        Case("xlsx-zip-bomb", _bom("b.xlsx", _zip_bomb()), REFUSED, "b.xlsx"),
        Case("xlsx-truncated-sheet", _bom("b.xlsx", xlsx_bytes(
            [("BOM", sheet_xml(BOM_ROWS)[:-60], "visible")])), REFUSED, "b.xlsx"),
        Case("xlsx-entities", _bom("b.xlsx", xlsx_bytes([("BOM", sheet_xml(BOM_ROWS).replace(
            '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>',
            '<?xml version="1.0"?><!DOCTYPE w [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;'
            '&a;&a;&a;&a;&a;">]>').replace("CAP CER 100NF", "&b;&b;"), "visible")])),
             OK + REFUSED, "b.xlsx"),
        Case("xlsx-missing-sheet-part", _bom("b.xlsx", xlsx_bytes(
            [("BOM", sheet_xml(BOM_ROWS), "visible")], drop=("xl/worksheets/sheet1.xml",))),
             REFUSED, "b.xlsx"),
        Case("xlsx-no-sheets", _bom("b.xlsx", xlsx_bytes([])), REFUSED, "b.xlsx"),
        Case("xlsx-bad-shared-string", _bom("b.xlsx", xlsx_bytes([("BOM", sheet_xml(
            BOM_ROWS, extra='<row r="4"><c r="A4" t="s"><v>999</v></c></row>'), "visible")])),
             OK + REFUSED, "b.xlsx"),
        Case("xlsx-bad-number", _bom("b.xlsx", xlsx_bytes([("BOM", sheet_xml(
            BOM_ROWS, extra='<row r="4"><c r="B4"><v>1e9999x</v></c></row>'), "visible")])),
             OK + REFUSED, "b.xlsx"),
        Case("xlsx-bad-styles", _bom("b.xlsx", xlsx_bytes([("BOM", sheet_xml(BOM_ROWS),
                                                            "visible")], styles="<styleSheet")),
             OK + REFUSED, "b.xlsx"),
        Case("xlsx-only-hidden-sheet", _bom("b.xlsx", xlsx_bytes(
            [("Old", sheet_xml(BOM_ROWS), "hidden"), ("Blank", sheet_xml([["x"]]), "visible")])),
             REFUSED, "b.xlsx"),
        Case("xlsx-not-a-zip", _bom("b.xlsx", b"Designator,Value\nC1,1uF\n"), REFUSED, "b.xlsx"),
        Case("xlsx-truncated-zip", _bom("b.xlsx", good_xlsx()[:-200]), REFUSED, "b.xlsx"),
        Case("xls-garbage", _bom("b.xls", b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(600)),
             REFUSED, "b.xls"),
        Case("ods-garbage", _bom("b.ods", b"PK\x03\x04" + bytes(300)), REFUSED, "b.ods"),
        # Side inputs: design sheets, rules, waivers, parts.
        Case("design-deep-toml", _with_design("design.toml", DEEP), REFUSED, "design.toml",
             ("audit",)),
        Case("design-garbage-designator", _with_design("design.csv", "refdes,v_dc\n\"" + GARBAGE
                                                       + "\",12\n"), REFUSED, "design.csv",
             ("audit",)),
        Case("design-bleeder-0", _with_design("design.csv", "refdes,v_dc,r_bleeder_ohm\nC1,12,0\n"),
             REFUSED, "r_bleeder_ohm", ("audit",)),
        Case("design-lone-cr", _with_design("design.csv", GOOD_DESIGN.replace("\n", "\r")), OK,
             "design.csv", ("audit",)),
        Case("design-fifo", _design_fifo, REFUSED, "pipe.csv", ("audit",)),
        Case("rules-deep-toml", _with("--rules", "rules.toml", DEEP), REFUSED, "rules.toml",
             ("audit",)),
        Case("rules-extends-cycle", _with("--rules", "r0.toml", _extends_cycle), REFUSED,
             "r0.toml", ("audit",)),
        Case("rules-extends-1500", _with("--rules", "r0.toml", _extends_chain(1500)), REFUSED,
             "r", ("audit",)),
        Case("waivers-deep-toml", _with("--waivers", "w.toml", DEEP), REFUSED, "w.toml",
             ("audit",)),
        Case("waivers-field-200k-lone-cr", _with("--waivers", "w.csv", (
            "refdes,rule,reason,approved_by,expires\rC1,IND-CER-V,\"" + "r" * 200_000
            + "\",A. Person,2099-01-01\r")), OK, "w.csv", ("audit",)),
        Case("waivers-garbage-designator", _with("--waivers", "w.csv", (
            "refdes,rule,reason,approved_by,expires\n\"" + GARBAGE
            + "\",IND-CER-V,why,A. Person,2099-01-01\n")), REFUSED, "w.csv", ("audit",)),
        Case("parts-header-only", _with("--parts", "parts.csv", "mpn,rated_voltage\n"),
             OK + REFUSED, "parts.csv", ("audit",)),
        Case("parts-deep-toml", _with("--parts", "parts.toml", DEEP), REFUSED, "parts.toml",
             ("audit",)),
    ]
    if not hasattr(os, "mkfifo") or not Path("/dev/zero").exists():
        c = [x for x in c if x.name not in ("dev-zero", "design-fifo")]
    else:
        c.append(Case("fifo", _fifo, REFUSED, "pipe.csv"))
    return c


def _lines(n: int) -> str:
    return "Designator,Qty,Value\n" + "".join(f"C{i},1,100nF 50V X7R 0603\n"
                                               for i in range(1, n + 1))


def big_cases() -> list[Case]:
    """Files at or just past the default limits, to measure peak memory where it is largest."""
    area = sheet_xml(BOM_ROWS, extra='<row r="4900"><c r="ALL4900"><v>1</v></c></row>')
    return [
        Case("big-csv-999k-lines", _bom("b.csv", _lines(999_000)), REFUSED, "b.csv", big=True),
        Case("big-csv-49k-placements", _bom("b.csv", "Designator,Value\n" + "".join(
            f'"C{i * 1000 + 1}-C{i * 1000 + 1000}",100nF 50V X7R 0603\n' for i in range(49))),
             OK, "b.csv", big=True),
        Case("big-csv-50k-lines", _bom("b.csv", _lines(50_000)), OK, "b.csv", big=True),
        Case("big-csv-199k-unreadable", _bom("b.csv", "Designator,Value\n" + "x,y\n" * 199_000),
             OK + REFUSED, "b.csv", big=True),
        Case("big-xlsx-area-4.9m", _bom("b.xlsx", xlsx_bytes([("BOM", area, "visible")])), OK,
             "b.xlsx", big=True),
        Case("big-csv-field-1m", _bom("b.csv", "Designator,Value,Notes\n" + "".join(
            f"C{i},1uF 25V X5R,{'n' * 1_000_000}\n" for i in range(1, 101))), OK, "b.csv",
             big=True),
    ]


def is_special(path: str) -> bool:
    """True for a path that is no regular file (FIFO, device)."""
    try:
        return not stat.S_ISREG(os.stat(path).st_mode)
    except OSError:
        return False
