"""Safe input and output (engine.io.safe_files): bounded reads, special files, atomic checked writes,
text-field rules."""
import os
import resource
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from engine.io import safe_files as safeio
from engine.core.errors import InputError

ROOT = Path(__file__).resolve().parents[2]


def _message(fn) -> str:
    with pytest.raises(InputError) as exc:
        fn()
    return " ".join(f"{w}: {m}" for w, m in exc.value.problems)


# --- bounded reading -----------------------------------------------------------------------------

def test_regular_file_read_whole(tmp_path):
    p = tmp_path / "a.json"
    p.write_bytes(b"x" * 1000)
    assert safeio.read_bounded(p, 1000) == b"x" * 1000


def test_limit_checked_on_bytes_read_not_reported_size(tmp_path):
    """One byte over the limit is refused, naming the limit in MiB."""
    p = tmp_path / "a.json"
    p.write_bytes(b"x" * 1001)
    msg = _message(lambda: safeio.read_bounded(p, 1000, "a site file"))
    assert "limit" in msg and "MiB" in msg


@pytest.mark.parametrize("path, kind", [("/dev/zero", "device"), ("/dev/null", "device"),
                                        ("/tmp", "folder")])
def test_special_files_refused_before_reading(path, kind):
    """/dev/zero reports size 0 and never ends; it is refused at once as a device."""
    t0 = time.monotonic()
    msg = _message(lambda: safeio.read_bounded(path, 1000, "a site file"))
    assert kind in msg and path in msg and time.monotonic() - t0 < 2.0


def test_fifo_refused_without_waiting_for_a_writer(tmp_path):
    fifo = tmp_path / "pipe.json"
    os.mkfifo(fifo)
    t0 = time.monotonic()
    msg = _message(lambda: safeio.read_bounded(fifo, 1000))
    assert "pipe" in msg and time.monotonic() - t0 < 2.0


def test_missing_file_named(tmp_path):
    msg = _message(lambda: safeio.read_bounded(tmp_path / "nope.json", 10, "a site file"))
    assert "nope.json" in msg and "no such file" in msg


def test_json_nested_thousands_deep_is_a_message():
    msg = _message(lambda: safeio.parse_json("[" * 100000 + "]" * 100000, "--climate"))
    assert "nested too deeply" in msg and "--climate" in msg


# --- output paths and atomic writes ---------------------------------------------------------------

def test_output_path_checks(tmp_path):
    f = tmp_path / "file.txt"
    f.write_text("x")
    assert "does not exist" in _message(
        lambda: safeio.check_output_path(tmp_path / "no" / "x.html", "--out"))
    assert "not a folder" in _message(lambda: safeio.check_output_path(f / "x.html", "--out"))
    assert "a folder" in _message(lambda: safeio.check_output_path(tmp_path, "--out"))
    assert "device" in _message(lambda: safeio.check_output_path("/dev/full", "--out"))
    assert safeio.check_output_path(tmp_path / "new.html", "--out") == tmp_path / "new.html"


def test_write_output_over_a_device_refused():
    """Writing as root over /dev/full must not replace the device node."""
    msg = _message(lambda: safeio.write_output("/dev/full", b"x", "--out"))
    assert "device" in msg and os.path.exists("/dev/full")
    assert not any(n.startswith(".full.") for n in os.listdir("/dev"))


def _run_with_file_size_limit(code: str, limit_bytes: int) -> subprocess.CompletedProcess:
    """Run ``code`` in a child whose files may not grow past ``limit_bytes`` (a full disk)."""
    def limit():
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)  # the write fails with EFBIG instead
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit_bytes, limit_bytes))
    return subprocess.run([sys.executable, "-c", textwrap.dedent(code)], cwd=ROOT,
                          preexec_fn=limit, capture_output=True, text=True, timeout=60)


def test_disk_full_leaves_old_file_and_no_temporary(tmp_path):
    """A write that fails for lack of space keeps the previous file and leaves no litter."""
    target = tmp_path / "summary.html"
    target.write_bytes(b"old")
    r = _run_with_file_size_limit(f"""
        from engine.io import safe_files as safeio
        from engine.core.errors import InputError
        try:
            safeio.write_output({str(target)!r}, b"n" * 100_000, "--out")
        except InputError as e:
            print(e.problems[0][1])
        """, 10_000)
    assert "could not be written" in r.stdout, r.stderr
    assert target.read_bytes() == b"old"
    assert sorted(os.listdir(tmp_path)) == ["summary.html"]


def test_concurrent_writers_leave_no_temporary_files(tmp_path):
    """Three processes saving one file with .bak 1000 times each leave only the file and .bak.

    rename(2) between two links to one file does nothing (POSIX), which used to leave a
    temporary .bak link per save (about 900 of them in this test before the fix).
    """
    target = tmp_path / "working-site.json"
    code = f"""
        from engine.io import safe_files as safeio
        for i in range(1000):
            safeio.atomic_write_bytes({str(target)!r}, b"%d" % i * 50, keep_previous=True)
        """
    procs = [subprocess.Popen([sys.executable, "-c", textwrap.dedent(code)], cwd=ROOT)
             for _ in range(3)]
    assert [p.wait(timeout=120) for p in procs] == [0, 0, 0]
    assert sorted(os.listdir(tmp_path)) == ["working-site.json", "working-site.json.bak"]


# --- text fields ----------------------------------------------------------------------------------

@pytest.mark.parametrize("text, what", [
    ("roof\x00A", "control character (U+0000)"),
    ("roof\x1fA", "control character (U+001F)"),
    ("roof\tA", "control character (U+0009)"),
    ("roof\x85A", "control character (U+0085)"),
    ("roof\ud800A", "lone surrogate (U+D800)"),
    ("roof\ufffeA", "non-character (U+FFFE)"),
    ("roof\ufdd0A", "non-character (U+FDD0)"),
    ("roof\U0001ffffA", "non-character (U+1FFFF)"),
])
def test_one_line_text_rules(text, what):
    """Unicode 15 §23.7 lists the 66 non-characters; C0/C1 controls per ISO/IEC 6429."""
    msg = safeio.text_problem(text)
    assert msg is not None and what in msg and "at character 5" in msg


def test_notes_keep_line_breaks_but_not_other_controls():
    assert safeio.text_problem("line one\nline two\r\n\tindented", multiline=True) is None
    assert "U+0007" in safeio.text_problem("bell\x07", multiline=True)


def test_length_limit_stated():
    assert safeio.text_problem("a" * safeio.MAX_NAME_CHARS) is None
    msg = safeio.text_problem("a" * 100_000)
    assert f"at most {safeio.MAX_NAME_CHARS} characters" in msg and "100000" in msg


def test_ordinary_unicode_accepted():
    assert safeio.text_problem("Dachfläche Nord – 北 🌬") is None


def test_clean_text_replaces_what_is_refused():
    assert safeio.clean_text("a\x01b\ud800c\ufffed") == "a\ufffdb\ufffdc\ufffdd"
