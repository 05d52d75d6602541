"""Chart drawing in a child process, so that a crash of the renderer is a message, not the end.

vl-convert is native code: some inputs make it abort the whole process (a control character
in a label ends in a Rust panic that cannot unwind, SIGABRT), which in the dashboard would stop
the server and every open session. Here the drawing runs in one long-lived child process
(``python -m engine.report.render``) spoken to over pipes, one JSON line per request and per
answer. When the child dies or stops answering within :data:`TIMEOUT_S`, the request fails
with :class:`ChartError` carrying the reason, and the next request starts a new child.

The text of every spec is also cleaned before it is sent (:func:`engine.io.safe_files.clean_text`),
so the known crash does not happen in the first place; the child process is the second wall.
"""
from __future__ import annotations

import atexit
import base64
import json
import os
import select
import subprocess
import sys
import threading

#: Longest wait for one chart [s] before the renderer is stopped and the chart given up.
TIMEOUT_S = 60.0


class ChartError(RuntimeError):
    """A chart could not be drawn; the message says why (shown in place of the chart)."""


def clean_spec(obj):
    """A copy of a Vega-Lite spec with every string cleaned of characters that crash renderers."""
    from engine.io.safe_files import clean_text
    if isinstance(obj, str):
        return clean_text(obj)
    if isinstance(obj, dict):
        return {clean_text(str(k)): clean_spec(v) for k, v in obj.items()}
    if isinstance(obj, list):
        return [clean_spec(v) for v in obj]
    return obj


class _Renderer:
    """The child process and the lock that keeps one request on the pipes at a time."""

    def __init__(self):
        self.lock = threading.Lock()
        self.proc = None

    def _start(self):
        env = dict(os.environ)
        # The folder holding the ``engine`` package (this file is engine/report/render.py).
        root = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
        env["PYTHONPATH"] = root + (os.pathsep + env["PYTHONPATH"] if env.get("PYTHONPATH")
                                    else "")
        self.proc = subprocess.Popen([sys.executable, "-m", "engine.report.render"],
                                     stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                                     stderr=subprocess.DEVNULL, env=env, cwd=root)

    def _stop(self):
        proc, self.proc = self.proc, None
        if proc is None:
            return
        try:
            proc.kill()
        except OSError:
            pass
        try:
            proc.wait(timeout=5)
        except subprocess.TimeoutExpired:
            pass
        for stream in (proc.stdin, proc.stdout):
            try:
                stream.close()
            except OSError:
                pass

    def _read_line(self, timeout_s: float) -> bytes:
        out = self.proc.stdout
        ready, _, _ = select.select([out], [], [], timeout_s)
        if not ready:
            raise TimeoutError
        return out.readline()

    def request(self, kind: str, spec: dict, scale: float = 1.0, clean: bool = True):
        spec = clean_spec(spec) if clean else spec
        line = (json.dumps({"kind": kind, "spec": spec, "scale": scale},
                           ensure_ascii=True) + "\n").encode("ascii")
        with self.lock:
            if self.proc is None or self.proc.poll() is not None:
                self._start()
            try:
                self.proc.stdin.write(line)
                self.proc.stdin.flush()
                answer = self._read_line(TIMEOUT_S)
            except TimeoutError:
                self._stop()
                raise ChartError(f"the chart renderer did not finish within {TIMEOUT_S:g} s")\
                    from None
            except OSError:
                answer = b""
            if not answer.endswith(b"\n"):
                try:
                    code = self.proc.wait(timeout=5)
                except subprocess.TimeoutExpired:
                    code = None
                self._stop()
                why = ("" if code is None else f" (signal {-code})" if code < 0
                       else f" (exit code {code})")
                raise ChartError(f"the chart renderer stopped on this chart{why}")
        reply = json.loads(answer)
        if not reply.get("ok"):
            raise ChartError(f"the chart renderer refused this chart: {reply.get('error', '')}")
        return reply["data"]


_RENDERER = _Renderer()
# Stop the child when the program ends, rather than leave it to the interpreter's shutdown.
atexit.register(_RENDERER._stop)


def to_svg(spec: dict, clean: bool = True) -> str:
    """SVG text of a Vega-Lite spec, drawn in the child process; ChartError on failure.

    ``clean=False`` sends the spec's text as it is (to test the child process wall).
    """
    return _RENDERER.request("svg", spec, clean=clean)


def to_png(spec: dict, scale: float = 1.0) -> bytes:
    """PNG bytes of a Vega-Lite spec at ``scale``, drawn in the child process."""
    return base64.b64decode(_RENDERER.request("png", spec, scale))


def _serve() -> None:
    """The child's loop: one JSON request per line on stdin, one JSON answer per line."""
    import vl_convert as vlc
    out = sys.stdout.buffer
    for line in sys.stdin.buffer:
        try:
            req = json.loads(line)
            if req["kind"] == "svg":
                data = vlc.vegalite_to_svg(req["spec"])
            else:
                data = base64.b64encode(vlc.vegalite_to_png(
                    req["spec"], scale=float(req.get("scale", 1.0)))).decode("ascii")
            reply = {"ok": True, "data": data}
        except Exception as e:  # noqa: BLE001 - every refusal is told to the parent
            reply = {"ok": False, "error": f"{e.__class__.__name__}: {str(e)[:300]}"}
        out.write((json.dumps(reply, ensure_ascii=True) + "\n").encode("ascii"))
        out.flush()


if __name__ == "__main__":
    _serve()
