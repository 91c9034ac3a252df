"""Read stage, input bytes: regular files only, the size limit, standard input, the hash."""

import hashlib
import os
import sys

import pytest

from bomcheck.errors import InputError
from bomcheck.read.limits import Limits, use_limits

sys.path.insert(0, os.path.dirname(__file__))
from read_helpers import one_line_error, read_table, write_file  # noqa: E402


def test_missing_file(tmp_path):
    assert "file not found" in one_line_error(tmp_path / "none.csv")


@pytest.mark.skipif(not hasattr(__import__("os"), "mkfifo"), reason="needs FIFOs")
def test_a_fifo_is_refused_without_blocking(tmp_path):
    import os

    fifo = tmp_path / "b.csv"
    os.mkfifo(fifo)
    assert "FIFO" in one_line_error(fifo)  # opening it would wait for a writer forever


def test_a_device_is_refused():
    if not __import__("os").path.exists("/dev/zero"):
        pytest.skip("no /dev/zero")
    with pytest.raises(InputError, match="character device"):
        read_table("/dev/zero")


def test_file_size_limit_and_its_override(tmp_path):
    path = write_file(tmp_path / "b.csv", "Designator,Value\n" + "C1,1uF\n" * 200_000)
    with use_limits(Limits(file_bytes=1 << 20)):
        assert "larger than the limit of 1 MiB" in one_line_error(path)
        assert "--max-file-mb" in one_line_error(path)
    assert len(read_table(path).frame) == 200_000


def test_standard_input_is_held_to_the_size_limit(monkeypatch):
    import io

    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(b"Designator\n" * 1000)))
    with use_limits(Limits(file_bytes=1000)), pytest.raises(InputError, match="<stdin>"):
        read_table("-")


def test_a_raised_file_limit_does_not_allocate_the_limit(tmp_path):
    # A 100 GB limit (--max-file-mb 100000) once made read() ask for 100 GB up front.
    from bomcheck.read.limits import Limits, use_limits
    from bomcheck.read.reader import read_bytes

    (tmp_path / "b.csv").write_bytes(b"Designator,Value\nC1,1uF\n")
    with use_limits(Limits(file_bytes=100_000 << 20)):
        assert read_bytes(str(tmp_path / "b.csv")) == b"Designator,Value\nC1,1uF\n"


def test_read_input_gives_the_bytes_and_their_one_hash(tmp_path):
    from bomcheck.read.files import read_input, sha256_hex

    data = b"mpn,rated_voltage\nKV-1,6.3 V\n"
    path = tmp_path / "p.csv"
    path.write_bytes(data)
    got, digest = read_input(str(path), "parts file")
    # SHA-256 (FIPS 180-4) as hashlib computes it: the report's inputs carry it per file.
    assert got == data and digest == sha256_hex(data) == hashlib.sha256(data).hexdigest()
