"""Uncertainty of the yield: P50, P75 and P90 from the wind-speed and power-curve uncertainties.

Speed uncertainties (measured data, long-term correction, height/terrain transfer, building
model) are independent one-sigma fractions of the mean speed; they combine by root sum of
squares and reach the energy through the sensitivity s = d ln E / d ln V, computed
numerically for every position x turbine: as the secant from P50 down to the P90 speed
(:func:`distribution_sensitivity`), since the local slope (:func:`engine.energy.aep.speed_sensitivity`)
understates the fall where energy drops steeply near cut-in. The power-curve uncertainty is
a fraction of energy and adds in quadrature.

The energy is taken as log-normal about the central estimate (the median, P50):
P_X = P50 exp(-z_X σ), z_X the standard normal quantile. For small σ this is the usual
P50 (1 - z_X σ) and it never goes negative. Every level of a row is read from **one**
distribution (one σ, from the secant down to the P90 speed), so P50 ≥ P75 ≥ P90 ≥ 0 holds by
construction. :func:`monte_carlo_p_values` checks it by sampling the speed errors and
re-running the method of bins with a seeded generator.

Year-to-year variability of the wind (:func:`exceedance_table`): the annual mean speed of a
single year scatters about the long-term mean with a standard deviation σ_IAV (about 6 % in
temperate climates; common practice, from memory), the mean over N years with σ_IAV/√N. The
P-values of a single year and of the project life's average year add it to the uncertainty
of the long-term mean in quadrature, through the same sensitivity.

A measured climate that was long-term corrected carries the correction's own one-sigma
uncertainty (``WindClimate.long_term_uncertainty``, :mod:`engine.climate.long_term`). It
stands for the same component as ``Uncertainty.speed_long_term`` (the long-term mean's
representativeness), so it replaces it rather than adding to it; but only upwards
(:func:`with_climate`): the computed value (regression scatter and reference length) leaves
out the reference's own drift and consistency, so it may not lower the stated allowance.

At the position where a long-term corrected climate was measured (:func:`logger_row`), the
record replaces the transfer and building-flow terms, so that row's P-values leave them out
(:func:`at_logger`, :func:`exceedance_with_logger`); every other position keeps them.

References
----------
IEC 61400-12-1:2017, uncertainty of the annual energy production (combining independent
components in quadrature; from memory).
"""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from scipy.special import ndtri  # the normal quantile; scipy.stats takes ~1 s to import

#: Exceedance levels reported [%].
LEVELS = (50, 75, 90)
SPEED_COMPONENTS = ("speed_data", "speed_long_term", "speed_transfer", "speed_building_model")


def with_climate(uncertainty, climate):
    """The uncertainties a climate's P-values use: the long-term component raised to the
    climate's own long-term correction uncertainty where that is larger.

    Parameters
    ----------
    uncertainty : :class:`engine.core.model.Uncertainty` (the assessor's stated values)
    climate : :class:`engine.core.model.WindClimate` (``long_term_uncertainty``, fraction of
        mean speed; 0 when not long-term corrected)

    Returns
    -------
    :class:`engine.core.model.Uncertainty` with
    ``speed_long_term = max(stated, climate.long_term_uncertainty)``
    """
    measured = float(getattr(climate, "long_term_uncertainty", 0.0) or 0.0)
    if measured <= float(uncertainty.speed_long_term):
        return uncertainty
    return replace(uncertainty, speed_long_term=measured)


#: Speed components a record logged at the position itself replaces there: the wind was
#: measured where the rotor will be, so neither the transfer to the site nor the building-flow
#: model stands between the data and the hub.
COVERED_AT_LOGGER = ("speed_transfer", "speed_building_model")


def at_logger(uncertainty):
    """The uncertainties of the position where the climate was measured (hub within 0.5 m of
    the logger, :mod:`engine.core.measured_checks`): the transfer and building-flow terms set to
    0; the data, long-term, power-curve and year-to-year terms stay.

    Notes
    -----
    σ_V,logger = √(u_data² + u_LT²). The logger's own calibration and mounting are in
    ``speed_data``; a short record's representativeness is in ``speed_long_term`` (raised by
    the correction's own value, :func:`with_climate`). The other positions keep every term:
    they are reached from the logger through the building model.
    """
    return replace(uncertainty, **{name: 0.0 for name in COVERED_AT_LOGGER})


def logger_row(climate, measuring_index):
    """The row whose P-values :func:`at_logger` gives, or None.

    Only a position record that was long-term corrected (``climate.long_term_uncertainty`` >
    0) earns it: an uncorrected record of a few months says nothing of the years it missed,
    and its stated long-term allowance was not sized for that, so until it is corrected its
    position keeps every term (the summary says so).
    """
    if measuring_index is None or float(getattr(climate, "long_term_uncertainty", 0.0)) <= 0:
        return None
    return int(measuring_index)


def exceedance_with_logger(setup, p50, uncertainty, life_years, logger_index, gross_wh=None):
    """:func:`exceedance_table`, with the row of the position the climate was measured at
    (``logger_index``; None for a reference climate) taken from :func:`at_logger`."""
    out = exceedance_table(setup, p50, uncertainty, life_years, gross_wh)
    if logger_index is None:
        return out
    here = exceedance_table(setup, p50, at_logger(uncertainty), life_years, gross_wh)
    for name, values in out.items():
        values[logger_index] = here[name][logger_index]
    return out


def combined_speed_uncertainty(uncertainty) -> float:
    """Root sum of squares of the speed components of :class:`engine.core.model.Uncertainty` [-].

    Notes
    -----
    σ_V = √(Σ u_i²) for independent components.
    """
    return float(np.sqrt(sum(float(getattr(uncertainty, n)) ** 2 for n in SPEED_COMPONENTS)))


def energy_sigma(speed_sensitivity, uncertainty):
    """One-sigma uncertainty of ln E [-], array like ``speed_sensitivity``.

    Notes
    -----
    σ_E = √((s σ_V)² + u_PC²), s = d ln E / d ln V, u_PC the power-curve energy uncertainty.
    """
    s = np.asarray(speed_sensitivity, float)
    sv = combined_speed_uncertainty(uncertainty)
    return np.sqrt((s * sv) ** 2 + float(uncertainty.energy_power_curve) ** 2)


def exceedance_z(level_percent) -> float:
    """Standard normal quantile for an exceedance probability: 0 for P50, 1.2816 for P90 [-]."""
    return float(ndtri(float(level_percent) / 100.0))


def level_sensitivity(setup, uncertainty, level_percent, local=None, e0=None):
    """d ln E / d ln V as the secant down to the speed of an exceedance level [-], (P, T).

    Parameters
    ----------
    setup : :class:`engine.energy.aep.BinsSetup`
    uncertainty : :class:`engine.core.model.Uncertainty`
    level_percent : exceedance level X [%], above 50
    local : local sensitivity (P, T) used where the secant is undefined (σ_V = 0 or no energy)
    e0 : ``setup.energy_wh(1.0)`` when already computed

    Notes
    -----
    s_X = [ln E(1) - ln E(e^(-z_X σ_V))] / (z_X σ_V). Energy falls faster than the speed
    cubed near cut-in, so ln E is concave in ln V and the local slope at P50 understates the
    fall to P90; the secant over the interval the level actually spans does not. With no
    power-curve uncertainty the resulting P_X is exact for the sampled model.
    """
    sv = combined_speed_uncertainty(uncertainty)
    d = exceedance_z(level_percent) * sv
    e0 = setup.energy_wh(1.0) if e0 is None else np.asarray(e0, float)
    fallback = np.zeros_like(e0) if local is None else np.asarray(local, float)
    if d <= 0:
        return fallback
    e1 = setup.energy_wh(float(np.exp(-d)))
    ok = (e0 > 0) & (e1 > 0)
    s = (np.log(np.where(ok, e0, 1.0)) - np.log(np.where(ok, e1, 1.0))) / d
    return np.where(ok, s, fallback)


def p_values(p50, speed_sensitivity, uncertainty, levels=LEVELS) -> dict:
    """Energy exceeded with each probability, analytically: ``{level: array}`` [unit of p50].

    Parameters
    ----------
    p50 : central (median) energy
    speed_sensitivity : d ln E / d ln V, one array for every level or ``{level: array}``
    uncertainty : :class:`engine.core.model.Uncertainty`

    Notes
    -----
    P_X = P50 exp(-z_X σ_E) with σ_E from :func:`energy_sigma`.
    """
    p50 = np.asarray(p50, float)
    out = {}
    for lv in levels:
        s = speed_sensitivity[lv] if isinstance(speed_sensitivity, dict) else speed_sensitivity
        z = exceedance_z(lv)
        # σ may be infinite (no energy at the level's speed): that level is 0, P50 stays.
        out[lv] = p50 * np.exp(-z * energy_sigma(s, uncertainty)) if z > 0 else p50.copy()
    return out


def analytic_p_values(setup, net_fraction, uncertainty, local_sensitivity=None,
                      levels=LEVELS, gross_wh=None, p50=None) -> dict:
    """P50, P75, P90 of the long-term net energy of every row, ``{level: (P, T)}`` [Wh].

    Parameters
    ----------
    setup : :class:`engine.energy.aep.BinsSetup`
    net_fraction : losses factor Π (1 - L_i) [-]
    uncertainty : :class:`engine.core.model.Uncertainty`
    local_sensitivity : unused where the secant is defined; kept for callers
    gross_wh : ``setup.energy_wh(1.0)`` when already computed
    p50 : the central net energy when it comes from another integral (the exact one);
        ``gross_wh × net_fraction`` otherwise

    Notes
    -----
    One sensitivity for every level, the secant down to the P90 speed
    (:func:`distribution_sensitivity`), so every level comes from one distribution and
    P50 ≥ P75 ≥ P90 ≥ 0 by construction.
    """
    gross = setup.energy_wh(1.0) if gross_wh is None else np.asarray(gross_wh, float)
    p50 = gross * float(net_fraction) if p50 is None else np.asarray(p50, float)
    s = distribution_sensitivity(setup, uncertainty, gross)
    return p_values(p50, s, uncertainty, levels)


def distribution_sensitivity(setup, uncertainty, e0=None):
    """The one d ln E / d ln V of a row's energy distribution [-], (P, T).

    Notes
    -----
    The secant down to the P90 speed (:func:`level_sensitivity` at 90 %): the steeper of the
    secants, so P75 is read cautiously too. Where that speed gives no energy while the
    central speed does, s = ∞ (every level below P50 is 0); no energy at all gives s = 0.
    """
    sv = combined_speed_uncertainty(uncertainty)
    e0 = setup.energy_wh(1.0) if e0 is None else np.asarray(e0, float)
    d = exceedance_z(90) * sv
    if d <= 0:
        return np.zeros_like(e0)
    e1 = setup.energy_wh(float(np.exp(-d)))
    both = (e0 > 0) & (e1 > 0)
    s = (np.log(np.where(both, e0, 1.0)) - np.log(np.where(both, e1, 1.0))) / d
    return np.where(both, np.maximum(s, 0.0), np.where(e0 > 0, np.inf, 0.0))


def exceedance_table(setup, p50, uncertainty, life_years, gross_wh=None) -> dict:
    """Net energy exceeded with 75 and 90 % probability, long-term, over the life, in one year.

    Parameters
    ----------
    setup : :class:`engine.energy.aep.BinsSetup`
    p50 : (P, T) central net energy [Wh]
    uncertainty : :class:`engine.core.model.Uncertainty` (``interannual_speed`` σ_IAV)
    life_years : project life N [years]
    gross_wh : ``setup.energy_wh(1.0)`` when already computed

    Returns
    -------
    dict of (P, T) arrays [Wh]: ``p75_life``, ``p90_life`` (the average year over N years),
    ``p75_one_year``, ``p90_one_year`` (a single year), ``p90_mean`` (the long-term mean
    alone), and ``sigma_one_year`` [-] (σ of ln E for one year)

    Notes
    -----
    σ² = (s σ_V)² + u_PC² + (s σ_IAV)²/n with n = N for the life and n = 1 for one year, s
    from :func:`distribution_sensitivity`; P_X = P50 exp(−z_X σ). So
    P50 ≥ P75_life ≥ P90_life ≥ P90_one_year ≥ 0 and P75_one_year ≥ P90_one_year, by
    construction.
    """
    p50 = np.asarray(p50, float)
    s = distribution_sensitivity(setup, uncertainty, gross_wh)
    base = energy_sigma(np.where(np.isfinite(s), s, 0.0), uncertainty)
    iav = float(uncertainty.interannual_speed)
    out = {}
    for name, n in (("life", max(float(life_years), 1.0)), ("one_year", 1.0), ("mean", np.inf)):
        with np.errstate(invalid="ignore"):
            sig = np.sqrt(base ** 2 + (np.where(np.isfinite(s), s, 0.0) * iav) ** 2 / n)
        sig = np.where(np.isfinite(s), sig, np.inf)
        for lv in (75, 90):
            out[f"p{lv}_{name}"] = p50 * np.exp(-exceedance_z(lv) * sig)
        if name == "one_year":
            out["sigma_one_year"] = sig
    del out["p75_mean"]
    return out


@dataclass(frozen=True)
class MonteCarloResult:
    """Sampled exceedance values and their standard errors, arrays (P, T)."""

    values: dict  # level -> energy exceeded with that probability
    standard_error: dict  # level -> sampling standard error of that value
    n_samples: int
    seed: int


def monte_carlo_p_values(setup, net_fraction, uncertainty, n_samples=20000, seed=20261201,
                         levels=LEVELS, years=None) -> MonteCarloResult:
    """Seeded Monte Carlo check of :func:`p_values` through the full method of bins.

    Parameters
    ----------
    setup : :class:`engine.energy.aep.BinsSetup` of the rows to check
    net_fraction : losses factor Π (1 - L_i) applied to gross energy [-]
    uncertainty : :class:`engine.core.model.Uncertainty`
    n_samples : number of samples N
    seed : seed of ``numpy.random.default_rng``
    years : None for the long-term mean; n for the average of n years, which adds
        ε_IAV ~ N(0, σ_IAV²/n) to every sample's speed error

    Notes
    -----
    Each sample draws ε_V ~ N(0, σ_V²) and ε_PC ~ N(0, u_PC²), recomputes the energy with
    every speed scale × e^ε_V and multiplies by e^ε_PC; P_X is the (100 - X) % quantile. The
    standard error of a quantile comes from the order statistics one binomial standard
    deviation, √(N q (1 - q)), either side of it.
    """
    rng = np.random.default_rng(seed)
    sv = combined_speed_uncertainty(uncertainty)
    eps_v = rng.normal(0.0, sv, n_samples)
    eps_pc = rng.normal(0.0, float(uncertainty.energy_power_curve), n_samples)
    if years is not None:
        eps_v = eps_v + rng.normal(0.0, float(uncertainty.interannual_speed)
                                   / np.sqrt(float(years)), n_samples)
    e = setup.energy_wh(np.exp(eps_v)) * net_fraction  # (N, P, T)
    e = e * np.exp(eps_pc)[:, None, None]
    srt = np.sort(e, axis=0)
    values, errors = {}, {}
    for lv in levels:
        q = 1.0 - lv / 100.0
        values[lv] = np.quantile(e, q, axis=0)
        half = np.sqrt(n_samples * q * (1.0 - q))
        lo = int(np.clip(np.floor(n_samples * q - half), 0, n_samples - 1))
        hi = int(np.clip(np.ceil(n_samples * q + half), 0, n_samples - 1))
        errors[lv] = 0.5 * (srt[hi] - srt[lo])
    return MonteCarloResult(values=values, standard_error=errors, n_samples=int(n_samples),
                            seed=int(seed))
