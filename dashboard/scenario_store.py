"""Saved what-if scenarios on disk, beside the autosaved working copy.

Scenarios are site-file texts keyed by name; they are written atomically (the previous file
kept as ``.bak``) every time one is saved or deleted, so a restart, a closed tab or a crash
keeps them. Each text is read back through :func:`engine.io.sitefile.loads`: a damaged entry is
left out with a message naming it, the others are kept.
"""
from __future__ import annotations

import json
from datetime import datetime, timezone
from pathlib import Path

from engine.io import autosave
from engine.io import sitefile
from engine.core.errors import InputError

FILE_NAME = "scenarios.json"
#: Largest scenarios file read back [bytes]: a handful of site files.
MAX_BYTES = 10 * sitefile.MAX_SITE_FILE_BYTES


def path() -> Path:
    """Where the scenarios are kept: beside the autosaved working copy."""
    return autosave.autosave_path().with_name(FILE_NAME)


def write(scenarios: dict, where=None) -> Path:
    """Write ``{name: site-file text}`` atomically, keeping the previous file as ``.bak``."""
    p = Path(where) if where is not None else path()
    p.parent.mkdir(parents=True, exist_ok=True)
    text = json.dumps({"scenarios": dict(scenarios)}, indent=1, ensure_ascii=False) + "\n"
    return sitefile.atomic_write_bytes(p, text.encode("utf-8"), keep_previous=True)


def read(where=None):
    """``(scenarios, saved_at, problems)`` from disk, or None when no file exists.

    ``problems`` lists ``(where, message)`` for entries left out. Raises InputError when the
    file itself cannot be read.
    """
    p = Path(where) if where is not None else path()
    if not p.is_file():
        return None
    if p.stat().st_size > MAX_BYTES:
        raise InputError([(str(p), f"scenarios file must be at most {MAX_BYTES} bytes, got "
                                   f"{p.stat().st_size} bytes; delete it")])
    try:
        data = json.loads(p.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError, RecursionError) as e:
        raise InputError([(str(p), f"scenarios file cannot be read ({e.__class__.__name__}); "
                                   "delete it or restore the .bak beside it")]) from None
    entries = data.get("scenarios") if isinstance(data, dict) else None
    if not isinstance(entries, dict):
        raise InputError([(str(p), "scenarios file must hold a 'scenarios' object; delete it")])
    out, problems = {}, []
    for name, text in entries.items():
        try:
            if not isinstance(text, str):
                raise InputError([("", "must be a site-file text")])
            sitefile.loads(text)
        except InputError as e:
            problems.append((f"scenario {name!r}", f"left out: {e.problems[0][1]}"))
            continue
        out[str(name)] = text
    saved_at = datetime.fromtimestamp(p.stat().st_mtime, tz=timezone.utc)
    return out, saved_at, problems
