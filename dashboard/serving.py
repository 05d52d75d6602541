"""Where the server listens: loopback, or an exposure the user must opt in to.

A client's site, its buildings and its figures stay on the assessor's laptop. The dashboard
refuses to run when its server listens beyond the loopback interface, unless the user set
``PERCH_ALLOW_NETWORK=1`` on purpose; an SSH tunnel is the safer way to show it elsewhere.
"""
from __future__ import annotations

import ipaddress

#: Environment variable that allows listening beyond loopback; only "1" counts.
ALLOW_ENV = "PERCH_ALLOW_NETWORK"

TUNNEL_HINT = ("To show the dashboard on another machine, keep it on loopback and tunnel to "
               "it from there: `ssh -N -L 8501:127.0.0.1:8501 you@this-laptop`, then open "
               "http://127.0.0.1:8501 on that machine.")


def is_loopback(address) -> bool:
    """True when ``address`` (Streamlit's ``server.address``) reaches this machine only.

    An empty address means every interface. ``localhost`` counts as loopback; any other name
    is not trusted to be one.
    """
    if address is None:
        return False
    text = str(address).strip().strip("[]")
    if not text:
        return False
    if text.lower() == "localhost":
        return True
    try:
        return ipaddress.ip_address(text).is_loopback
    except ValueError:
        return False


def exposure(address, environ) -> tuple[str, str]:
    """``(level, message)`` for a server listening on ``address``.

    level is ``"ok"`` (loopback), ``"warn"`` (beyond loopback, opted in with
    ``PERCH_ALLOW_NETWORK=1``) or ``"refuse"`` (beyond loopback, not opted in).
    """
    if is_loopback(address):
        return "ok", ""
    where = "every network interface" if not str(address or "").strip() else f"{address}"
    if environ.get(ALLOW_ENV, "") == "1":
        return "warn", (f"This dashboard listens on {where}, not only on this laptop "
                        f"({ALLOW_ENV}=1 is set): anyone on the same network can open the "
                        f"client's site. {TUNNEL_HINT}")
    return "refuse", (f"The dashboard will not run: its server listens on {where}, so anyone "
                      f"on the same network could open the client's site. Start it with "
                      f"`python -m dashboard`, which listens on 127.0.0.1 only. {TUNNEL_HINT} "
                      f"To listen on the network anyway, set {ALLOW_ENV}=1 and start again.")
