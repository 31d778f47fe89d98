"""No network: a full build (with PDF packets) and an evaluate never open a connection.

socket.socket, socket.create_connection, socket.getaddrinfo and
socket.socket.connect are replaced in-process by functions that record the
call and raise; the test fails if any of them was called.  No traffic leaves
the process (the patched functions never reach the network).  The cases
include the payload case, whose narrative links remote images and styles.
"""
from __future__ import annotations

import shutil
import socket
from pathlib import Path

import pytest
from click.testing import CliRunner

import harness
from paths import ROOT

ROOT = ROOT


class Blocked:
    def __init__(self):
        self.calls: list[str] = []

    def trap(self, name):
        def _blocked(*args, **kwargs):
            self.calls.append(f"{name}{args[:2]!r}")
            raise OSError(f"network access blocked by the test: {name}")
        return _blocked


@pytest.fixture
def no_network(monkeypatch):
    blocked = Blocked()
    monkeypatch.setattr(socket, "socket", blocked.trap("socket.socket"))
    monkeypatch.setattr(socket, "create_connection", blocked.trap("socket.create_connection"))
    monkeypatch.setattr(socket, "getaddrinfo", blocked.trap("socket.getaddrinfo"))
    monkeypatch.setattr(socket, "socketpair", blocked.trap("socket.socketpair"))
    return blocked


def test_the_trap_works(no_network):
    """The patch is effective: a connection attempt is recorded and fails."""
    import urllib.request

    with pytest.raises(OSError):
        urllib.request.urlopen("http://127.0.0.1:9/", timeout=1)
    assert no_network.calls  # proves a call would be seen


def test_full_build_with_packets_opens_no_connection(tmp_path, no_network):
    from dossier.build.pipeline import build_site

    cases = tmp_path / "cases"
    cases.mkdir()
    (cases / "payload.md").write_text(harness.payload_case_text(), encoding="utf-8")
    # jobs=1: worker processes would not carry the in-process patch
    report = build_site(cases, tmp_path / "site", packets=True, jobs=1,
                        cache_dir=tmp_path / "cache")
    assert report.written and len(report.packets) == 2, report.lines()  # case + meeting
    assert no_network.calls == []


def test_evaluate_opens_no_connection(no_network):
    from dossier.cli.main import main

    result = CliRunner().invoke(main, ["evaluate", "--json",
                                       str(ROOT / "tests" / "fixtures" / "cases" / "full.md")])
    assert result.exit_code == 0, result.output
    assert '"case": "full"' in result.output
    assert no_network.calls == []
