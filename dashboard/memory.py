"""Once per page and server process: the objects alive after a page's first whole run are
set aside from the garbage collector's scans.

Streamlit collects garbage fully (``gc.collect(2)``) after every script run, and a full
collection walks every tracked object: the imported libraries, the engine and the caches'
first entries, a few hundred thousand objects, which takes tens of milliseconds while the
server's other thread waits for the interpreter lock to send the page. ``gc.freeze()``
(Python's own, for long-lived objects made at start-up) moves the objects alive then to a
permanent generation; later collections walk only what was made since, so a what-if's
garbage is still collected, and the page's last messages leave at once. Each page's first run
imports what that page needs (the charts' library, the chain), hence once per page: a bounded
number of freezes, so what stays frozen is bounded too.
"""
from __future__ import annotations

import gc

_FROZEN: set = set()


def freeze_after_first_run(page: str) -> bool:
    """Collect once, then freeze what is left; only the first call for ``page`` in a process
    acts. Returns True when this call froze."""
    if page in _FROZEN:
        return False
    _FROZEN.add(page)
    gc.collect()
    gc.freeze()
    return True
