"""Safe input and output of files and text: bounded reads, checked atomic writes, text checks.

Every command and page that reads a small input file (site file, climate JSON, turbine JSON,
measured record) or writes an output (summary, exports, autosave) goes through here, so the
same rules hold everywhere:

- :func:`read_bounded` reads at most ``max_bytes + 1`` bytes and refuses a larger file on the
  bytes actually read (a device such as ``/dev/zero`` or a growing file reports a size of 0 or
  less than it holds), and refuses anything that is not a regular file (folders, devices,
  FIFOs, sockets) before reading a byte.
- :func:`check_output_path` checks an output path before any work starts: its folder exists
  and is a folder, the path is not a folder or a special file.
- :func:`atomic_write_bytes` writes a uniquely named temporary file in the target's folder,
  flushes and ``fsync``\\ s it, optionally links the previous version to ``<name>.bak`` and
  renames the new file over the old one; any error removes the temporary files and re-raises,
  so no partial file is ever left under the target's name. :func:`write_output` does the same
  and turns a file-system error into an :class:`~engine.core.errors.InputError` naming the file.
- :func:`text_problem` says what is wrong with a piece of user text (control characters, lone
  surrogates, Unicode non-characters, too long), or returns None.

Sizes are stated in MiB (2²⁰ bytes) throughout, as in ``docs/robustness.md``.
"""
from __future__ import annotations

import errno
import os
import re
import stat
import tempfile
from pathlib import Path

from engine.core.errors import InputError

MIB = 1024 * 1024

#: Longest accepted single-line text (ids, names, labels) [characters].
MAX_NAME_CHARS = 200
#: Longest accepted free text (notes) [characters].
MAX_NOTE_CHARS = 10_000

# C0 controls except TAB/LF/CR, DEL and the C1 controls; lone surrogates; non-characters
# (U+FDD0..U+FDEF and the last two code points of every plane), Unicode 15 chapter 23.7.
_NONCHAR = "\ufdd0-\ufdef" + "".join(
    f"{chr(plane * 0x10000 + 0xFFFE)}{chr(plane * 0x10000 + 0xFFFF)}" for plane in range(17))
_BAD_MULTILINE = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f\ud800-\udfff" + _NONCHAR + "]")
_BAD_LINE = re.compile("[\x00-\x1f\x7f-\x9f\ud800-\udfff" + _NONCHAR + "]")


def format_size(n_bytes: float) -> str:
    """A size for a message, in MiB to three digits (``"20 MiB"``, ``"1.91 MiB"``)."""
    return f"{n_bytes / MIB:.3g} MiB"


def _describe(ch: str) -> str:
    cp = ord(ch)
    if 0xD800 <= cp <= 0xDFFF:
        kind = "a lone surrogate"
    elif cp < 0x20 or 0x7F <= cp <= 0x9F:
        kind = "a control character"
    else:
        kind = "a Unicode non-character"
    return f"{kind} (U+{cp:04X})"


def text_problem(value: str, *, multiline: bool = False, max_chars: int | None = None):
    """What is wrong with ``value`` as user text, or None when it is fine.

    Parameters
    ----------
    value : the text
    multiline : allow tab, line feed and carriage return (free-text notes)
    max_chars : longest accepted length [characters]; :data:`MAX_NOTE_CHARS` for multiline
        text, :data:`MAX_NAME_CHARS` otherwise, when None

    Returns
    -------
    str or None
        A message in the house form ``"must be ..., got ..."``.
    """
    limit = max_chars if max_chars is not None else (MAX_NOTE_CHARS if multiline
                                                      else MAX_NAME_CHARS)
    if len(value) > limit:
        return f"must be at most {limit} characters long, got {len(value)} characters"
    m = (_BAD_MULTILINE if multiline else _BAD_LINE).search(value)
    if m is not None:
        fix = "tab, line feed or " if not multiline else ""
        return (f"must be plain text without {fix}control characters, surrogates or "
                f"non-characters, got {_describe(m.group())} at character {m.start() + 1}")
    return None


def clean_text(value: str) -> str:
    """``value`` with every character :func:`text_problem` refuses replaced by U+FFFD.

    For text that must be shown even though it was never checked (a renderer's input).
    """
    return _BAD_LINE.sub("\ufffd", value)


def _kind_of(mode: int) -> str:
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISFIFO(mode):
        return "a pipe (FIFO)"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def read_bounded(path, max_bytes: int, what: str = "the file", where: str | None = None) -> bytes:
    """The bytes of the regular file ``path``, refusing more than ``max_bytes``.

    Parameters
    ----------
    path : file to read
    max_bytes : largest accepted size [bytes], checked on the bytes read
    what : what the file should be, for messages ("a site file")
    where : name of the argument or file in messages (the path when None)

    Raises
    ------
    InputError
        Missing, unreadable, not a regular file (folder, device, FIFO, socket) or too large.
    """
    where = where or str(path)
    try:
        # O_NONBLOCK: opening a FIFO for reading must not wait for a writer.
        fd = os.open(path, os.O_RDONLY | os.O_NONBLOCK | getattr(os, "O_CLOEXEC", 0))
    except FileNotFoundError:
        raise InputError([(where, f"no such file; give the path of {what}")]) from None
    except OSError as e:
        raise InputError([(where, f"cannot be opened ({e.strerror}); give the path of "
                                  f"{what}")]) from None
    try:
        mode = os.fstat(fd).st_mode
        if not stat.S_ISREG(mode):
            raise InputError([(where, f"is {_kind_of(mode)}, not a regular file; give the "
                                      f"path of {what}")])
        os.set_blocking(fd, True)
        chunks, total = [], 0
        while total <= max_bytes:
            chunk = os.read(fd, min(4 * MIB, max_bytes + 1 - total))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
        if total > max_bytes:
            raise InputError([(where, f"is larger than the {format_size(max_bytes)} limit for "
                                      f"{what}; check that this is the right file")])
        return b"".join(chunks)
    except OSError as e:
        raise InputError([(where, f"cannot be read ({e.strerror})")]) from None
    finally:
        os.close(fd)


def check_output_path(path, where: str, what: str = "the output") -> Path:
    """Check before any work that ``path`` can take a new file; raise InputError if not.

    The folder must exist and be a folder; the path must not be a folder or a special file
    (writing over ``/dev/full`` or a FIFO would not make a file).
    """
    path = Path(path)
    parent = path.parent if str(path.parent) else Path(".")
    try:
        pmode = os.stat(parent).st_mode
    except FileNotFoundError:
        raise InputError([(where, f"folder {str(parent)!r} does not exist; create it or "
                                  f"choose another place for {what}")]) from None
    except NotADirectoryError:
        raise InputError([(where, f"{str(parent)!r} is not a folder (a file is in the way); "
                                  f"choose another place for {what}")]) from None
    except OSError as e:
        raise InputError([(where, f"folder {str(parent)!r} cannot be used ({e.strerror})")]) \
            from None
    if not stat.S_ISDIR(pmode):
        raise InputError([(where, f"{str(parent)!r} is not a folder (a file is in the way); "
                                  f"choose another place for {what}")])
    try:
        mode = os.stat(path).st_mode
    except FileNotFoundError:
        mode = None
    except OSError as e:
        raise InputError([(where, f"cannot be used ({e.strerror})")]) from None
    if mode is not None and not stat.S_ISREG(mode):
        raise InputError([(where, f"{str(path)!r} is {_kind_of(mode)}; give a file name for "
                                  f"{what}")])
    if not os.access(parent, os.W_OK | os.X_OK):
        raise InputError([(where, f"folder {str(parent)!r} is not writable; choose another "
                                  f"place for {what}")])
    return path


def _unlink_quietly(name: str) -> None:
    try:
        os.unlink(name)
    except FileNotFoundError:
        pass


def atomic_write_bytes(path, data: bytes, keep_previous: bool = True) -> Path:
    """Write ``data`` to ``path`` atomically (temporary file, fsync, rename); keep ``<name>.bak``.

    The temporary names are unique per call (``mkstemp``), so concurrent writers never share
    one. An interrupted or failed write leaves the previous file intact and removes the
    temporary files: the file exists, whole, at every instant. Raises the ``OSError`` met.

    Notes
    -----
    ``rename(2)`` between two names of one file does nothing and leaves both names (POSIX);
    when another writer has just linked the same previous version to ``.bak``, the temporary
    ``.bak`` link is therefore removed explicitly after the rename.
    """
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    bak_tmp = tmp + ".bak"
    try:
        try:
            mode = os.stat(path).st_mode
        except FileNotFoundError:
            mode = None
        if mode is not None and not stat.S_ISREG(mode):
            raise IsADirectoryError(errno.EISDIR if stat.S_ISDIR(mode) else errno.EINVAL,
                                    f"{_kind_of(mode)} is in the way", str(path))
        # mkstemp creates 0600; keep the previous file's mode, else the usual 0644.
        os.chmod(tmp, (mode & 0o777) if mode is not None else 0o644)
        with os.fdopen(fd, "wb") as fh:
            fd = None
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if keep_previous and mode is not None:
            # Link (or copy) the previous version to .bak rather than moving it, so the file
            # exists, whole, at every instant of the save.
            try:
                os.link(path, bak_tmp)
            except FileNotFoundError:
                pass  # another writer replaced it in between; its own save keeps a .bak
            except OSError:  # a file system without hard links
                import shutil
                shutil.copy2(path, bak_tmp)
            if os.path.lexists(bak_tmp):
                os.replace(bak_tmp, path.with_name(path.name + ".bak"))
                _unlink_quietly(bak_tmp)  # still there when both names were one file
        os.replace(tmp, path)
        _fsync_folder(folder)
    except BaseException:
        if fd is not None:
            os.close(fd)
        for leftover in (tmp, bak_tmp):
            _unlink_quietly(leftover)
        raise
    return path


def _fsync_folder(folder: Path) -> None:
    """Flush the folder entry of a rename to disk (where the file system allows it)."""
    try:
        dfd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dfd)
    except OSError:
        pass  # some file systems refuse fsync on a folder; the rename itself is done
    finally:
        os.close(dfd)


def write_output(path, data: bytes, where: str, what: str = "the output",
                 keep_previous: bool = False) -> Path:
    """Check ``path`` and write ``data`` atomically; a file-system error becomes InputError.

    Nothing is left under ``path`` or beside it when the write fails (disk full, permission,
    missing folder); the previous file, if any, is kept.
    """
    check_output_path(path, where, what)
    try:
        return atomic_write_bytes(path, data, keep_previous=keep_previous)
    except OSError as e:
        reason = e.strerror or e.__class__.__name__
        raise InputError([(where, f"{str(path)!r} could not be written ({reason}); nothing "
                                  "was written there. Free some space or choose another "
                                  "place")]) from None


def parse_json(text, where: str, what: str = "a JSON file"):
    """Parse JSON text (str or UTF-8/UTF-16 bytes); every failure is an InputError naming ``where``.

    Refuses what :func:`json.loads` would crash on (nesting thousands deep, integers of
    thousands of digits) with a message instead of a traceback.
    """
    import json

    if isinstance(text, (bytes, bytearray)):
        from engine.core.errors import decode_upload
        try:
            text = decode_upload(text, len(text), what, "UTF-8 JSON")
        except InputError as e:
            raise InputError([(where, m) for _, m in e.problems]) from None
    try:
        return json.loads(text)
    except json.JSONDecodeError as e:
        raise InputError([(f"{where}: line {e.lineno} column {e.colno}",
                           f"not valid JSON: {e.msg}; check commas, quotes and brackets")]) \
            from None
    except RecursionError:
        raise InputError([(where, f"nested too deeply to be {what}")]) from None
    except ValueError:  # an integer with more digits than Python converts (4300)
        raise InputError([(where, f"holds a number too long to read (thousands of digits); "
                                  f"check that this is {what}")]) from None


def load_json(path, max_bytes: int, what: str = "a JSON file", where: str | None = None):
    """Parsed JSON of the regular file ``path`` of at most ``max_bytes`` [bytes]."""
    where = where or str(path)
    return parse_json(read_bounded(path, max_bytes, what, where), where, what)
