"""Neighbour and consent columns of the ranked table: noise by wind speed, shadow flicker,
local rules, certification and vibration.

:func:`consent_columns` is the one hook :func:`engine.chain.pipeline.energy_table` calls; each
column has one value per position x turbine row (positions outer). The models live in
:mod:`engine.energy.noise_bands`, :mod:`engine.energy.flicker` and :mod:`engine.chain.rules`.
"""
from __future__ import annotations

import math

import numpy as np
import pandas as pd

from engine.chain import rules
from engine.energy import flicker, noise_bands, uncertainty

#: Tip speed ratios assumed to estimate a rotor's speed when the turbine gives none
#: (horizontal and vertical axis; common practice, from memory).
TIP_SPEED_RATIO = {"horizontal": 6.0, "vertical": 2.5}

#: The exceedance columns of the table and their levels [%]; each is P50 exp(-z σ) with the
#: power-curve term inside σ (engine.energy.uncertainty.exceedance_table), so each widens alike.
WIDENED_COLUMNS = {"p75_aep_kwh": 75, "p90_aep_kwh": 90, "p90_life_aep_kwh": 90,
                   "p75_one_year_aep_kwh": 75, "p90_one_year_aep_kwh": 90}

CERTIFICATION_CAUTION = ("uncertified power curve: the maker's curve has not been tested to "
                         "IEC 61400-12-1 by an independent body; energy uncertainty widened "
                         "to {sigma:.0%} (one sigma)")
VIBRATION_CAUTION = ("A turning rotor shakes what it is fixed to. Have a structural engineer "
                     "check the building or mast for resonance and fatigue before mounting; "
                     "isolating mounts do not replace that check.")


def rotor_frequency_hz(turbine):
    """Rotor speed range as rotation frequency 1P [Hz]: (lowest, highest, estimated?).

    From ``rotor_speed_rpm`` when given; else Ω = λ v / R between cut-in and rated speed with
    the tip speed ratio λ of :data:`TIP_SPEED_RATIO` (an estimate).

    Notes
    -----
    f_1P = Ω / 2π = λ v / (2π R).
    """
    if turbine.rotor_speed_rpm:
        lo, hi = turbine.rotor_speed_rpm
        return lo / 60.0, hi / 60.0, False
    r = max(turbine.rotor_radius_m, 1e-6)
    if turbine.axis == "vertical" and turbine.rotor_diameter_m > 0:
        r = turbine.rotor_diameter_m / 2.0
    lam = TIP_SPEED_RATIO[turbine.axis]
    f = [lam * v / (2.0 * math.pi * r) for v in (turbine.cut_in_ms, turbine.rated_speed_ms)]
    return f[0], f[1], True


def vibration_text(turbine, structure_hz):
    """One caution line: the rotor's 1P-3P range beside the structure's, if given."""
    lo, hi, est = rotor_frequency_hz(turbine)
    text = (f"rotor {lo:.1f}-{hi:.1f} Hz (1P{', estimated' if est else ''}), blade passing "
            f"up to {3 * hi:.1f} Hz (3P)")
    if structure_hz:
        s_lo, s_hi = structure_hz
        overlap = s_lo <= 3.0 * hi and s_hi >= lo
        text += (f"; structure {s_lo:g}-{s_hi:g} Hz: "
                 + ("OVERLAPS the rotor's range, resonance possible" if overlap
                    else "outside the rotor's range"))
    return text + ". " + VIBRATION_CAUTION


def widen_uncertified(p50_kwh, p_kwh, level, certified, sigma_uncertified, sigma_tested):
    """P_X of rows whose curve is uncertified, with the wider power-curve uncertainty [kWh].

    Notes
    -----
    P_X = P50 exp(-z_X σ_E), σ_E² = (s σ_V)² + u_PC² (engine.energy.uncertainty): the
    table's σ_E = -ln(P_X / P50) / z_X, then σ_E'² = σ_E² - u_PC² + u'_PC².
    """
    z = uncertainty.exceedance_z(level)
    p50 = np.asarray(p50_kwh, float)
    px = np.asarray(p_kwh, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        sig = -np.log(px / p50) / z
        wide = np.sqrt(np.maximum(sig ** 2 - sigma_tested ** 2, 0.0) + sigma_uncertified ** 2)
        out = p50 * np.exp(-z * wide)
    return np.where(np.asarray(certified, bool) | ~(p50 > 0), px, out)


def certification_columns(assessment, table) -> dict:
    """``turbine_certified``, ``certification`` text and, for uncertified curves, every P75 and
    P90 column (life average and one year) widened by :func:`widen_uncertified`."""
    P = len(assessment.positions)
    tur = assessment.turbines
    cert = np.tile([bool(t.certified) for t in tur], P)
    text = np.tile([f"{t.test_standard} ({t.test_body})" if t.certified else
                    CERTIFICATION_CAUTION.format(
                        sigma=assessment.consent.uncertified_curve_uncertainty)
                    for t in tur], P)
    out = {"turbine_certified": cert, "certification": list(text)}
    u_pc = float(assessment.uncertainty.energy_power_curve)
    u_wide = max(float(assessment.consent.uncertified_curve_uncertainty), u_pc)
    for col, level in WIDENED_COLUMNS.items():
        if col in table and "p50_aep_kwh" in table:
            out[col] = widen_uncertified(table["p50_aep_kwh"], table[col], level, cert,
                                         u_wide, u_pc)
    return out


def _windows(assessment):
    return tuple(r for r in assessment.receptors if r.facing_deg is not None)


def noise_result(assessment, eff):
    """:class:`engine.energy.noise_bands.ReceptorNoise` of every position x turbine."""
    hub = np.column_stack([[p.x_m for p in assessment.positions],
                           [p.y_m for p in assessment.positions], eff.hub_height_m])
    return noise_bands.receptor_noise(hub, assessment.receptors, assessment.buildings,
                                      assessment.turbines, eff, assessment.consent.noise)


def flicker_result(assessment, eff):
    """:class:`engine.energy.flicker.FlickerResult`, or None without windows or a location."""
    windows = _windows(assessment)
    if not windows or assessment.site.origin_lat_deg is None:
        return None
    hub = np.column_stack([[p.x_m for p in assessment.positions],
                           [p.y_m for p in assessment.positions], eff.hub_height_m])
    return flicker.window_flicker(hub, windows, assessment.turbines, eff, assessment.site,
                                  assessment.consent.flicker)


def consent_columns(assessment, eff, table) -> dict:
    """Every neighbour and consent column, P*T values each (see the module docstring)."""
    P, T = len(assessment.positions), len(assessment.turbines)
    out = noise_bands.noise_columns(noise_result(assessment, eff),
                                    [r.id for r in assessment.receptors])
    fl = flicker_result(assessment, eff)
    if fl is None:
        empty = flicker.FlickerResult((), np.zeros((P, T, 0)), np.zeros((P, T, 0)),
                                      np.zeros((P, T, 0)), np.zeros((P, T, 0, 366)))
        out.update(flicker.flicker_columns(empty, assessment.consent.flicker))
    else:
        out.update(flicker.flicker_columns(fl, assessment.consent.flicker))
    out.update(rules.rule_columns(assessment))
    out.update(certification_columns(assessment, table))
    structure = assessment.consent.structure_frequency_hz
    out["vibration_caution"] = list(np.tile([vibration_text(t, structure)
                                             for t in assessment.turbines], P))
    return out


def _indices(evaluation, position_id, turbine_id):
    a = evaluation.assessment
    p = [q.id for q in a.positions].index(position_id)
    t = [q.id for q in a.turbines].index(turbine_id)
    return p, t


def noise_speed_table(evaluation, position_id, turbine_id):
    """Per receptor and hub-speed bin: hours, turbine level, background, criterion, margin.

    Long format for the summary's receptor table and the level-vs-background chart.
    """
    a = evaluation.assessment
    p, t = _indices(evaluation, position_id, turbine_id)
    res = noise_result(a, evaluation.climate)
    rows = []
    for r, rec in enumerate(a.receptors):
        lv = res.level_db[p, t, r]
        rows.append(pd.DataFrame({
            "receptor_id": rec.id, "speed_ms": res.speeds_ms, "hours": res.hours[p],
            "turbine_db": np.where(np.isfinite(lv), lv, np.nan),
            "background_db": res.background_db[r], "limit_db": res.limit_db[r],
            "margin_db": np.where(np.isfinite(res.margin_db[p, t, r]), res.margin_db[p, t, r],
                                  np.nan),
            "over_limit": res.over[p, t, r]}))
    cols = ["receptor_id", "speed_ms", "hours", "turbine_db", "background_db", "limit_db",
            "margin_db", "over_limit"]
    return pd.concat(rows, ignore_index=True) if rows else pd.DataFrame(columns=cols)


def flicker_day_table(evaluation, position_id, turbine_id):
    """Worst-case flicker minutes per day of year at each window (long format); empty
    without windows or a site location."""
    fl = flicker_result(evaluation.assessment, evaluation.climate)
    if fl is None:
        return pd.DataFrame(columns=["window_id", "day_of_year", "minutes"])
    p, t = _indices(evaluation, position_id, turbine_id)
    W = len(fl.window_ids)
    return pd.DataFrame({"window_id": np.repeat(fl.window_ids, 366),
                         "day_of_year": np.tile(np.arange(1, 367), W),
                         "minutes": fl.daily_minutes[p, t].ravel()})


def rule_table(evaluation, position_id, turbine_id):
    """One row per chosen rule: id, kind, limit, result text for one position x turbine."""
    tab = evaluation.table
    row = tab[(tab["position_id"] == position_id) & (tab["turbine_id"] == turbine_id)].iloc[0]
    return pd.DataFrame([{"rule_id": r.id, "kind": r.kind, "limit": r.limit, "note": r.note,
                          "result": row["rule_results"].get(r.id, "")}
                         for r in evaluation.assessment.consent.rules],
                        columns=["rule_id", "kind", "limit", "note", "result"])
