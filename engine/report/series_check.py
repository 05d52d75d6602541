"""The time-series yield beside the Weibull yield, for the summary's leading option.

Where the climate came from a record and the caller hands that record over, the summary shows
the leading option's annual energy summed over the record itself
(:func:`engine.energy.series_yield.series_yield`) beside the yield of the fitted Weibull
climate that the ranking uses, with their difference, so a reader sees how far the fit
describes the record. The ranking itself is not changed by it.
"""
from __future__ import annotations

import numpy as np

from engine.energy import aep
from engine.energy.series_yield import series_yield
from engine.report.content import Paragraph, Table
from engine.report.formats import finite

#: A difference beyond this share [-] is called out: the fit does not describe the record
#: (common practice: a few per cent is within what the Weibull shape misses).
NOTABLE_DIFFERENCE = 0.03
NS_PER_DAY = 86400 * 10**9


def _kwh(wh) -> str:
    return f"{float(wh) / 1000.0:,.0f} kWh"


def leading_series_yield(evaluation, best, record):
    """The series and Weibull yields of the leading option, or None.

    Parameters
    ----------
    evaluation : :class:`engine.chain.pipeline.Evaluation`
    best : the leading option's record (``position_id``, ``turbine_id``) or None
    record : None or (time_ns, speed_ms, direction_deg), the climate's record (valid rows at
        the climate's height; for a long-term corrected climate, the predicted series); used
        only when the climate names a record (``WindClimate.record_file``)

    Returns
    -------
    None, or dict: series_gross_wh, series_net_wh, weibull_gross_wh, weibull_net_wh [Wh/year],
    difference (series / Weibull − 1 on the gross) [-], records, days (the span with the last
    record's interval) [d], monthly_wh (12,) and hourly_wh (24,) net energy per calendar month
    and per UTC hour of day [Wh] (:class:`engine.energy.series_yield.SeriesYield`),
    hourly_records (24,) records in each UTC hour of day (0: the hour holds no record and
    its energy is 0 for want of data, as with a 3-hourly series)
    """
    if record is None or best is None or not evaluation.assessment.climate.record_file:
        return None  # a climate without a record of its own has nothing to compare with
    t, v, d = (np.asarray(x) for x in record)
    if t.size == 0:
        return None
    a, eff = evaluation.assessment, evaluation.climate
    p = list(eff.position_ids).index(best["position_id"])
    k = [tb.id for tb in a.turbines].index(best["turbine_id"])
    out = series_yield(t, v, d, a.climate, eff, a.turbines, a.losses, energy_settings=a.energy)
    net = aep.net_fraction(a.losses)
    wg = float(out.weibull_gross_wh[p, k])
    ts = np.sort(t.astype(np.int64))
    step = float(np.median(np.diff(ts))) if ts.size > 1 else 0.0
    span = (float(ts[-1] - ts[0]) + step) / NS_PER_DAY  # the last record's interval counted
    return {"series_gross_wh": float(out.gross_wh[p, k]),
            "series_net_wh": float(out.net_wh[p, k]), "weibull_gross_wh": wg, "weibull_net_wh": wg * net,
            "difference": float(out.difference[p, k]), "records": out.records, "days": span,
            "monthly_wh": [float(x) for x in out.monthly_wh[p, k]],
            "hourly_wh": [float(x) for x in out.hourly_wh[p, k]],
            "hourly_records": [int(x) for x in np.bincount(
                (ts // 3_600_000_000_000) % 24, minlength=24)]}


def series_blocks(evaluation, best, record) -> tuple:
    """Blocks for the data-quality section: the two yields side by side and what they mean."""
    r = leading_series_yield(evaluation, best, record)
    if r is None or not finite(r["difference"]):
        return ()
    name = f"{best['turbine_id']} at {best['position_id']}"
    diff = r["difference"]
    rows = (("Weibull fit of the climate (the ranking uses this)", _kwh(r["weibull_gross_wh"]),
             _kwh(r["weibull_net_wh"])),
            (f"Time series over the record ({r['records']:,} records, {r['days']:.0f} days)",
             _kwh(r["series_gross_wh"]), _kwh(r["series_net_wh"])),
            ("Difference, series against fit", f"{diff:+.1%}", f"{diff:+.1%}"))
    words = (f"For {name}, the energy summed over the record itself is {diff:+.1%} against "
             "the fitted Weibull climate's; the ranking and the P-values use the Weibull "
             "figure.")
    if diff < -NOTABLE_DIFFERENCE:
        words += (" The fit overstates this record's energy: the lower, series figure is the "
                  "cautious one.")
    elif diff > NOTABLE_DIFFERENCE:
        words += " The fit understates this record's energy; the ranking keeps the lower figure."
    if r["days"] < 365.0:
        words += (f" The record spans {r['days']:.0f} days, less than a year, so its figure "
                  "weights the seasons it covers.")
    return (Table("series-yield", ("Yield of the leading option", "Gross a year", "Net a year"),
                  rows, ("l", "r", "r"),
                  caption="Same curves, losses and effective climate; only the wind differs."),
            Paragraph(words, "note" if abs(diff) <= NOTABLE_DIFFERENCE else "caution"))
