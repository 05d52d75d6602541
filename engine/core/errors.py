"""The one exception type for problems with user input.

Every place where input enters (site files, CSV uploads, form values) collects all problems it
finds into a :class:`Problems` list and raises one :class:`InputError` carrying them, so a user
sees every problem at once. The command line turns it into exit code 2; the dashboard shows each
message beside its field.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field

# Characters that must not reach a terminal or a log line as they are: controls other than
# line feed, and lone surrogates (which cannot be encoded).
_UNSHOWABLE = re.compile("[\x00-\x09\x0b-\x1f\x7f-\x9f\ud800-\udfff]")


def printable(text: str) -> str:
    """``text`` with control characters and lone surrogates written as ``\\u`` escapes (four
    hex digits each)."""
    return _UNSHOWABLE.sub(lambda m: f"\\u{ord(m.group()):04x}", text)


class InputError(ValueError):
    """Input that cannot be used, with a list of ``(where, message)`` items.

    ``where`` names the field or row (``"turbines[1].rated_power_w"``, ``"line 17"``); the
    message says what rule was broken, what was given and how to fix it.
    """

    def __init__(self, problems):
        problems = [(printable(str(w)), printable(str(m))) for w, m in problems]
        if not problems:
            problems = [("input", "unknown problem")]
        self.problems = problems
        super().__init__(self.render())

    def render(self) -> str:
        lines = [f"{len(self.problems)} problem(s) found:"]
        lines += [f"  - {w}: {m}" for w, m in self.problems]
        return "\n".join(lines)

    def __str__(self) -> str:  # pragma: no cover - trivial
        return self.render()


@dataclass
class Problems:
    """Collects ``(where, message)`` items, then raises them together."""

    items: list = field(default_factory=list)

    def add(self, where: str, message: str) -> None:
        self.items.append((where, message))

    def extend(self, other) -> None:
        self.items.extend(other.items if isinstance(other, Problems) else other)

    def __bool__(self) -> bool:
        return bool(self.items)

    def raise_if_any(self) -> None:
        if self.items:
            raise InputError(self.items)


def check_range(problems: Problems, where: str, value, lo=None, hi=None, unit: str = "",
                lo_open: bool = False, hi_open: bool = False) -> None:
    """Add a problem unless ``lo <= value <= hi`` (open ends where flagged).

    The message has the house form ``"<where> must be <rule>, got <value> <unit>"``.
    """
    try:
        v = float(value)
    except (TypeError, ValueError):
        problems.add(where, f"must be a number, got {value!r}")
        return
    if v != v:
        problems.add(where, "must be a number, got NaN")
        return
    bad = False
    if lo is not None and (v < lo or (lo_open and v == lo)):
        bad = True
    if hi is not None and (v > hi or (hi_open and v == hi)):
        bad = True
    if bad:
        lo_s = "" if lo is None else (f"> {lo:g}" if lo_open else f">= {lo:g}")
        hi_s = "" if hi is None else (f"< {hi:g}" if hi_open else f"<= {hi:g}")
        rule = " and ".join(s for s in (lo_s, hi_s) if s)
        problems.add(where, f"must be {rule}, got {v:g} {unit}".rstrip())


def check_choice(problems: Problems, where: str, value, options) -> None:
    """Add a problem unless ``value`` is one of ``options`` (the message lists them)."""
    if value not in options:
        problems.add(where, f"must be one of {', '.join(options)}, got {value!r}")


def check_id(problems: Problems, where: str, value) -> None:
    """Add a problem unless ``value`` is a text with something other than spaces in it."""
    if not isinstance(value, str) or not value.strip():
        problems.add(where, f"must be a non-empty text, got {value!r}")


def decode_upload(data, max_bytes: int, what: str, save_as: str) -> str:
    """Text of an uploaded file: size-checked and decoded as UTF-8 (a BOM is dropped).

    ``what`` names the file in messages ("a site file"), ``save_as`` says how to fix an
    encoding problem ("UTF-8 JSON"). Raises :class:`InputError` naming the limit or the byte.
    """
    if len(data) > max_bytes:
        raise InputError([("file", f"is larger than the {max_bytes / 2**20:.3g} MiB limit for "
                                   f"{what}; check that this is the right file")])
    data = bytes(data)
    if data[:2] in (b"\xff\xfe", b"\xfe\xff"):  # UTF-16 with its byte-order mark
        try:
            text = data.decode("utf-16")
        except UnicodeDecodeError:
            text = ""
        head = text[:512]
        # Site files and tables are mostly ASCII; UTF-16 that is not is binary junk.
        if head and sum(ch < "\x80" for ch in head) >= 0.5 * len(head):
            return text
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as e:
        raise InputError([("file", f"is not UTF-8 text (byte {e.start}); save it as "
                                   f"{save_as}")]) from None
