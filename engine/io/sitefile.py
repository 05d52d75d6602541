"""The site file: our own JSON format for a whole assessment, with its JSON Schema.

The format mirrors :mod:`engine.core.model`: each object is a JSON object whose keys are the
dataclass fields (SI units in the names), lists for tuples. Loading checks every key and value
and raises one :class:`~engine.core.errors.InputError` listing all problems; saving writes keys in
field order with a trailing newline so load → save round-trips byte for byte.

See ``docs/site-file.md`` for the format description.
"""
from __future__ import annotations

import dataclasses
import hashlib
import json
import math
import types
import typing
from pathlib import Path

from engine.core import model
from engine.core.errors import InputError, Problems, decode_upload
from engine.io import migrate, safe_files

#: Largest site file accepted [bytes] (20 MiB); a site file is small, larger ones are a wrong
#: upload.
MAX_SITE_FILE_BYTES = 20 * 1024 * 1024

#: Text fields other than one-line names and ids: field name -> (line breaks allowed,
#: longest accepted [characters]). Every other text field is one line of at most
#: :data:`engine.io.safe_files.MAX_NAME_CHARS` characters.
TEXT_LIMITS = {"notes": (True, safe_files.MAX_NOTE_CHARS),
               "note": (True, safe_files.MAX_NOTE_CHARS),
               "label": (False, 1000), "record_file": (False, 1000)}


def _hints(cls):
    return typing.get_type_hints(cls, vars(model))


def _unwrap_optional(tp):
    origin = typing.get_origin(tp)
    if origin in (typing.Union, types.UnionType):
        args = [a for a in typing.get_args(tp) if a is not type(None)]
        if len(args) == 1:
            return args[0], True
    return tp, False


def _type_name(tp) -> str:
    tp, opt = _unwrap_optional(tp)
    if dataclasses.is_dataclass(tp):
        name = "an object"
    elif typing.get_origin(tp) is tuple:
        inner = typing.get_args(tp)[0]
        name = f"a list of {_type_name(inner).replace('a ', '').replace('an ', '')}s"
    else:
        name = {float: "a number", int: "a whole number", str: "a text", bool: "true or false"}[tp]
    return name + (" or null" if opt else "")


def _show(value, limit: int = 60) -> str:
    """A value's repr for a message, cut to ``limit`` characters."""
    text = repr(value)
    return text if len(text) <= limit else text[:limit - 3] + "..."


def _convert(value, tp, where: str, problems: Problems):
    """Convert JSON ``value`` to type ``tp``; record problems and return None on failure."""
    tp, optional = _unwrap_optional(tp)
    if value is None:
        if optional:
            return None
        problems.add(where, f"must be {_type_name(tp)}, got null")
        return None
    if dataclasses.is_dataclass(tp):
        return build_dataclass(tp, value, where, problems)
    if typing.get_origin(tp) is tuple:
        inner = typing.get_args(tp)[0]
        if not isinstance(value, list):
            problems.add(where, f"must be {_type_name(tp)}, got {type(value).__name__}")
            return None
        items = [_convert(v, inner, f"{where}[{i}]", problems) for i, v in enumerate(value)]
        return tuple(items)
    if tp is bool:
        if not isinstance(value, bool):
            problems.add(where, f"must be true or false, got {_show(value)}")
            return None
        return value
    if tp is float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            problems.add(where, f"must be a number, got {_show(value)}")
            return None
        try:
            number = float(value)
        except OverflowError:  # a JSON integer too large for a float
            number = math.inf
        if not math.isfinite(number):
            problems.add(where, f"must be a finite number, got {_show(value, 40)}")
            return None
        return number
    if tp is int:
        if isinstance(value, bool) or not isinstance(value, int):
            problems.add(where, f"must be a whole number, got {_show(value)}")
            return None
        return value
    if tp is str:
        if not isinstance(value, str):
            problems.add(where, f"must be a text, got {_show(value)}")
            return None
        multiline, limit = TEXT_LIMITS.get(where.rsplit(".", 1)[-1].split("[")[0],
                                           (False, safe_files.MAX_NAME_CHARS))
        bad = safe_files.text_problem(value, multiline=multiline, max_chars=limit)
        if bad is not None:
            problems.add(where, bad)
            return None
        return value
    raise TypeError(f"unsupported field type {tp!r}")  # a programming error, not user input


def build_dataclass(cls, data, where: str, problems: Problems):
    """Build dataclass ``cls`` from a dict, collecting every problem under ``where``."""
    prefix = f"{where}." if where else ""
    if not isinstance(data, dict):
        problems.add(where or "file", f"must be a JSON object, got {type(data).__name__}")
        return None
    fields = {f.name: f for f in dataclasses.fields(cls)}
    hints = _hints(cls)
    for key in data:
        if key not in fields:
            close = [n for n in fields if n.split("_")[0] == str(key).split("_")[0]]
            hint = f"; did you mean {close[0]!r}?" if close else ""
            shown = key if str(key).strip() else repr(key)  # an empty key must still be named
            problems.add(f"{prefix}{shown}", f"unknown key{hint} (allowed: {', '.join(fields)})")
    kwargs, ok = {}, True
    for name, f in fields.items():
        required = f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING
        if name not in data:
            if required:
                problems.add(f"{prefix}{name}", f"is missing; it must be {_type_name(hints[name])}")
                ok = False
            continue
        before = len(problems.items)
        val = _convert(data[name], hints[name], f"{prefix}{name}", problems)
        if len(problems.items) > before:
            ok = False
        else:
            kwargs[name] = val
    if not ok:
        return None
    try:
        return cls(**kwargs)
    except InputError as e:
        problems.extend([(f"{prefix}{w}", m) for w, m in e.problems])
        return None


def assessment_from_dict(data) -> model.Assessment:
    """Build and validate an assessment from parsed JSON; raise InputError with every problem."""
    problems = Problems()
    obj = build_dataclass(model.Assessment, data, "", problems)
    problems.raise_if_any()
    return obj


def _plain(obj):
    if dataclasses.is_dataclass(obj):
        return {f.name: _plain(getattr(obj, f.name)) for f in dataclasses.fields(obj)}
    if isinstance(obj, tuple):
        return [_plain(v) for v in obj]
    return obj


def assessment_to_dict(assessment: model.Assessment) -> dict:
    """Plain JSON-ready dict of an assessment (field order kept)."""
    return _plain(assessment)


def dumps(assessment: model.Assessment) -> str:
    """Site-file text: indented JSON, keys in field order, UTF-8, trailing newline."""
    return json.dumps(assessment_to_dict(assessment), indent=2, ensure_ascii=False) + "\n"


def loads(text) -> model.Assessment:
    """Parse site-file text (str or bytes) into a validated assessment."""
    return loads_with_notes(text)[0]


def loads_with_notes(text) -> tuple:
    """Like :func:`loads`, also returning notes on what an older-format migration changed.

    Returns ``(assessment, notes)``; ``notes`` is empty for a current file. Problems the
    migration met are raised together with the validation problems (see :mod:`engine.io.migrate`).
    """
    if isinstance(text, (bytes, bytearray)):
        text = decode_upload(text, MAX_SITE_FILE_BYTES, "a site file", "UTF-8 JSON")
    try:
        data = json.loads(text)
    except json.JSONDecodeError as e:
        raise InputError([(f"line {e.lineno} column {e.colno}",
                           f"not valid JSON: {e.msg}; check commas, quotes and brackets")]) from None
    except RecursionError:
        raise InputError([("file", "nested too deeply to be a site file")]) from None
    except ValueError:  # an integer with more digits than Python converts (4300)
        raise InputError([("file", "holds a number too long to read (thousands of digits); "
                                   "check that this is a Perch site file")]) from None
    m = migrate.migrate(data)
    try:
        assessment = assessment_from_dict(m.data)
    except InputError as e:
        rest = [(w, msg) for w, msg in e.problems if w not in m.covered]
        raise InputError(m.problems + rest) from None
    if m.problems:
        raise InputError(m.problems)
    return assessment, list(m.notes)


def load(path) -> model.Assessment:
    """Read and validate a site file."""
    return load_with_notes(path)[0]


def load_with_notes(path) -> tuple:
    """Read and validate a site file: ``(assessment, migration notes)``."""
    raw = safe_files.read_bounded(path, MAX_SITE_FILE_BYTES, "a site file (JSON)")
    return loads_with_notes(raw)


def atomic_write_bytes(path, data: bytes, keep_previous: bool = True) -> Path:
    """Write ``data`` to ``path`` atomically.

    See :func:`engine.io.safe_files.atomic_write_bytes`.
    """
    return safe_files.atomic_write_bytes(path, data, keep_previous=keep_previous)


def save(assessment: model.Assessment, path, keep_previous: bool = True) -> Path:
    """Write a site file atomically (temporary file, fsync, rename); keep ``<name>.bak``.

    An interrupted save leaves the previous file intact.
    """
    return atomic_write_bytes(path, dumps(assessment).encode("utf-8"), keep_previous)


def content_hash(assessment: model.Assessment) -> str:
    """SHA-256 of the canonical site-file text: what a result depends on."""
    return hashlib.sha256(dumps(assessment).encode("utf-8")).hexdigest()


def _schema_for(tp, defs: dict):
    tp, optional = _unwrap_optional(tp)
    if dataclasses.is_dataclass(tp):
        name = tp.__name__
        if name not in defs:
            defs[name] = {}  # placeholder against recursion
            hints = _hints(tp)
            props, required = {}, []
            for f in dataclasses.fields(tp):
                props[f.name] = _schema_for(hints[f.name], defs)
                _text_limit_schema(f.name, props[f.name])
                if f.default is not dataclasses.MISSING and not dataclasses.is_dataclass(f.default):
                    props[f.name]["default"] = _plain(f.default)
                if f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING:
                    required.append(f.name)
            doc = (tp.__doc__ or "").strip().split("\n")[0]
            defs[name] = {"type": "object", "description": doc, "properties": props,
                          "required": required, "additionalProperties": False}
        s = {"$ref": f"#/$defs/{name}"}
    elif typing.get_origin(tp) is tuple:
        s = {"type": "array", "items": _schema_for(typing.get_args(tp)[0], defs)}
    else:
        s = {"type": {float: "number", int: "integer", str: "string", bool: "boolean"}[tp]}
    if optional:
        s = {"anyOf": [s, {"type": "null"}]}
    return s


def _text_limit_schema(name: str, prop: dict) -> None:
    """Add the documented longest length to a text property (or to its list's items)."""
    target = prop.get("items", prop)
    if target.get("type") == "string":
        target["maxLength"] = TEXT_LIMITS.get(name, (False, safe_files.MAX_NAME_CHARS))[1]


def json_schema() -> dict:
    """JSON Schema (draft 2020-12) of the site file, generated from the model."""
    defs: dict = {}
    root = _schema_for(model.Assessment, defs)
    schema = {"$schema": "https://json-schema.org/draft/2020-12/schema",
              "title": "Perch site file", **defs.pop("Assessment"), "$defs": defs}
    schema["properties"]["format_version"]["const"] = model.FORMAT_VERSION
    del root
    return schema


def dataclass_from_dict(cls, data, where: str = ""):
    """Build and validate dataclass ``cls`` (e.g. :class:`engine.core.model.WindClimate`) from
    parsed JSON; raise InputError with every problem, each under ``where``."""
    problems = Problems()
    obj = build_dataclass(cls, data, where, problems)
    problems.raise_if_any()
    return obj
