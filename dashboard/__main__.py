"""Start the dashboard safely from any folder: ``python -m dashboard [--port N]``.

Streamlit reads ``.streamlit/config.toml`` only from the folder it is started in; started
anywhere else it would listen on every network interface and collect usage statistics. This
launcher sets every setting that matters on the command line, where it outranks any config
file or environment variable, and then replaces itself with the Streamlit server (so the
process id stays the server's):

- ``server.address = 127.0.0.1``: loopback only; nobody on the same network can connect;
- ``server.headless = true``: no browser is opened and no e-mail prompt is shown;
- ``browser.gatherUsageStats = false``: nothing is reported to an outside host;
- ``server.port``: ``--port`` (default 8501);
- the upload size, the viewer toolbar and the theme of the repository's config file.

It opens the built-in demo site. To reach it from another machine, use an SSH tunnel from
that machine (``ssh -N -L 8501:127.0.0.1:8501 user@this-host``, then open
http://127.0.0.1:8501 there) rather than listening on the network; see ``dashboard/README.md``.
"""
from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
APP = HERE / "app.py"
DEFAULT_PORT = 8501

#: Settings passed on the command line, whatever the working folder holds.
SAFE_SETTINGS = {
    "server.address": "127.0.0.1",
    "server.headless": "true",
    "browser.gatherUsageStats": "false",
    "server.maxUploadSize": "100",
    "server.runOnSave": "false",
    "client.toolbarMode": "viewer",
    "theme.base": "light",
    "theme.primaryColor": "#1f5f99",
}


def command(port: int, python: str = sys.executable) -> list[str]:
    """The ``streamlit run`` command line for ``port`` with every safe setting explicit."""
    argv = [python, "-m", "streamlit", "run", str(APP)]
    for name, value in {**SAFE_SETTINGS, "server.port": str(port)}.items():
        argv.append(f"--{name}={value}")
    return argv


def _port(text: str) -> int:
    try:
        port = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"port must be a whole number, got {text!r}") from None
    if not 1024 <= port <= 65535:
        raise argparse.ArgumentTypeError(f"port must be >= 1024 and <= 65535, got {port}")
    return port


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(
        prog="python -m dashboard",
        description="Open the Perch dashboard on the built-in demo site, listening on "
                    "127.0.0.1 only, with no usage statistics. From another machine, reach "
                    "it through an SSH tunnel: ssh -N -L PORT:127.0.0.1:PORT user@this-host.")
    parser.add_argument("--port", type=_port, default=DEFAULT_PORT,
                        help=f"TCP port on 127.0.0.1 (default {DEFAULT_PORT})")
    args = parser.parse_args(argv)
    cmd = command(args.port)
    sys.stdout.flush()
    os.execv(cmd[0], cmd)
    return 0  # not reached: execv replaces this process


if __name__ == "__main__":
    raise SystemExit(main())
