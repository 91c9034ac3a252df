"""Read stage: the bytes of a text table to text: byte-order marks, UTF-8 with cp1252 lines
(named in a warning), a forced encoding, and binary files refused."""

from __future__ import annotations

import re

from bomcheck.errors import InputError
from bomcheck.read.table import ReadWarning

LINE_END = re.compile(r"\r\n|\r|\n")
_UNDECODED = re.compile("[\udc80-\udcff]")  # bytes kept by surrogateescape
_DECODED_NON_ASCII = re.compile("[^\x00-\x7f\udc80-\udcff]")
MIXED_ENCODING = "utf-8 + cp1252 lines"


def decode_text(path: str, data: bytes, forced: str | None) -> tuple[str, str, tuple[ReadWarning, ...]]:
    """Decode the whole file; returns (text, encoding name, warnings)."""
    if forced:
        try:
            text = data.decode(forced)
        except LookupError:
            raise InputError("unknown text encoding", path=path, text=forced,
                             expected="a Python codec name such as utf-8, utf-16, cp1252") from None
        except UnicodeDecodeError as exc:
            raise InputError(f"cannot be decoded as {forced} (byte {exc.start})", path=path,
                             hint="try another --encoding or leave it out to detect") from None
        if text.startswith("\ufeff"):
            text = text[1:]
        _check_not_binary(path, text)
        return text, forced, ()
    if data.startswith((b"\xff\xfe\x00\x00", b"\x00\x00\xfe\xff")):
        enc = "utf-32"
    elif data.startswith((b"\xff\xfe", b"\xfe\xff")):
        enc = "utf-16"
    elif data.startswith(b"\xef\xbb\xbf"):
        enc = "utf-8-sig"
    else:
        enc = ""
    if enc:
        try:
            text = data.decode(enc)
        except UnicodeDecodeError as exc:
            if enc != "utf-8-sig":
                raise InputError(f"has a {enc} byte-order mark but is not valid {enc} "
                                 f"(byte {exc.start})", path=path,
                                 hint="force an encoding with --encoding") from None
            text, enc, notes = _decode_mixed(path, data[3:])
            _check_not_binary(path, text)
            return text, enc, notes
        _check_not_binary(path, text)
        return text, enc, ()
    _check_not_binary_bytes(path, data)
    notes: tuple[ReadWarning, ...] = ()
    try:
        text, enc = data.decode("utf-8"), "utf-8"
    except UnicodeDecodeError:
        text, enc, notes = _decode_mixed(path, data)
    _check_not_binary(path, text)
    return text, enc, notes


def _cp1252(raw: bytes) -> tuple[str, str]:
    """(text, encoding) of Windows-export bytes: cp1252, where byte 0xB5 is the micro sign (as
    in latin-1); the five bytes cp1252 leaves undefined fall back to latin-1 control characters."""
    try:
        return raw.decode("cp1252"), "cp1252"
    except UnicodeDecodeError:
        return raw.decode("latin-1"), "latin-1"


def _decode_mixed(path: str, data: bytes) -> tuple[str, str, tuple[ReadWarning, ...]]:
    """Text that is not all UTF-8: a cp1252 file when no line holds UTF-8 beyond ASCII; else
    UTF-8 line by line, the lines that are not UTF-8 read as cp1252 and named in a warning (one
    stray byte must not turn every ``µ`` of the file into ``Âµ``)."""
    loose = data.decode("utf-8", errors="surrogateescape")
    if not _DECODED_NON_ASCII.search(loose):
        text, enc = _cp1252(data)
        return text, enc, ()
    parts = LINE_END.split(loose)  # lines only; the line ends come back from the original
    ends = LINE_END.findall(loose) + [""]
    out, odd = [], []
    for i, (line, end) in enumerate(zip(parts, ends)):
        if _UNDECODED.search(line):
            line = _cp1252(line.encode("utf-8", "surrogateescape"))[0]
            odd.append(i + 1)
        out.append(line + end)
    shown = ", ".join(map(str, odd[:10])) + (f" and {len(odd) - 10} more" if len(odd) > 10 else "")
    note = ReadWarning(
        "mixed-encoding",
        f"{path}: mixed text encoding: line{'s' if len(odd) > 1 else ''} {shown} "
        f"{'are' if len(odd) > 1 else 'is'} not UTF-8 and {'were' if len(odd) > 1 else 'was'} "
        "read as cp1252 (Windows); the rest of the file is UTF-8; check those lines' cells",
        tuple(odd))
    return "".join(out), MIXED_ENCODING, (note,)


def _check_not_binary_bytes(path: str, data: bytes) -> None:
    head = data[:8192]
    if b"\x00" not in head:
        return
    even, odd = head[0::2], head[1::2]
    if odd.count(0) > 0.3 * len(odd) or even.count(0) > 0.3 * len(even):
        if head.count(0) < 0.7 * len(head):
            raise InputError("looks like UTF-16 text without a byte-order mark", path=path,
                             hint="force it with --encoding utf-16-le (or utf-16-be)")
    raise InputError("a binary file, not a text table", path=path,
                     expected="a CSV/TSV text file or an .xlsx workbook")


def _check_not_binary(path: str, text: str) -> None:
    head = text[:8192]
    controls = sum(1 for ch in head if ch < " " and ch not in "\t\r\n\f\v")
    if "\x00" in head or controls > max(8, len(head) // 100):
        raise InputError("a binary file, not a text table", path=path,
                         expected="a CSV/TSV text file or an .xlsx workbook")

