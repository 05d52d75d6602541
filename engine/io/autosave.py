"""Autosave of the working assessment, which may still be invalid while someone types.

The dashboard writes its working copy (a site-file dict) here after every change, atomically
and keeping the previous version, so a closed tab, a crash or a flat battery loses nothing;
on the next start it offers to restore it. The folder is ``$PERCH_AUTOSAVE_DIR`` or
``~/.perch/autosave``.
"""
from __future__ import annotations

import json
import os
from datetime import datetime, timezone
from pathlib import Path

from engine.core.errors import InputError
from engine.io.sitefile import MAX_SITE_FILE_BYTES, atomic_write_bytes

AUTOSAVE_ENV = "PERCH_AUTOSAVE_DIR"
AUTOSAVE_NAME = "working-site.json"


def autosave_path() -> Path:
    """Where the working copy is autosaved."""
    folder = os.environ.get(AUTOSAVE_ENV) or Path.home() / ".perch" / "autosave"
    return Path(folder) / AUTOSAVE_NAME


def draft_text(draft: dict) -> str:
    """Canonical text of a working copy (what is written, and what is compared)."""
    return json.dumps(draft, indent=2, ensure_ascii=False) + "\n"


def write_draft(draft: dict, path=None) -> Path:
    """Write the working copy atomically, keeping the previous autosave as ``.bak``."""
    path = Path(path) if path is not None else autosave_path()
    path.parent.mkdir(parents=True, exist_ok=True)
    return atomic_write_bytes(path, draft_text(draft).encode("utf-8"), keep_previous=True)


def read_draft(path=None):
    """The autosaved working copy and its time (UTC), or None when there is none.

    Raises InputError when the file exists but is not a readable working copy.
    """
    path = Path(path) if path is not None else autosave_path()
    if not path.is_file():
        return None
    where = str(path)
    if path.stat().st_size > MAX_SITE_FILE_BYTES:
        raise InputError([(where, "autosave is too large to be a site file; delete it")])
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as e:
        raise InputError([(where, f"autosave cannot be read ({e.__class__.__name__}); "
                                  "delete it or restore the .bak beside it")]) from None
    if not isinstance(data, dict):
        raise InputError([(where, "autosave is not a site-file object; delete it")])
    saved_at = datetime.fromtimestamp(path.stat().st_mtime, tz=timezone.utc)
    return data, saved_at
