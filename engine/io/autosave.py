"""Autosave of the working assessment, which may still be invalid while someone types.

The dashboard writes its working copy (a site-file dict) here after every change, atomically
and keeping the previous version as ``.bak``, so a closed tab, a crash or a flat battery loses
nothing; on the next start it offers to restore it. The folder is ``$PERCH_AUTOSAVE_DIR`` or
``~/.perch/autosave``.

Every version a person could want is kept:

- an autosave that cannot be read, or is not shaped like a working site, is *set aside* under
  its own name (``working-site.json.unreadable-<UTC time>``) before the session writes
  anything, so the next write can never rotate it over the good ``.bak``;
- an autosave offered at the start is copied to ``working-site.offered.json`` and stays there
  until the person restores or declines it (:func:`forget_offer`), however many edits the new
  session autosaves meanwhile;
- writers use unique temporary names and remove them on every path
  (:func:`engine.io.safe_files.atomic_write_bytes`), so two tabs writing at once leave no litter.
"""
from __future__ import annotations

import json
import os
from datetime import datetime, timezone
from pathlib import Path

from engine.core.errors import InputError
from engine.io.safe_files import atomic_write_bytes, read_bounded
from engine.io.sitefile import MAX_SITE_FILE_BYTES

AUTOSAVE_ENV = "PERCH_AUTOSAVE_DIR"
AUTOSAVE_NAME = "working-site.json"
OFFERED_NAME = "working-site.offered.json"

#: Top-level keys a working copy must hold, and the JSON type each must have.
REQUIRED_SHAPE = {"site": dict, "climate": dict, "buildings": list, "positions": list,
                  "turbines": list}
#: Keys that may be absent but, when present, must have this type; lists hold objects.
OPTIONAL_SHAPE = {"receptors": list, "spot_readings": list, "losses": dict, "economics": dict,
                  "uncertainty": dict, "ranking": dict, "transfer": dict}

_JSON_TYPE = {dict: "an object", list: "a list"}


def autosave_path() -> Path:
    """Where the working copy is autosaved."""
    folder = os.environ.get(AUTOSAVE_ENV) or Path.home() / ".perch" / "autosave"
    return Path(folder) / AUTOSAVE_NAME


def offered_path(path=None) -> Path:
    """Where an autosave offered for restoring is kept until it is restored or declined."""
    path = Path(path) if path is not None else autosave_path()
    return path.with_name(OFFERED_NAME)


def draft_text(draft: dict) -> str:
    """Canonical text of a working copy (what is written, and what is compared).

    Text that cannot be written as UTF-8 (a lone surrogate) is written as a JSON escape.
    """
    text = json.dumps(draft, indent=2, ensure_ascii=False) + "\n"
    try:
        text.encode("utf-8")
    except UnicodeEncodeError:
        text = json.dumps(draft, indent=2, ensure_ascii=True) + "\n"
    return text


def write_draft(draft: dict, path=None) -> Path:
    """Write the working copy atomically, keeping the previous autosave as ``.bak``."""
    path = Path(path) if path is not None else autosave_path()
    path.parent.mkdir(parents=True, exist_ok=True)
    return atomic_write_bytes(path, draft_text(draft).encode("utf-8"), keep_previous=True)


def shape_problems(data) -> list:
    """``(where, message)`` for every way ``data`` is not shaped like a working site."""
    if not isinstance(data, dict):
        return [("autosave", f"must be a site-file object, got {type(data).__name__}")]
    out = []
    for key, tp in REQUIRED_SHAPE.items():
        if key not in data:
            out.append((key, f"is missing; a working site must have {_JSON_TYPE[tp]} here"))
        elif not isinstance(data[key], tp):
            out.append((key, f"must be {_JSON_TYPE[tp]}, got {type(data[key]).__name__}"))
    for key, tp in OPTIONAL_SHAPE.items():
        if key in data and data[key] is not None and not isinstance(data[key], tp):
            out.append((key, f"must be {_JSON_TYPE[tp]}, got {type(data[key]).__name__}"))
    for key in [k for k, tp in {**REQUIRED_SHAPE, **OPTIONAL_SHAPE}.items() if tp is list]:
        items = data.get(key)
        if isinstance(items, list):
            out += [(f"{key}[{i}]", f"must be an object, got {type(v).__name__}")
                    for i, v in enumerate(items) if not isinstance(v, dict)][:5]
    return out


def set_aside(path) -> Path:
    """Rename ``path`` to ``<name>.unreadable-<UTC time>`` beside it; return the new path."""
    path = Path(path)
    stamp = datetime.now(timezone.utc).strftime("%Y%m%dT%H%M%S%fZ")
    target = path.with_name(f"{path.name}.unreadable-{stamp}")
    os.replace(path, target)
    return target


def _refuse(path: Path, reason: str):
    """Set the file aside and raise InputError saying where it went and what is kept."""
    try:
        moved = set_aside(path)
        kept = f"it was set aside as {moved.name}"
    except OSError as e:
        kept = f"it could not be set aside ({e.strerror}); move it away by hand"
    bak = path.with_name(path.name + ".bak")
    has_bak = bak.is_file()
    tail = (f"; the previous autosave is kept as {bak.name} beside it" if has_bak else "")
    raise InputError([(str(path), f"autosave cannot be read ({reason}); {kept}{tail}")])


def read_draft(path=None):
    """The autosaved working copy and its time (UTC), or None when there is none.

    An autosave that cannot be read or is not shaped like a working site is set aside (see
    the module notes) and InputError says so; it is never returned for rendering.
    """
    path = Path(path) if path is not None else autosave_path()
    if not path.exists():
        return None
    try:
        raw = read_bounded(path, MAX_SITE_FILE_BYTES, "an autosave")
        mtime = path.stat().st_mtime
    except InputError as e:
        _refuse(path, e.problems[0][1])
    except OSError as e:
        _refuse(path, e.strerror or e.__class__.__name__)
    try:
        data = json.loads(raw.decode("utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError, RecursionError, ValueError) as e:
        _refuse(path, e.__class__.__name__)
    shape = shape_problems(data)
    if shape:
        w, m = shape[0]
        _refuse(path, f"not shaped like a working site: {w} {m}"
                + (f" (and {len(shape) - 1} more)" if len(shape) > 1 else ""))
    saved_at = datetime.fromtimestamp(mtime, tz=timezone.utc)
    return data, saved_at


def find_offer(path=None):
    """The autosave to offer at the start of a session, kept aside until decided.

    An offer left undecided by an earlier session (``working-site.offered.json``) comes
    first; else the autosave itself, which is then copied to the offered file so the new
    session's own autosaves cannot rotate it away. Returns ``(data, saved_at)`` or None;
    raises InputError for an unreadable file (which is set aside).
    """
    path = Path(path) if path is not None else autosave_path()
    offered = offered_path(path)
    found = read_draft(offered)
    if found is not None:
        return found
    found = read_draft(path)
    if found is None:
        return None
    try:
        atomic_write_bytes(offered, draft_text(found[0]).encode("utf-8"), keep_previous=False)
        stamp = found[1].timestamp()
        os.utime(offered, (stamp, stamp))
    except OSError:
        pass  # the autosave itself still holds it; its .bak keeps it for one more edit
    return found


def forget_offer(path=None) -> None:
    """Remove the kept offer once it has been restored or declined."""
    try:
        os.unlink(offered_path(path))
    except FileNotFoundError:
        pass
