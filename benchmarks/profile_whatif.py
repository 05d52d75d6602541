"""Where a what-if's time goes: cProfile of the chain and of the Results page's rerun.

1. ``pipeline.evaluate`` of the demo site with one position's mast changed (an energy
   what-if), and ``pipeline.priced`` with the import price changed on a kept energy stage
   (a money what-if): the functions that take the most time, cumulative and own.
2. The Results page in ``streamlit.testing.v1.AppTest`` after one change of each kind (the
   caches warm, each new value not seen before): the same listing of the script's thread.

Not a benchmark (no target; cProfile slows calls down): it says where to look. The speed
targets are in ``bench_dashboard.py``.

Run: ``python benchmarks/profile_whatif.py [--top N] [--chain-only]``.
"""
from __future__ import annotations

import cProfile
import dataclasses
import io
import pstats
import sys
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

DEMO = ROOT / "demo_sites" / "larkspur_yard.json"
POSITION = "mill-tower-gap"


def _listing(prof: cProfile.Profile, top: int) -> str:
    out = io.StringIO()
    st = pstats.Stats(prof, stream=out)
    st.sort_stats("cumulative").print_stats(top)
    st.sort_stats("tottime").print_stats(top)
    # the project's own functions, cumulative: which step of the chain or the page
    st.sort_stats("cumulative").print_stats(r"/(engine|dashboard)/", top)
    return out.getvalue()


def _with_mast(a, mast_m: float):
    pos = list(a.positions)
    i = [p.id for p in pos].index(POSITION)
    pos[i] = dataclasses.replace(pos[i], mast_height_m=mast_m)
    return dataclasses.replace(a, positions=tuple(pos))


def chain(top: int) -> None:
    from engine.chain import pipeline
    from engine.io import sitefile
    a = sitefile.load(DEMO)
    pipeline.evaluate(a)  # imports and the sun path once, as a running server has them
    stage = pipeline.energy_stage(a)
    for name, fn in (
            ("mast what-if: pipeline.evaluate (mast 8.7 m)",
             lambda: pipeline.evaluate(_with_mast(a, 8.7))),
            ("price what-if: pipeline.priced on a kept stage", lambda: pipeline.priced(
                dataclasses.replace(a, economics=dataclasses.replace(
                    a.economics, tariff_per_kwh=0.31)), stage))):
        t0 = time.perf_counter()
        fn()
        plain_ms = (time.perf_counter() - t0) * 1000
        prof = cProfile.Profile()
        prof.enable()
        fn()
        prof.disable()
        print(f"=== {name}: {plain_ms:.0f} ms without the profiler")
        print(_listing(prof, top))


def _profiled_run(at, prof: cProfile.Profile) -> float:
    """``at.run()`` with ``prof`` on in the script's thread (AppTest runs it in its own)."""
    threading.setprofile(lambda *args: prof.enable())
    try:
        t0 = time.perf_counter()
        at.run()
        return (time.perf_counter() - t0) * 1000
    finally:
        threading.setprofile(None)
        prof.disable()


def dashboard(top: int) -> None:
    from streamlit.testing.v1 import AppTest
    at = AppTest.from_file(str(ROOT / "dashboard" / "app.py"), default_timeout=120)
    at.run()
    at.switch_page("steps/step_results.py").run()
    at.selectbox(key="whatif_position_w").set_value(POSITION).run()
    mast = next(w.key for w in at.number_input
                if w.key and "mast_height_m|length|" in w.key and w.key.endswith("|whatif"))
    price = "w|economics.tariff_per_kwh|plain|-|whatif"
    for name, key, values in (("price what-if", price, (0.27, 0.29)),
                              ("mast what-if", mast, (8.3, 8.6))):
        at.number_input(key=key).set_value(values[0]).run()  # warm
        at.number_input(key=key).set_value(values[1])
        prof = cProfile.Profile()
        ms = _profiled_run(at, prof)
        assert not at.exception, at.exception
        print(f"=== Results page, {name} ({key}): {ms:.0f} ms with the profiler")
        print(_listing(prof, top))


def main(argv) -> int:
    top = int(argv[argv.index("--top") + 1]) if "--top" in argv else 25
    chain(top)
    if "--chain-only" not in argv:
        dashboard(top)
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
