"""Turbines: the library of generic demo turbines, power-curve import and a parametric curve.

Every turbine is an :class:`engine.core.model.Turbine`, which already checks its curve (rising
speeds, no negative power, Betz limit for its swept area). This module adds

* :func:`actuator_disc` and :func:`thrust_coefficient_from_cp` (momentum theory);
* :func:`parametric_curve` / :func:`parametric_turbine` for quick what-ifs;
* :func:`read_power_curve_csv`, which reads a user's table (speed, power in W or kW) and
  reports every problem at once, row by row;
* :func:`load_library`, the invented generic turbines in ``engine/turbine_library/``.

References
----------
Burton, T., Jenkins, N., Sharpe, D. and Bossanyi, E. (2011), Wind Energy Handbook, 2nd ed.,
Wiley, §3.2 (actuator disc: C_P = 4a(1-a)², C_T = 4a(1-a), Betz limit 16/27 at a = 1/3).
"""
from __future__ import annotations

import csv
import dataclasses
import io
import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from engine.core.errors import InputError, Problems, decode_upload
from engine.core.model import BETZ_CP, RHO_STANDARD, Turbine

LIBRARY_DIR = Path(__file__).with_name("turbine_library")
LIBRARY_FILE = LIBRARY_DIR / "generic_turbines.json"
#: Most problems listed from one CSV file; the rest are counted.
MAX_LISTED_PROBLEMS = 25
#: Largest power-curve file accepted [bytes]; a curve is a few hundred bytes.
MAX_CURVE_FILE_BYTES = 1024 * 1024  # 1 MiB
#: With no unit in the header and unit="auto", a largest value up to this is read as kW.
AUTO_KW_BELOW = 50.0


def actuator_disc(axial_induction):
    """Power and thrust coefficients of an ideal actuator disc, (C_P, C_T) [-].

    Parameters
    ----------
    axial_induction : array, axial induction factor a [-], 0 <= a <= 1/2 for the momentum theory

    Notes
    -----
    C_P = 4a(1-a)², C_T = 4a(1-a). At a = 1/3: C_P = 16/27 (Betz limit), C_T = 8/9.

    References
    ----------
    Burton et al. (2011), Wind Energy Handbook, §3.2.
    """
    a = np.asarray(axial_induction, float)
    return 4.0 * a * (1.0 - a) ** 2, 4.0 * a * (1.0 - a)


def thrust_coefficient_from_cp(power_coefficient):
    """Thrust coefficient of the actuator disc that yields a given power coefficient [-].

    Parameters
    ----------
    power_coefficient : array, C_P in 0..16/27 [-]

    Notes
    -----
    Solves C_P = 4a(1-a)² for the lightly loaded root 0 <= a <= 1/3 (C_P rises monotonically
    there) by bisection, then C_T = 4a(1-a). An electrical C_P understates the aerodynamic one
    (drive-train losses), so this C_T is a lower estimate.
    """
    cp = np.clip(np.asarray(power_coefficient, float), 0.0, BETZ_CP)
    lo, hi = np.zeros_like(cp), np.full_like(cp, 1.0 / 3.0)
    for _ in range(60):  # interval halves each time: 2^-60 of 1/3
        mid = 0.5 * (lo + hi)
        below = actuator_disc(mid)[0] < cp
        lo, hi = np.where(below, mid, lo), np.where(below, hi, mid)
    return actuator_disc(0.5 * (lo + hi))[1]


def parametric_curve(swept_area_m2, power_coefficient, rated_power_w, cut_in_ms, cut_out_ms,
                     step_ms=0.5, air_density_kgm3=RHO_STANDARD):
    """A generic curve: constant C_P from cut-in, capped at rated power.

    Parameters
    ----------
    swept_area_m2 : rotor swept area A [m²]
    power_coefficient : electrical C_P, at most 16/27 [-]
    rated_power_w : rated power [W]
    cut_in_ms, cut_out_ms : cut-in and cut-out speeds [m/s]
    step_ms : table step [m/s]
    air_density_kgm3 : density the curve is stated at [kg/m³]

    Returns
    -------
    speeds_ms, power_w : tuples, the table from 0 to cut-out
    rated_speed_ms : speed at which the cubic part reaches rated power [m/s]

    Notes
    -----
    P(V) = min(½ ρ A C_P V³, P_rated) for cut-in <= V <= cut-out, 0 below cut-in.
    """
    p = Problems()
    if not 0 < power_coefficient <= BETZ_CP:
        p.add("power_coefficient", f"must be > 0 and <= 16/27 = 0.593 (Betz limit), got "
                                   f"{power_coefficient:g}")
    if swept_area_m2 <= 0:
        p.add("swept_area_m2", f"must be > 0 m², got {swept_area_m2:g} m²")
    if rated_power_w <= 0:
        p.add("rated_power_w", f"must be > 0 W, got {rated_power_w:g} W")
    if not 0 <= cut_in_ms < cut_out_ms <= 50:
        p.add("cut_in_ms", f"need 0 <= cut-in < cut-out <= 50 m/s, got {cut_in_ms:g} and "
                           f"{cut_out_ms:g} m/s")
    if step_ms <= 0:
        p.add("step_ms", f"must be > 0 m/s, got {step_ms:g} m/s")
    p.raise_if_any()
    n = int(math.floor(cut_out_ms / step_ms + 1e-9))
    v = np.round(np.arange(n + 1) * step_ms, 6)
    if v[-1] < cut_out_ms - 1e-9:
        v = np.append(v, cut_out_ms)
    k = 0.5 * air_density_kgm3 * swept_area_m2 * power_coefficient
    pw = np.minimum(k * v ** 3, rated_power_w)
    pw[v < cut_in_ms] = 0.0
    rated_speed = (rated_power_w / k) ** (1.0 / 3.0)
    return (tuple(float(x) for x in v), tuple(round(float(x), 1) for x in pw),
            round(float(rated_speed), 2))


def parametric_turbine(id, name, axis, rated_power_w, power_coefficient, cut_in_ms, cut_out_ms,
                       rotor_diameter_m, rotor_height_m=0.0, step_ms=0.5, **fields) -> Turbine:
    """A :class:`~engine.core.model.Turbine` with a :func:`parametric_curve` for its rotor.

    The swept area is π D²/4 (horizontal axis) or D × H (vertical axis); the rated speed is
    where the cubic part meets rated power, clamped inside cut-in..cut-out. Other Turbine
    fields pass through ``fields``; ``thrust_coefficient`` defaults to 8/9 (the
    actuator-disc value at the Betz optimum, the cautious choice for loads).
    """
    if axis == "vertical":
        area = float(rotor_diameter_m) * float(rotor_height_m)
    else:
        area = math.pi * float(rotor_diameter_m) ** 2 / 4.0
    v, pw, vr = parametric_curve(area, power_coefficient, rated_power_w, cut_in_ms, cut_out_ms,
                                 step_ms)
    vr = min(max(vr, cut_in_ms + 0.1), cut_out_ms - 0.1)
    fields.setdefault("thrust_coefficient", round(8.0 / 9.0, 4))
    return Turbine(id=id, name=name, axis=axis, rated_power_w=float(rated_power_w),
                   curve_speed_ms=v, curve_power_w=pw, cut_in_ms=float(cut_in_ms),
                   rated_speed_ms=float(vr), cut_out_ms=float(cut_out_ms),
                   rotor_diameter_m=float(rotor_diameter_m),
                   rotor_height_m=float(rotor_height_m), **fields)


def power_coefficient(speed_ms, power_w, swept_area_m2, air_density_kgm3=RHO_STANDARD):
    """C_P = P / (½ ρ A V³) for each curve point; 0 where V = 0 [-]."""
    v = np.asarray(speed_ms, float)
    pw = np.asarray(power_w, float)
    wind = 0.5 * air_density_kgm3 * float(swept_area_m2) * v ** 3
    return np.divide(pw, wind, out=np.zeros_like(pw), where=wind > 0)


def check_power_curve(speed_ms, power_w, swept_area_m2=0.0, rows=None) -> Problems:
    """Every problem of a power-curve table, row by row (nothing raised).

    Parameters
    ----------
    speed_ms, power_w : the table [m/s], [W]
    swept_area_m2 : swept area for the Betz check [m²]; 0 skips it
    rows : labels for each point (``"line 4"``); default ``"row i"`` counting from 1

    Notes
    -----
    Checks: at least 2 points; speeds within 0..50 m/s and strictly rising; power not
    negative; C_P = P / (½ ρ0 A V³) <= 16/27 (Betz, ρ0 = 1.225 kg/m³ as curves are stated).
    """
    p = Problems()
    v = np.asarray(speed_ms, float)
    pw = np.asarray(power_w, float)
    labels = list(rows) if rows is not None else [f"row {i + 1}" for i in range(len(v))]
    if len(v) < 2:
        p.add("power curve", f"needs at least 2 points (speed, power), got {len(v)}")
        return p
    for i in np.flatnonzero((v < 0) | (v > 50)):
        p.add(labels[i], f"speed must lie within 0..50 m/s, got {v[i]:g} m/s")
    for i in np.flatnonzero(np.diff(v) <= 0) + 1:
        p.add(labels[i], f"speeds must rise strictly: {v[i]:g} m/s follows {v[i - 1]:g} m/s; "
                         "sort the table and remove repeated speeds")
    for i in np.flatnonzero(pw < 0):
        p.add(labels[i], f"power must not be negative, got {pw[i]:g} W; a curve that shows "
                         "standby consumption should list 0 W")
    if swept_area_m2 > 0:
        cp = power_coefficient(v, pw, swept_area_m2)
        for i in np.flatnonzero(cp > BETZ_CP + 1e-9):
            p.add(labels[i], f"{pw[i]:g} W at {v[i]:g} m/s means Cp = {cp[i]:.2f}, above the "
                             f"Betz limit 16/27 = 0.593 for {swept_area_m2:.2f} m² swept area; "
                             "check the unit (W or kW) and the rotor size")
    return p


@dataclass(frozen=True)
class PowerCurve:
    """A power-curve table read from a file, in SI units."""

    speed_ms: tuple
    power_w: tuple
    #: Unit the power column was read in: "W" or "kW".
    unit: str
    #: How the unit was decided, for the user to confirm.
    unit_note: str


_NUMBER = re.compile(r"^[+-]?(\d+([.,]\d*)?|[.,]\d+)([eE][+-]?\d+)?$")


def _to_float(text: str):
    t = text.strip().replace("\u00a0", "").replace(" ", "")
    if not _NUMBER.match(t):
        return None
    return float(t.replace(",", "."))


def _header_unit(header_cell: str):
    h = header_cell.strip().lower()
    if re.search(r"\bkw\b|\(kw\)|\[kw\]|_kw\b|kilowatt", h):
        return "kW"
    if re.search(r"\bw\b|\(w\)|\[w\]|_w\b|watt", h):
        return "W"
    return None


def read_power_curve_csv(data, unit: str = "auto", swept_area_m2: float = 0.0) -> PowerCurve:
    """Read a power-curve table (speed [m/s], power [W or kW]) from CSV text or bytes.

    Parameters
    ----------
    data : str or bytes; two columns, comma, semicolon or tab separated, optional header row
        (a header like ``speed_ms,power_kw`` declares the unit); decimal commas are accepted
        with semicolon or tab separators
    unit : ``"W"``, ``"kW"`` or ``"auto"`` (the header's unit; else kW when the largest value
        is at most 50, else W; the choice is reported in ``unit_note``)
    swept_area_m2 : swept area for the Betz check [m²]; 0 skips it

    Raises
    ------
    InputError
        listing every problem with its line number: unreadable cells, too few columns,
        speeds not rising, negative power, Cp above 16/27, a declared unit that contradicts
        the header.
    """
    p = Problems()
    if isinstance(data, (bytes, bytearray)):
        data = decode_upload(data, MAX_CURVE_FILE_BYTES, "a power-curve table", "UTF-8 CSV")
    if unit not in ("W", "kW", "auto"):
        raise InputError([("unit", f"must be 'W', 'kW' or 'auto', got {unit!r}")])
    lines = [(n + 1, ln) for n, ln in enumerate(str(data).splitlines()) if ln.strip()
             and not ln.lstrip().startswith("#")]
    if not lines:
        raise InputError([("file", "is empty; give two columns: speed [m/s], power [W or kW]")])
    sample = "\n".join(ln for _, ln in lines[:5])
    delim = ";" if sample.count(";") >= len(lines[:5]) else (
        "\t" if "\t" in sample else ",")
    rows = list(csv.reader(io.StringIO("\n".join(ln for _, ln in lines)), delimiter=delim))
    header_unit, start = None, 0
    first = rows[0]
    if len(first) >= 2 and (_to_float(first[0]) is None or _to_float(first[1]) is None):
        # Speed is always m/s; only the power column's header may declare a unit.
        header_unit, start = _header_unit(first[1]), 1
    if unit != "auto" and header_unit and unit != header_unit:
        p.add(f"line {lines[0][0]}", f"the header says power is in {header_unit} but unit="
                                      f"{unit!r} was chosen; make them agree")
    speeds, powers, labels = [], [], []
    for (lineno, _), row in zip(lines[start:], rows[start:]):
        cells = [c for c in row if c.strip()]
        if len(cells) < 2:
            p.add(f"line {lineno}", f"needs two values (speed, power), got {len(cells)}")
            continue
        v, w = _to_float(cells[0]), _to_float(cells[1])
        if v is None or w is None:
            bad = cells[0] if v is None else cells[1]
            p.add(f"line {lineno}", f"{bad.strip()!r} is not a number")
            continue
        if not (math.isfinite(v) and math.isfinite(w)):
            p.add(f"line {lineno}", "values must be finite numbers")
            continue
        speeds.append(v)
        powers.append(w)
        labels.append(f"line {lineno}")
    if unit != "auto":
        chosen, note = unit, f"power read in {unit} as chosen"
    elif header_unit:
        chosen, note = header_unit, f"power read in {header_unit}, as the header says"
    else:
        peak = max(powers) if powers else 0.0
        chosen = "kW" if peak <= AUTO_KW_BELOW else "W"
        note = (f"no unit in the header; the largest power value is {peak:g}, so it was read "
                f"in {chosen}; choose the unit explicitly if that is wrong")
    scale = 1000.0 if chosen == "kW" else 1.0
    power_w = [w * scale for w in powers]
    p.extend(check_power_curve(speeds, power_w, swept_area_m2, labels))
    if p:
        items = p.items
        if len(items) > MAX_LISTED_PROBLEMS:
            extra = len(items) - MAX_LISTED_PROBLEMS
            items = items[:MAX_LISTED_PROBLEMS] + [("file", f"and {extra} more problem(s)")]
        raise InputError(items)
    return PowerCurve(speed_ms=tuple(speeds), power_w=tuple(power_w), unit=chosen, unit_note=note)


def with_power_curve(turbine: Turbine, curve: PowerCurve, **changes) -> Turbine:
    """A copy of ``turbine`` using an imported curve; rated power defaults to the curve's peak.

    Cut-in and cut-out default to the first and last speeds with power above 0; the rated
    speed to the first speed reaching 99.5 % of the peak. The Turbine checks run again.
    """
    v = np.asarray(curve.speed_ms, float)
    pw = np.asarray(curve.power_w, float)
    peak = float(pw.max())
    on = np.flatnonzero(pw > 0)
    if peak <= 0 or len(on) == 0:
        raise InputError([("power curve", "has no point with power above 0 W")])
    rated_idx = int(np.flatnonzero(pw >= 0.995 * peak)[0])
    fields = dict(curve_speed_ms=tuple(curve.speed_ms), curve_power_w=tuple(curve.power_w),
                  rated_power_w=peak, cut_in_ms=float(v[max(on[0] - 1, 0)] if on[0] > 0
                                                      else v[0]),
                  rated_speed_ms=float(v[rated_idx]), cut_out_ms=float(v[on[-1]]))
    fields.update(changes)
    return dataclasses.replace(turbine, **fields)


def turbine_from_dict(data, where: str = "") -> Turbine:
    """Build a Turbine from a JSON object with the site file's rules (every problem at once)."""
    from engine.io.sitefile import build_dataclass  # the site file's converter; one set of rules for both
    p = Problems()
    t = build_dataclass(Turbine, data, where, p)
    p.raise_if_any()
    return t


def turbine_to_dict(turbine: Turbine) -> dict:
    """Plain JSON-ready dict of a Turbine (field order kept)."""
    return {f.name: (list(v) if isinstance(v := getattr(turbine, f.name), tuple) else v)
            for f in dataclasses.fields(Turbine)}


def load_library(path=LIBRARY_FILE) -> tuple:
    """The invented generic turbines of the library file, validated, in file order."""
    from engine.io.safe_files import MIB, load_json
    doc = load_json(path, MIB, "a turbine library (JSON)")
    items = doc.get("turbines") if isinstance(doc, dict) else None
    if not isinstance(items, list):
        raise InputError([(str(path), "must be an object with a 'turbines' list")])
    from engine.io.sitefile import build_dataclass
    p = Problems()
    out = []
    for i, item in enumerate(items):
        t = build_dataclass(Turbine, item, f"turbines[{i}]", p)
        if t is not None:
            out.append(t)
    p.raise_if_any()
    return tuple(out)


def library_by_id(path=LIBRARY_FILE) -> dict:
    """The library as ``{id: Turbine}``."""
    return {t.id: t for t in load_library(path)}
