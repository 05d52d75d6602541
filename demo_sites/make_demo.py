"""Generate the built-in demo site (an invented estate) from a fixed seed.

All of it is invented: the estate, its buildings, the reference station's climate and the
turbines. Run ``python demo_sites/make_demo.py`` to rebuild ``demo_sites/larkspur_yard.json``.
"""
from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from engine.core import model  # noqa: E402
from engine.io import sitefile  # noqa: E402
from engine.chain import rules as rule_set  # noqa: E402

SEED = 20261201
OUT = Path(__file__).with_name("larkspur_yard.json")
RULES = Path(__file__).with_name("rules") / "example_borough.json"


def invented_curve(rated_w, area_m2, cp, cut_in, cut_out, step=1.0):
    """A generic power curve: constant Cp between cut-in and rated power, capped at rated."""
    v = np.arange(0.0, cut_out + 1e-9, step)
    p = np.minimum(0.5 * model.RHO_STANDARD * area_m2 * cp * v ** 3, rated_w)
    p[v < cut_in] = 0.0
    rated_speed = (rated_w / (0.5 * model.RHO_STANDARD * area_m2 * cp)) ** (1 / 3)
    return tuple(float(x) for x in v), tuple(round(float(x), 1) for x in p), round(rated_speed, 2)


def turbine(id_, name, axis, rated_w, cp, cut_in, cut_out, **kw):
    if axis == "vertical":
        area = kw["rotor_diameter_m"] * kw["rotor_height_m"]
    else:
        area = math.pi * kw["rotor_diameter_m"] ** 2 / 4
    v, p, vr = invented_curve(rated_w, area, cp, cut_in, cut_out)
    return model.Turbine(id=id_, name=name, axis=axis, rated_power_w=rated_w, curve_speed_ms=v,
                         curve_power_w=p, cut_in_ms=cut_in, rated_speed_ms=vr, cut_out_ms=cut_out,
                         **kw)


def station_climate(rng):
    """An invented 12-sector climate for an open-terrain station at 10 m, prevailing south-west."""
    deg = np.arange(12) * 30.0
    f = 1.0 + 0.9 * np.cos(np.radians(deg - 225.0)) + 0.15 * rng.standard_normal(12)
    f = np.clip(f, 0.2, None)
    f = f / f.sum()
    c = 5.6 + 1.4 * np.cos(np.radians(deg - 240.0)) + 0.2 * rng.standard_normal(12)
    k = 1.9 + 0.2 * np.cos(np.radians(deg - 225.0)) + 0.05 * rng.standard_normal(12)
    f = np.round(f, 4)
    f[np.argmax(f)] += round(1.0 - f.sum(), 4)
    return model.WindClimate(height_m=10.0, roughness_m=0.03, frequency=tuple(float(x) for x in f),
                             weibull_k=tuple(round(float(x), 3) for x in k),
                             weibull_c_ms=tuple(round(float(x), 3) for x in c),
                             source="table", label="Invented reference station, open terrain, 10 m")


def build() -> model.Assessment:
    rng = np.random.default_rng(SEED)
    site = model.Site(name="Larkspur Yard (invented demo estate)", altitude_m=45.0,
                      air_temperature_c=10.0, terrain_roughness_m=0.5, displacement_m=4.0,
                      plan_area_fraction=0.3, frontal_area_fraction=0.15,
                      mean_building_height_m=9.0,
                      notes="Invented mixed-use estate; no real place.",
                      origin_lat_deg=52.2, origin_lon_deg=-1.5)
    buildings = (
        model.Building("mill", 0.0, 0.0, 40.0, 14.0, 13.0, orientation_deg=90.0, parapet_height_m=0.6),
        model.Building("tower", 38.0, 0.0, 20.0, 20.0, 25.0, orientation_deg=0.0, parapet_height_m=1.0),
        model.Building("terrace", 0.0, -40.0, 30.0, 10.0, 7.5, orientation_deg=90.0,
                       roof_type="pitched", roof_pitch_deg=35.0),
    )
    positions = (
        model.Position("mill-centre", "roof", 0.0, 0.0, 6.0, building_id="mill"),
        model.Position("mill-west-edge", "roof", -17.0, 0.0, 4.0, building_id="mill"),
        model.Position("tower-centre", "roof", 38.0, 0.0, 9.0, building_id="tower"),
        model.Position("tower-sw-corner", "roof", 30.5, -7.5, 3.0, building_id="tower"),
        model.Position("terrace-ridge", "roof", 0.0, -40.0, 3.0, building_id="terrace"),
        model.Position("mill-tower-gap", "gap", 24.0, 0.0, 8.0, gap_buildings=("mill", "tower")),
        model.Position("yard-mast", "mast", -45.0, -30.0, 15.0),
    )
    turbines = (
        turbine("ha-1k5", "Generic 1.5 kW horizontal axis (invented)", "horizontal", 1500.0, 0.30,
                3.0, 25.0, rotor_diameter_m=2.9, regulation="stall", thrust_coefficient=0.8,
                sound_power_db=88.0, mass_kg=60.0, installed_cost=9000.0, iec_class="II"),
        turbine("ha-5k", "Generic 5 kW horizontal axis (invented)", "horizontal", 5000.0, 0.32,
                3.0, 25.0, rotor_diameter_m=5.0, regulation="pitch", thrust_coefficient=0.75,
                sound_power_db=92.0, mass_kg=350.0, installed_cost=25000.0, iec_class="II"),
        turbine("va-1k", "Generic 1 kW vertical axis (invented)", "vertical", 1000.0, 0.22,
                3.5, 20.0, rotor_diameter_m=1.8, rotor_height_m=2.6, regulation="stall",
                thrust_coefficient=0.7, sound_power_db=85.0, mass_kg=110.0,
                installed_cost=8000.0, iec_class="III"),
    )
    receptors = (
        model.Receptor("neighbour-window", -35.0, 60.0, 6.0, 40.0, facing_deg=150.0),
        model.Receptor("garden", 60.0, -35.0, 1.5, 45.0),
    )
    climate = station_climate(rng)
    _, _, rules = rule_set.load_rule_set(RULES)
    consent = model.ConsentSettings(rule_set_name="Invented example borough (demo only)",
                                    rules=rules, boundary_x_m=(-70.0, 80.0, 80.0, -70.0),
                                    boundary_y_m=(-70.0, -70.0, 80.0, 80.0))
    # Invented handheld readings on the mill roof beside the station's, wind from the south-west.
    ref = np.round(3.5 + 3.0 * rng.random(8), 1)
    at_pos = np.round(np.clip(0.8 * ref + 0.25 * rng.standard_normal(8), 0.0, None), 1)
    spots = (model.SpotReading("mill-centre", 240.0, tuple(float(v) for v in at_pos),
                               tuple(float(v) for v in ref), 10.0,
                               note="Invented 1-minute means, handheld at hub height"),)
    return model.Assessment(site=site, climate=climate, buildings=buildings,
                            positions=positions, turbines=turbines, receptors=receptors,
                            spot_readings=spots, consent=consent)


if __name__ == "__main__":
    sitefile.save(build(), OUT, keep_previous=False)
    print(f"wrote {OUT}")
