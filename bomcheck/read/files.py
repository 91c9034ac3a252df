"""Read stage: input files as bytes, within the size limit, and their SHA-256 (hashed once)."""

from __future__ import annotations

import hashlib
import os
import stat
import sys

from bomcheck.errors import InputError
from bomcheck.read import limits as limits_mod

STDIN = "-"  # the path that means standard input

_FILE_KINDS = ((stat.S_ISFIFO, "a FIFO (named pipe)"), (stat.S_ISCHR, "a character device"),
               (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket"))

def read_bytes(path: str, what: str = "file") -> bytes:
    """The bytes of an input file, or of standard input for ``-``, within the size limit.

    Only a regular file is opened (a FIFO or a device would block or never end); ``what``
    names the input in errors ("parts file"). Raises ``InputError`` naming the file.
    """
    cap = limits_mod.current().file_bytes
    too_big = (f"refused: the {what} is larger than the limit of {cap >> 20} MiB",
               limits_mod.hint("file_bytes"))
    if path == STDIN:
        data = _read_capped(sys.stdin.buffer, cap)
        if len(data) > cap:
            raise InputError(too_big[0], path="<stdin>", hint=too_big[1])
        return data
    try:
        st = os.stat(path)
    except FileNotFoundError:
        raise InputError(f"{what} not found", path=path,
                         expected="an existing CSV, TSV, XLSX or TOML file") from None
    except (OSError, ValueError) as exc:
        why = exc.strerror if isinstance(exc, OSError) else str(exc)
        raise InputError(f"cannot read the {what} ({why})", path=path) from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError(f"is a directory, not a {what}", path=path)
    if not stat.S_ISREG(st.st_mode):
        kind = next((k for test, k in _FILE_KINDS if test(st.st_mode)), "not a regular file")
        raise InputError(f"refused: {kind}, not a regular file", path=path,
                         expected=f"the {what} as a file on disk (or '-' for standard input "
                                  "where a command takes it)")
    if st.st_size > cap:
        raise InputError(too_big[0], path=path, hint=too_big[1])
    try:
        with open(path, "rb") as f:
            data = _read_capped(f, cap)
    except OSError as exc:
        raise InputError(f"cannot read the {what} ({exc.strerror})", path=path) from None
    if len(data) > cap:  # it grew while being read
        raise InputError(too_big[0], path=path, hint=too_big[1])
    return data

def _read_capped(stream, cap: int) -> bytes:
    """At most ``cap`` + 1 bytes of ``stream``, read in chunks (``read(cap + 1)`` would
    allocate the whole cap at once, which a raised limit makes gigabytes)."""
    chunks, size = [], 0
    while size <= cap:
        chunk = stream.read(min(1 << 24, cap + 1 - size))
        if not chunk:
            break
        chunks.append(chunk)
        size += len(chunk)
    return b"".join(chunks)

def read_input(path: str, what: str) -> tuple[bytes, str]:
    """The bytes of an input file and their SHA-256; ``what`` names it in errors ("parts file")."""
    data = read_bytes(str(path), what)
    return data, sha256_hex(data)

def sha256_hex(data: bytes) -> str:
    """The SHA-256 of an input's bytes as hex: the one hash of every input in the report."""
    return hashlib.sha256(data).hexdigest()
