"""The one reader of case files: read_source, parse_source, header_of."""
from __future__ import annotations

import os
from pathlib import Path

import pytest

from dossier.casefile.load import (MAX_FILE_BYTES, CaseSource, header_of, load_case,
                                   parse_source, read_source)
from dossier.errors import CaseError
from paths import CASES

CASE = CASES / "nitro-hydrogenation.md"


def test_read_source_holds_the_file_bytes_and_the_path_as_given(tmp_path, monkeypatch):
    monkeypatch.chdir(CASE.parent.parent)
    source = read_source("./cases/nitro-hydrogenation.md")
    assert source.data == CASE.read_bytes()
    assert source.name == "./cases/nitro-hydrogenation.md"
    assert parse_source(source) == load_case("./cases/nitro-hydrogenation.md")


def test_a_folder_is_refused_as_before(tmp_path):
    with pytest.raises(CaseError) as info:
        read_source(tmp_path)
    assert str(info.value) == f"{tmp_path}: cannot read the case file: Is a directory"


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes are POSIX")
def test_a_named_pipe_is_refused_rather_than_waited_on(tmp_path):
    pipe = tmp_path / "pipe.md"
    os.mkfifo(pipe)
    with pytest.raises(CaseError) as info:
        read_source(pipe)
    assert str(info.value) == (f"{pipe}: cannot read the case file: it is a named pipe "
                               "(FIFO), not a regular file")


def test_a_source_built_from_too_many_bytes_is_refused():
    source = CaseSource(Path("big.md"), b"+++\n" + b"#" * MAX_FILE_BYTES + b"\n+++\n")
    with pytest.raises(CaseError) as info:
        parse_source(source)
    assert str(info.value) == "big.md: the file is larger than 5 MB; a case file is a few kilobytes"


def test_header_of_reads_the_same_bytes_with_a_byte_order_mark():
    data = CASE.read_bytes()
    plain = header_of(CaseSource(CASE, data))
    assert header_of(CaseSource(CASE, b"\xef\xbb\xbf" + data)) == plain
    assert plain["revision"] == parse_source(CaseSource(CASE, data)).revision


def test_header_of_names_the_byte_and_line_of_bad_utf8():
    source = CaseSource(Path("bad.md"), b'+++\ntitle = "caf\xe9"\n+++\n')
    with pytest.raises(CaseError) as info:
        header_of(source)
    assert str(info.value) == ("bad.md:2: the file is not valid UTF-8: byte 16 (0xe9) cannot be "
                               "decoded; save the file as UTF-8")
