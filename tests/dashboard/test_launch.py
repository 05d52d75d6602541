"""``python -m dashboard`` from any folder: loopback only, no usage statistics; the app itself
refuses to run on a non-loopback address unless the user opted in."""
from __future__ import annotations

import os
import subprocess
import sys
import time
from pathlib import Path

import pytest
from streamlit import config
from streamlit.testing.v1 import AppTest

from conftest import ROOT, free_port, stop, wait_healthy
from dashboard import __main__ as launcher
from dashboard import serving

APP = str(ROOT / "dashboard" / "app.py")
LISTEN = "0A"  # TCP_LISTEN in /proc/net/tcp (Linux include/net/tcp_states.h)


def _hex_ipv4(text: str) -> str:
    """``0100007F`` (/proc/net/tcp, little-endian on x86 and arm) -> ``127.0.0.1``."""
    return ".".join(str(int(text[i:i + 2], 16)) for i in (6, 4, 2, 0))


def _hex_ipv6(text: str) -> str:
    """/proc/net/tcp6 address: four 32-bit words, each little-endian -> compact IPv6."""
    import ipaddress
    words = [bytes.fromhex(text[i:i + 8])[::-1] for i in range(0, 32, 8)]
    return str(ipaddress.IPv6Address(b"".join(words)))


def listening_sockets(pid: int) -> list[tuple[str, int]]:
    """(address, port) of every TCP socket process ``pid`` listens on, from /proc."""
    inodes = set()
    for fd in Path(f"/proc/{pid}/fd").iterdir():
        try:
            target = os.readlink(fd)
        except OSError:
            continue
        if target.startswith("socket:["):
            inodes.add(target[8:-1])
    out = []
    for table, decode in (("tcp", _hex_ipv4), ("tcp6", _hex_ipv6)):
        path = Path(f"/proc/net/{table}")
        if not path.exists():
            continue
        for line in path.read_text().splitlines()[1:]:
            f = line.split()
            if f[3] == LISTEN and f[9] in inodes:
                addr, port = f[1].split(":")
                out.append((decode(addr), int(port, 16)))
    return out


def test_hex_addresses_decode_as_the_kernel_writes_them():
    """/proc/net/tcp writes 127.0.0.1 as 0100007F and ::1 as four little-endian words (Linux
    net/ipv4/tcp_ipv4.c and net/ipv6/tcp_ipv6.c, from memory)."""
    assert _hex_ipv4("0100007F") == "127.0.0.1"
    assert _hex_ipv4("00000000") == "0.0.0.0"
    assert _hex_ipv6("00000000000000000000000001000000") == "::1"


@pytest.mark.parametrize("address, loopback", [
    ("127.0.0.1", True), ("127.8.9.10", True),  # 127.0.0.0/8 (RFC 1122, 3.2.1.3)
    ("::1", True), ("[::1]", True),  # RFC 4291, 2.5.3
    ("localhost", True),
    ("0.0.0.0", False), ("::", False), ("", False), (None, False),  # every interface
    ("192.168.1.20", False), ("10.0.0.1", False), ("my-laptop.local", False),
])
def test_loopback_addresses(address, loopback):
    """Only loopback addresses count as private to this machine."""
    assert serving.is_loopback(address) is loopback


def test_exposure_levels():
    """Loopback runs; beyond it refuses, or warns when PERCH_ALLOW_NETWORK=1 is set."""
    assert serving.exposure("127.0.0.1", {})[0] == "ok"
    level, msg = serving.exposure("0.0.0.0", {})
    assert level == "refuse" and "python -m dashboard" in msg and "ssh -N -L" in msg
    assert serving.exposure("0.0.0.0", {serving.ALLOW_ENV: "yes"})[0] == "refuse"
    level, msg = serving.exposure(None, {serving.ALLOW_ENV: "1"})
    assert level == "warn" and "every network interface" in msg


@pytest.fixture
def address_option():
    before = config.get_option("server.address")
    yield lambda value: config.set_option("server.address", value)
    config.set_option("server.address", before)


def test_app_refuses_on_every_interface(address_option, monkeypatch):
    """On 0.0.0.0 the app shows the reason and nothing of the site."""
    monkeypatch.delenv(serving.ALLOW_ENV, raising=False)
    address_option("0.0.0.0")
    at = AppTest.from_file(APP, default_timeout=60)
    at.run()
    assert not at.exception
    assert any("will not run" in e.value for e in at.error)
    assert not at.title and "draft" not in at.session_state


def test_app_warns_when_opted_in(address_option, monkeypatch):
    """With PERCH_ALLOW_NETWORK=1 it runs under a standing warning."""
    monkeypatch.setenv(serving.ALLOW_ENV, "1")
    address_option("0.0.0.0")
    at = AppTest.from_file(APP, default_timeout=60)
    at.run()
    assert not at.exception
    assert any("not only on this laptop" in w.value for w in at.warning)
    assert at.title[0].value == "1. Site"


def test_command_sets_every_safe_setting():
    """The command line carries address, port, headless and no usage statistics."""
    cmd = launcher.command(8600, python="python")
    assert cmd[:4] == ["python", "-m", "streamlit", "run"]
    for flag in ("--server.address=127.0.0.1", "--server.headless=true",
                 "--browser.gatherUsageStats=false", "--server.port=8600"):
        assert flag in cmd


def test_started_from_another_folder_listens_on_loopback_only(tmp_path):
    """From a folder whose own config and environment ask for every interface and usage
    statistics, ``python -m dashboard`` still listens on 127.0.0.1 only and says nothing of
    usage statistics."""
    (tmp_path / ".streamlit").mkdir()
    (tmp_path / ".streamlit" / "config.toml").write_text(
        '[server]\naddress = "0.0.0.0"\n[browser]\ngatherUsageStats = true\n')
    port = free_port()
    env = dict(os.environ, PYTHONPATH=str(ROOT), PERCH_AUTOSAVE_DIR=str(tmp_path / "autosave"),
               STREAMLIT_SERVER_ADDRESS="0.0.0.0", STREAMLIT_BROWSER_GATHER_USAGE_STATS="true")
    env.pop(serving.ALLOW_ENV, None)
    log_path = tmp_path / "server.log"
    with open(log_path, "wb") as log:
        proc = subprocess.Popen([sys.executable, "-m", "dashboard", "--port", str(port)],
                                cwd=tmp_path, stdout=log, stderr=subprocess.STDOUT, env=env)
    try:
        wait_healthy(port, proc)
        time.sleep(0.5)  # the welcome lines follow the health answer
        sockets = listening_sockets(proc.pid)
    finally:
        stop(proc)
    log = log_path.read_text(errors="replace")
    assert (("127.0.0.1", port)) in sockets, (sockets, log)
    assert all(addr == "127.0.0.1" for addr, _ in sockets), sockets
    assert "usage statistics" not in log.lower(), log
    assert "Network URL" not in log and "External URL" not in log, log
    assert f"http://127.0.0.1:{port}" in log, log


def test_bad_port_is_refused_with_a_message(capsys):
    """A port that is not a number exits 2 and names the rule."""
    with pytest.raises(SystemExit) as e:
        launcher.main(["--port", "eighty"])
    assert e.value.code == 2
    assert "port must be a whole number, got 'eighty'" in capsys.readouterr().err
