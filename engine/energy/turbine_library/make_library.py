"""Write ``generic_turbines.json``: invented generic demo turbines, 0.5 to 10 kW.

None of these is a real product: rotor sizes, power coefficients, sound power levels, masses
and costs are round, plausible invented numbers, not any maker's. Curves come from
:func:`engine.energy.turbines.parametric_curve` (constant C_P capped at rated power). The script is
deterministic (no random parts); run ``python engine/turbine_library/make_library.py``.
"""
from __future__ import annotations

import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[3]
sys.path.insert(0, str(ROOT))

from engine.energy import turbines  # noqa: E402

OUT = Path(__file__).with_name("generic_turbines.json")

#: id, name, axis, rated W, Cp, cut-in, cut-out, D, H, regulation, Lw dB(A), mass kg, cost, class
SPECS = (
    ("ha-0k6", "Generic 0.6 kW horizontal axis (invented)", "horizontal", 600, 0.30, 3.0, 20.0,
     1.6, 0.0, "stall", 84.0, 25.0, 3500.0, "II"),
    ("ha-1k5", "Generic 1.5 kW horizontal axis (invented)", "horizontal", 1500, 0.30, 3.0, 25.0,
     2.9, 0.0, "stall", 88.0, 60.0, 9000.0, "II"),
    ("ha-3k", "Generic 3 kW horizontal axis (invented)", "horizontal", 3000, 0.31, 3.0, 25.0,
     3.8, 0.0, "stall", 90.0, 140.0, 15000.0, "II"),
    ("ha-5k", "Generic 5 kW horizontal axis (invented)", "horizontal", 5000, 0.32, 3.0, 25.0,
     5.0, 0.0, "pitch", 92.0, 350.0, 25000.0, "II"),
    ("ha-10k", "Generic 10 kW horizontal axis (invented)", "horizontal", 10000, 0.33, 3.0, 25.0,
     7.0, 0.0, "pitch", 95.0, 650.0, 45000.0, "III"),
    ("va-0k5", "Generic 0.5 kW vertical axis (invented)", "vertical", 500, 0.20, 3.5, 20.0,
     1.2, 1.6, "stall", 80.0, 45.0, 4500.0, "III"),
    ("va-1k", "Generic 1 kW vertical axis (invented)", "vertical", 1000, 0.22, 3.5, 20.0,
     1.8, 2.6, "stall", 85.0, 110.0, 8000.0, "III"),
    ("va-3k", "Generic 3 kW vertical axis (invented)", "vertical", 3000, 0.24, 3.5, 22.0,
     3.0, 4.0, "stall", 88.0, 300.0, 19000.0, "III"),
)


def build() -> tuple:
    """The library's turbines, built and validated."""
    out = []
    for (id_, name, axis, rated, cp, cut_in, cut_out, d, h, reg, lw, mass, cost, cls) in SPECS:
        out.append(turbines.parametric_turbine(
            id_, name, axis, rated, cp, cut_in, cut_out, rotor_diameter_m=d, rotor_height_m=h,
            regulation=reg, sound_power_db=lw, mass_kg=mass, installed_cost=cost,
            iec_class=cls))
    return tuple(out)


def document(items) -> dict:
    return {"note": "Invented generic demo turbines; not real products. Curves at 1.225 kg/m³.",
            "turbines": [turbines.turbine_to_dict(t) for t in items]}


if __name__ == "__main__":
    OUT.write_text(json.dumps(document(build()), indent=2, ensure_ascii=False) + "\n",
                   encoding="utf-8")
    print(f"wrote {OUT}")
