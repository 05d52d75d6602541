"""A climate measured at a position is used there as measured: no second transfer or speed-up."""
import dataclasses

import numpy as np
import pytest

from engine.chain import pipeline
from engine.climate import fit, mcp
from engine.climate.weibull import mixture_mean_ms
from engine.core import model
from engine.core.errors import InputError


def _turbine():
    v = tuple(float(x) for x in range(0, 26))
    p = tuple(float(min(1000.0, 0.5 * 1.225 * 3.14 * 0.3 * x ** 3)) if x >= 3 else 0.0 for x in v)
    return model.Turbine("t", "test 1 kW", "horizontal", 1000.0, v, p, 3.0, 10.0, 25.0,
                         rotor_diameter_m=2.0)


def _long_term_roof_record(seed=7):
    """An invented two-year reference and a three-month roof logger on it, long-term corrected."""
    rng = np.random.default_rng(seed)
    n_ref = 2 * 8760
    t_ref = np.arange(n_ref, dtype=np.int64) * 3600 * 10**9
    d_ref = np.mod(rng.normal(225.0, 70.0, n_ref), 360.0)
    v_ref = 6.0 * rng.weibull(2.0, n_ref)
    conc = slice(n_ref - 2200, n_ref)
    v_site = np.maximum(1.15 * v_ref[conc] + rng.normal(0, 0.6, 2200), 0.0)
    res = mcp.mcp_long_term(t_ref[conc], v_site, d_ref[conc], t_ref, v_ref, d_ref,
                            method="variance_ratio", n_sectors=12)
    return res


def _roof_site(climate):
    site = model.Site(name="invented roof", terrain_roughness_m=0.5)
    bldg = model.Building("b", 0.0, 0.0, 30.0, 15.0, 12.0, orientation_deg=90.0)
    logger = model.Position("logger", "roof", 5.0, 2.0, 4.0, building_id="b")
    twin = model.Position("twin", "roof", 5.0, 2.0, 4.0, building_id="b")
    other = model.Position("other", "roof", -10.0, -3.0, 6.0, building_id="b")
    return model.Assessment(site=site, climate=climate, buildings=(bldg,),
                            positions=(logger, twin, other), turbines=(_turbine(),))


def test_roof_logger_used_at_its_own_position_gives_its_long_term_mean():
    """At the logger, the mean speed is the record's own long-term mean (within 1 %), and no
    building factor is applied a second time (check value: the record itself)."""
    res = _long_term_roof_record()
    summary = fit.climate_from_series(res.speed_ms, res.direction_deg, res.time_ns,
                                      height_m=16.0, roughness_m=0.5, source="long_term")
    clim = dataclasses.replace(summary.climate, measured_at="position", position_id="logger")
    a = _roof_site(clim)
    ev = pipeline.evaluate(a)
    eff = ev.climate
    # The path: at the logger, speed factor 1 and the measured scale as the free stream.
    assert np.all(eff.speed_factor[0] == 1.0)
    np.testing.assert_allclose(eff.free_c_ms[0], clim.weibull_c_ms, rtol=1e-12)
    np.testing.assert_allclose(eff.weibull_k[0], clim.weibull_k, rtol=1e-12)
    assert eff.diagnostics["climate_measured_here"].tolist() == [True, False, False]
    row = ev.table[ev.table.position_id == "logger"].iloc[0]
    assert row.mean_speed_ms == pytest.approx(res.long_term_mean_ms, rel=0.01)
    # A position identical to the logger gets the measured climate back through the model path
    # (free stream = measured / model speed factor, then the model speed factor again).
    np.testing.assert_allclose(eff.weibull_c_ms[1], eff.weibull_c_ms[0], rtol=1e-9)
    # Taken as a reference instead, the same record is carried and sped up again: different.
    as_ref = dataclasses.replace(a, climate=dataclasses.replace(clim, measured_at="reference",
                                                                position_id=""))
    wrong = pipeline.evaluate(as_ref).climate
    double = mixture_mean_ms(wrong.frequency, wrong.weibull_k, wrong.weibull_c_ms)[0]
    assert abs(double / res.long_term_mean_ms - 1.0) > 0.02
    assert np.all(np.isfinite(eff.weibull_c_ms)) and np.all(eff.weibull_c_ms >= 0)


def test_position_climate_must_name_a_position_at_its_height():
    clim = model.WindClimate(height_m=30.0, roughness_m=0.5, frequency=(1.0,), weibull_k=(2.0,),
                             weibull_c_ms=(5.0,), measured_at="position", position_id="logger")
    with pytest.raises(InputError) as e:
        _roof_site(clim)
    assert "climate.height_m" in str(e.value)
    with pytest.raises(InputError) as e:
        _roof_site(dataclasses.replace(clim, height_m=16.0, position_id="nowhere"))
    assert "climate.position_id" in str(e.value)
    with pytest.raises(InputError):
        dataclasses.replace(clim, position_id="")


def test_measured_ti_replaces_the_model_at_the_logger():
    clim = model.WindClimate(height_m=16.0, roughness_m=0.5, frequency=(0.5, 0.5),
                             weibull_k=(2.0, 2.0), weibull_c_ms=(5.0, 6.0),
                             measured_at="position", position_id="logger",
                             turbulence_intensity=(0.21, 0.18))
    ev = pipeline.evaluate(_roof_site(clim))
    np.testing.assert_allclose(ev.climate.turbulence_intensity[0], (0.21, 0.18))
    assert ev.climate.diagnostics["measured_ti_used"].tolist() == [True, False, False]


def test_logger_file_with_sd_gives_measured_ti_used_in_the_energy(tmp_path):
    """A two-height file with SD columns -> climate with measured TI and shear -> the energy at
    the logger uses the measured TI (not the formula); shear as generated (power law)."""
    import pandas as pd
    from engine.climate.logger import logger_climate
    rng = np.random.default_rng(11)
    n = 6000
    t = pd.date_range("2025-01-01", periods=n, freq="10min", tz="UTC")
    d = rng.uniform(0, 360, n)
    u2 = 4.0 * rng.weibull(2.0, n) + 0.5
    u4 = u2 * 2.0 ** 0.3
    df = pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"), "ws_2m": u2.round(3),
                       "ws_2m_sd": (0.3 * u2).round(3), "wd_2m": d.round(1),
                       "ws_4m": u4.round(3), "ws_4m_sd": (0.25 * u4).round(3)})
    lc = logger_climate(df.to_csv(index=False).encode(), "logger.csv", base_height_m=12.0,
                        position_id="logger", roughness_m=0.5, distance_constant_m=0.0)
    c = lc.climate
    assert c.height_m == 16.0 and c.measured_at == "position" and c.averaging_s == 600.0
    np.testing.assert_allclose(c.turbulence_intensity, 0.25, rtol=2e-3)
    np.testing.assert_allclose(c.shear_exponent, 0.3, rtol=0.02)  # generated with α = 0.3
    a = _roof_site(c)
    ev = pipeline.evaluate(a)
    np.testing.assert_allclose(ev.climate.turbulence_intensity[0], c.turbulence_intensity)
    no_ti = pipeline.evaluate(dataclasses.replace(a, climate=dataclasses.replace(
        c, turbulence_intensity=())))
    assert not np.allclose(no_ti.climate.turbulence_intensity[0], c.turbulence_intensity)
    e1 = ev.table.set_index("position_id").gross_aep_kwh["logger"]
    e0 = no_ti.table.set_index("position_id").gross_aep_kwh["logger"]
    assert e1 != pytest.approx(e0, rel=1e-6)


def _position_climate(lt=0.0):
    return model.WindClimate(height_m=16.0, roughness_m=0.5, frequency=(0.5, 0.5),
                             weibull_k=(2.0, 2.0), weibull_c_ms=(5.0, 6.0),
                             measured_at="position", position_id="logger",
                             turbulence_intensity=(0.21, 0.18), long_term_uncertainty=lt)


def test_position_measured_table_declares_its_columns():
    """The two position-measured diagnostics are ranked-table columns of the result contract."""
    from engine.chain import columns
    ev = pipeline.evaluate(_roof_site(_position_climate()))
    assert columns.undeclared(ev.table.columns) == []
    here = ev.table.set_index("position_id")
    assert bool(here.climate_measured_here["logger"]) and not here.climate_measured_here["other"]
    assert bool(here.measured_ti_used["logger"]) and not here.measured_ti_used["twin"]


def test_screening_and_pipeline_refer_a_position_climate_to_the_free_stream_alike():
    """The screening gets the same free-stream climate the pipeline uses for the positions
    other than the logger (engine.flow.effective.reference_climate), never the logger's
    climate as a reference; a position climate given to a screening directly is refused."""
    from engine.flow import effective
    from engine.screening import settings
    a = _roof_site(_position_climate())
    ref = effective.reference_climate(a)
    assert ref.measured_at == "reference"
    ctx = settings.context_from_assessment(a)
    assert ctx.climates[""] == ref
    # Pipeline, other positions: the ordinary chain on that same reference climate.
    ev = pipeline.evaluate(a).climate
    plain = effective.effective_climate(dataclasses.replace(a, climate=ref), ev.air_density_kgm3)
    np.testing.assert_allclose(ev.weibull_c_ms[2], plain.weibull_c_ms[2], rtol=1e-12)
    # Referred down by the model's factor at the roof logger (a speed-up or a shelter, not 1).
    assert not np.allclose(ref.weibull_c_ms, a.climate.weibull_c_ms, rtol=1e-3)
    with pytest.raises(InputError) as e:
        settings.ScreeningContext(site=a.site, climates={"": a.climate}, turbines=a.turbines)
    assert "measured_at" in str(e.value) and "logger" in str(e.value)


def test_long_term_correction_uncertainty_enters_the_p_values():
    """σ_LT from the correction replaces the stated long-term component when larger (same
    component, not added), so P90 equals a run with that component stated; a smaller computed
    value leaves the stated one (a floor). P50 does not move."""
    base = pipeline.evaluate(_roof_site(_position_climate(0.0))).table.set_index("position_id")
    high = pipeline.evaluate(_roof_site(_position_climate(0.10))).table.set_index("position_id")
    low = pipeline.evaluate(_roof_site(_position_climate(0.01))).table.set_index("position_id")
    stated = _roof_site(_position_climate(0.0))
    stated = dataclasses.replace(stated, uncertainty=dataclasses.replace(
        stated.uncertainty, speed_long_term=0.10))
    same = pipeline.evaluate(stated).table.set_index("position_id")
    assert model.Uncertainty().speed_long_term == pytest.approx(0.04)
    np.testing.assert_allclose(high.p50_aep_kwh, base.p50_aep_kwh, rtol=1e-12)
    # Away from the logger every term stays, so the two runs agree there; at the logger the
    # corrected record also drops the transfer and building terms (the test above).
    others = ["twin", "other"]
    np.testing.assert_allclose(high.p90_aep_kwh[others], same.p90_aep_kwh[others], rtol=1e-12)
    np.testing.assert_allclose(high.p90_one_year_aep_kwh[others],
                               same.p90_one_year_aep_kwh[others], rtol=1e-12)
    assert high.p90_aep_kwh["logger"] > same.p90_aep_kwh["logger"]
    assert np.all(high.p90_aep_kwh[others] < base.p90_aep_kwh[others])
    np.testing.assert_allclose(low.p90_aep_kwh[others], base.p90_aep_kwh[others], rtol=1e-12)


def _kaimal_between_share(U, z, T, short=600.0):
    """Reference β = 1 − V(600 s)/V(T), Kaimal spectrum (IEC 61400-1 annex C, from memory),
    by scipy.integrate.quad."""
    from scipy import integrate
    l1 = 8.1 * 0.7 * min(z, 60.0)

    def v(win):
        def g(lf):
            f = np.exp(lf)
            n = f * l1 / U
            return 4 * n / (1 + 6 * n) ** (5 / 3) * (1 - np.sinc(f * win) ** 2)
        return integrate.quad(g, np.log(1e-6), np.log(100), limit=500)[0]
    return 1.0 - v(short) / v(T)


@pytest.mark.parametrize("step", ["10min", "60min"])
def test_hourly_sd_gives_the_ten_minute_turbulence_not_the_between_variance(step):
    """An hourly logged SD holds the variance between 10-minute means, which the averaging
    correction already credits to the energy (the cube factor); the TI the curve normalisation
    uses is the 10-minute one, σ_T √(1 − β). Reference β by scipy quadrature of the Kaimal
    spectrum; a 10-minute record keeps its SD."""
    import pandas as pd
    from engine.climate.logger import logger_climate
    rng = np.random.default_rng(5)
    n = 3000
    t = pd.date_range("2025-01-01", periods=n, freq=step, tz="UTC")
    levels = np.array([5.0, 7.0, 9.0, 11.0])
    pick = rng.integers(0, 4, n)
    u = levels[pick] + rng.normal(0.0, 0.01, n)
    d = rng.uniform(0, 360, n).round(1)
    df = pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"), "ws_4m": u.round(4),
                       "ws_4m_sd": (0.3 * u).round(4), "wd_4m": d})
    lc = logger_climate(df.to_csv(index=False).encode(), "logger.csv", base_height_m=12.0,
                        position_id="logger", roughness_m=0.5, distance_constant_m=0.0)
    beta = np.array([_kaimal_between_share(x, 16.0, 3600.0) for x in levels])
    if step == "10min":
        beta[:] = 0.0
    per_record = 0.3 * np.sqrt(1.0 - beta[pick])
    sector = np.floor(np.mod(d + 15.0, 360.0) / 30.0).astype(int) % 12  # 12 centred sectors
    ref = np.bincount(sector, per_record, 12) / np.bincount(sector, minlength=12)
    assert (beta.min() > 0.02) == (step == "60min")
    np.testing.assert_allclose(lc.climate.turbulence_intensity, ref, rtol=5e-3)
    assert (np.all(lc.averaging_factor > 1.0)) == (step == "60min")


def test_summary_says_where_the_climate_was_measured_and_the_long_term_sigma_used():
    """The siting summary's quality tables name the logger's position, the measured TI, and the
    long-term component actually used (9 % from the correction over the stated 4 %)."""
    from engine import report
    ev = pipeline.evaluate(_roof_site(_position_climate(0.09)))
    s = report.build_summary(ev, with_charts=False)
    rows = dict((r[0], r[1]) for r in s.table("climate").rows)
    assert rows["Measured at"].startswith("position logger")
    assert rows["Measured turbulence"].startswith("per sector")
    unc = {r[0]: r[1] for r in s.table("uncertainty").rows}
    key = next(k for k in unc if k.startswith("Long-term representativeness"))
    assert "long-term correction" in key and unc[key] == "9.0 %"


def test_taller_masts_at_the_logger_are_modelled_from_the_free_stream():
    """The what-if mast search at the logger's position neither fails (the logger's climate
    holds its own height only) nor reuses the measured climate at other heights: its NPV at a
    taller mast is that of the chain re-run there with the free-stream climate."""
    from engine.chain import whatif
    from engine.flow import effective
    a = _roof_site(_position_climate())
    ev = pipeline.evaluate(a)
    h, frame = whatif.mast_height_to_pay_back_m(ev, "logger", "t")
    assert len(frame) > 3 and np.all(np.isfinite(frame["npv"]))
    taller = float(frame["mast_height_m"].iloc[2])
    pos = tuple(dataclasses.replace(p, mast_height_m=taller) if p.id == "logger" else p
                for p in a.positions)
    rerun = pipeline.evaluate(dataclasses.replace(a, climate=effective.reference_climate(a),
                                                  positions=pos)).table
    row = rerun[rerun.position_id == "logger"].iloc[0]
    assert frame["npv"].iloc[2] == pytest.approx(row["npv"], rel=1e-9, abs=1e-6)


def test_long_term_series_at_the_reference_interval_gets_the_loggers_own_cube_factor():
    """A 10-minute logger corrected against an hourly reference gives an hourly long-term
    series; its climate is raised by the factor measured on the logger itself, Σ v³ / Σ U³
    over the concurrent hours (hand formula recomputed here with pandas), and says so."""
    import pandas as pd
    from engine.climate.logger import logger_climate
    rng = np.random.default_rng(21)
    hours = 3 * 8760
    t_ref = pd.date_range("2022-01-01", periods=hours, freq="h", tz="UTC")
    u_ref = 6.0 * rng.weibull(2.0, hours) + 0.3
    d_ref = rng.uniform(0, 360, hours)
    ref_csv = pd.DataFrame({"timestamp": t_ref.strftime("%Y-%m-%dT%H:%M:%SZ"),
                            "speed_ms": u_ref.round(3), "direction_deg": d_ref.round(1)})
    conc = 2000  # the last 2000 hours are logged at 10 minutes
    u_h = np.repeat(1.2 * u_ref[-conc:], 6)
    v10 = np.maximum(u_h * (1.0 + 0.12 * rng.standard_normal(u_h.size)), 0.0).round(3)
    t10 = pd.date_range(t_ref[-conc], periods=6 * conc, freq="10min", tz="UTC")
    log_csv = pd.DataFrame({"timestamp": t10.strftime("%Y-%m-%dT%H:%M:%SZ"), "ws_4m": v10,
                            "ws_4m_sd": (0.2 * v10).round(3),
                            "wd_4m": np.mod(np.repeat(d_ref[-conc:], 6)
                                            + rng.normal(0.0, 5.0, v10.size), 360).round(1)})
    lc = logger_climate(log_csv.to_csv(index=False).encode(), "logger.csv", base_height_m=12.0,
                        position_id="logger", roughness_m=0.5, n_sectors=1,
                        reference={"reference_data": ref_csv.to_csv(index=False).encode(),
                                   "reference_name": "ref.csv"})
    assert lc.climate.averaging_s == 3600.0
    hourly = pd.Series(v10, index=t10).groupby(np.arange(v10.size) // 6).transform("mean")
    want = np.sum(v10 ** 3) / np.sum(hourly.to_numpy() ** 3)
    assert lc.averaging_factor[0] == pytest.approx(want, rel=1e-9)
    assert want > 1.01
    np.testing.assert_allclose(lc.climate.weibull_c_ms,
                               np.asarray(lc.summary.climate.weibull_c_ms) * want ** (1 / 3),
                               rtol=1e-9)
    assert any("reference's interval" in n for n in lc.notes)


def test_answer_names_the_long_term_correction_when_its_own_sigma_is_the_largest():
    """σ_LT 30 % from a poor correction outweighs the stated building-model 12 %: the summary's
    answer names the long-term correction as the largest uncertainty (the same σ the P90 used)."""
    from engine.chain import answer
    ev = pipeline.evaluate(_roof_site(_position_climate(0.30)))
    _, second = answer.answer_for(ev)
    assert answer.COMPONENT_WORDS["speed_long_term"] in second
    ev0 = pipeline.evaluate(_roof_site(_position_climate(0.0)))
    assert answer.COMPONENT_WORDS["speed_long_term"] not in answer.answer_for(ev0)[1]


def test_p_values_at_the_logger_leave_out_transfer_and_building_terms():
    """At the logger the record replaces the transfer and the building-flow model, so its
    P-values use σ_V = √(u_data² + u_LT²); a twin position at the same place, reached through
    the building model, keeps every term. Check: the logger's P90 equals the twin's P90 when
    the site states zero transfer and building terms (the same σ_V reached by another path),
    and the twin's P90 is lower with the stated terms (root sum of squares, IEC 61400-12-1)."""
    res = _long_term_roof_record()
    summary = fit.climate_from_series(res.speed_ms, res.direction_deg, res.time_ns,
                                      height_m=16.0, roughness_m=0.5, source="long_term")
    clim = dataclasses.replace(summary.climate, measured_at="position", position_id="logger",
                               long_term_uncertainty=0.05)
    a = _roof_site(clim)
    stated = a.uncertainty
    assert stated.speed_transfer > 0 and stated.speed_building_model > 0
    t = pipeline.evaluate(a).table.set_index("position_id")
    zeroed = dataclasses.replace(a, uncertainty=dataclasses.replace(
        stated, speed_transfer=0.0, speed_building_model=0.0))
    tz = pipeline.evaluate(zeroed).table.set_index("position_id")
    assert t.loc["logger", "aep_kwh"] == pytest.approx(t.loc["twin", "aep_kwh"], rel=1e-9)
    for col in ("p75_aep_kwh", "p90_aep_kwh", "p90_one_year_aep_kwh"):
        assert t.loc["logger", col] == pytest.approx(tz.loc["twin", col], rel=1e-9)
        assert t.loc["twin", col] < t.loc["logger", col] <= t.loc["logger", "aep_kwh"]
        assert t.loc["other", col] < tz.loc["other", col]  # the others keep every term


def test_an_uncorrected_position_record_keeps_every_term():
    """A few months logged at the position and not long-term corrected say nothing of the years
    they missed: its P-values keep the stated transfer and building-flow terms, so the logger
    and its twin (same place, same energy) have the same P90."""
    res = _long_term_roof_record()
    summary = fit.climate_from_series(res.speed_ms, res.direction_deg, res.time_ns,
                                      height_m=16.0, roughness_m=0.5, source="measured")
    clim = dataclasses.replace(summary.climate, measured_at="position", position_id="logger")
    assert clim.long_term_uncertainty == 0
    t = pipeline.evaluate(_roof_site(clim)).table.set_index("position_id")
    assert t.loc["logger", "p90_aep_kwh"] == pytest.approx(t.loc["twin", "p90_aep_kwh"],
                                                           rel=1e-9)
