"""Building the siting summary's content: the body a client reads (numbered sections).

:func:`build_summary` turns an :class:`~engine.chain.pipeline.Evaluation` into a
:class:`~engine.report.content.Summary`: the body here (the answer in two sentences, the
question, leading option, ranking, costs, charts, data quality, cautions) and the appendix from
:mod:`engine.report.appendix`
(inputs as entered, further results, methods, reproducibility, data files). Every number is
formatted here, once, for both renderers.
"""
from __future__ import annotations

from engine.chain import columns as contract
from engine.chain.answer import answer_for
from engine.chain.documents import rank_document
from engine.chain.ranking import OBJECTIVE_COLUMNS, exclusion_reasons
from engine.chain.verdict import headline_for
from engine.core import __version__
from engine.energy.uncertainty import with_climate
from engine.report import appendix
from engine.report.cautions import CAUTIONS_SHORT, caution_lines
from engine.report.content import (Bullets, FigureBlock, Paragraph, Section, Summary, Table,
                                   numbered)
from engine.report.formats import (DASH, finite, fmt_fixed, fmt_percent, format_cell,
                                   records_table)
from engine.report.series_check import series_blocks
from engine.report.words import CF_ALARM, FIELD_TRIALS, OBJECTIVE_WORDS, timestamp


def ranking_limits(a) -> list:
    """The ranking's constraints in words."""
    rs = a.ranking
    limits = [f"masts up to {rs.max_mast_height_m:g} m"]
    if rs.require_clear_of_turbulence_zone:
        limits.append("rotors clear of the roofs' high-turbulence zones")
    if rs.apply_noise_limits and a.receptors:
        limits.append(f"noise within the criteria at {len(a.receptors)} receptor(s) at every "
                      f"hub wind speed up to {a.consent.noise.max_assessed_speed_ms:g} m/s")
    if rs.max_thrust_n > 0:
        limits.append(f"extreme thrust up to {rs.max_thrust_n:g} N")
    return limits


def _question(a, doc, stamp, assessor, notes) -> Section:
    site = a.site
    q = [Paragraph(
        f"Which of the {len(a.positions)} candidate positions on {site.name}, with which of the "
        f"{len(a.turbines)} turbines, {OBJECTIVE_WORDS[a.ranking.objective][0]}, with "
        f"{', '.join(ranking_limits(a))}; and what can it realistically be expected to "
        "produce?")]
    facts = [("Site", site.name), ("Summary made", stamp),
             ("Assessor", assessor or "(not given)"),
             ("Air density", f"{doc['site']['air_density_kgm3']:.4f} kg/m³"),
             ("Site file SHA-256", doc["site"]["site_file_sha256"])]
    q.append(Table("facts", ("Item", "Value"), tuple(facts), ("l", "l")))
    if site.notes.strip():
        q.append(Paragraph("Site notes: " + site.notes.strip(), "note"))
    if notes.strip():
        q.append(Paragraph("Assessor's notes: " + notes.strip(), "note"))
    return Section("question", "The question", tuple(q))


def _objective(a, records) -> tuple[str, bool, str]:
    """(column, larger is better, label) of the ranking objective."""
    objective = a.ranking.objective
    col, larger = OBJECTIVE_COLUMNS[objective]
    if not any(col in r for r in records):
        return "aep_kwh", True, "net energy"
    return col, larger, OBJECTIVE_WORDS[objective][1]


def _excluded_better(records, reasons, best, col, larger, label) -> str:
    """The sentence on excluded combinations (and the best of them that would score better)."""
    excluded = [r for r in records if r.get("excluded")]
    v_best = best.get(col)
    why_out = {r["rank"]: reasons[i] for i, r in enumerate(records)}
    better = [r for r in excluded if finite(r.get(col)) and finite(v_best)
              and ((float(r[col]) > float(v_best)) if larger else
                   (float(r[col]) < float(v_best)))]
    text = (f"{len(excluded)} combination(s) were excluded (their reasons are listed after "
            "the ranking).")
    if better:
        text += (f" {len(better)} of them would score better by {label}; the best of "
                 "those: " + ". ".join(
                     f"{r['turbine_id']} at {r['position_id']} ({format_cell(col, r[col])})"
                     f" is out because {'; '.join(why_out[r['rank']] or r.get('flags') or [])}"
                     for r in better[:2]) + ".")
    return text


def _why(records, eligible, reasons, best, col, larger, label) -> list:
    val = format_cell(col, best.get(col))
    why = [f"It ranks first of {len(eligible)} eligible combinations by {label} ({val})."
           if len(eligible) > 1 else f"It is the only eligible combination ({label} {val})."]
    if len(eligible) > 1:
        second = eligible[1]
        a1, a2 = best.get(col), second.get(col)
        if finite(a1) and finite(a2) and float(a2) != 0:
            diff = (float(a1) - float(a2)) / abs(float(a2))
            word = "more" if diff >= 0 else "less"
            why.append(f"The next best, {second['turbine_id']} at {second['position_id']}, has "
                       f"{label} {format_cell(col, a2)}; the leading one has "
                       f"{abs(diff):.1%} {word}.")
    why.append(f"Its hub stands {format_cell('hub_height_m', best['hub_height_m'])} m above "
               f"ground, where the mean wind speed is "
               f"{format_cell('mean_speed_ms', best['mean_speed_ms'])} m/s"
               + (f" ({format_cell('speedup', best['speedup'])} times the undisturbed flow)"
                  if finite(best.get("speedup")) else "") + ".")
    if any(r.get("excluded") for r in records):
        why.append(_excluded_better(records, reasons, best, col, larger, label))
    if best.get("flags"):
        why.append("Notes on this position: " + "; ".join(best["flags"]) + ".")
    return why


def recommendation(evaluation, records) -> tuple[dict | None, list]:
    """(best eligible record or None, blocks of the recommendation section)."""
    a = evaluation.assessment
    reasons = exclusion_reasons(evaluation.table, a.ranking)
    eligible = [r for r in records if not r.get("excluded")]
    col, larger, label = _objective(a, records)
    if not eligible:
        return None, [Paragraph(
            "No position is recommended: every position and turbine combination fails at least "
            "one constraint (see the reasons after the ranking). Relax a constraint only with "
            "good reason, or look for other positions.", "caution")]
    best = eligible[0]
    lines = [Paragraph(
        f"{headline_for(evaluation)} Leading option: {best['turbine_id']} at "
        f"{best['position_id']} (rank {best['rank']}), "
        f"with {format_cell('aep_kwh', best['aep_kwh'])} kWh of net energy a year"
        + (f" (P90 {format_cell('p90_aep_kwh', best['p90_aep_kwh'])} kWh)"
           if finite(best.get("p90_aep_kwh")) else "")
        + f" and a capacity factor of {format_cell('capacity_factor', best['capacity_factor'])}."),
        Bullets(tuple(_why(records, eligible, reasons, best, col, larger, label)))]
    cf = best.get("capacity_factor")
    if finite(cf) and float(cf) > CF_ALARM and best.get("kind") != "mast":
        lines.append(Paragraph(
            f"Check before relying on it: a capacity factor of {fmt_percent(cf)} is high for a "
            f"building-mounted turbine. {FIELD_TRIALS} Measure on site to confirm.", "caution"))
    else:
        lines.append(Paragraph(FIELD_TRIALS, "note"))
    return best, lines


def _grouped_notes(evaluation, records) -> tuple:
    """Exclusion reasons per excluded row, and each piece of advice once with where it applies.

    Advice comes from the building models per position, so the same words would repeat on
    every turbine's row: each text is listed once with the positions (and turbines) it
    concerns.
    """
    reasons = exclusion_reasons(evaluation.table, evaluation.assessment.ranking)
    by_rank = {int(r): rs for r, rs in zip(evaluation.table["rank"], reasons)}
    out_rows = tuple((str(r["rank"]), r["position_id"], r["turbine_id"],
                      "; ".join(by_rank.get(int(r["rank"]), [])) or DASH)
                     for r in records if r.get("excluded"))
    n_turbines = len({r["turbine_id"] for r in records})
    advice = {}
    for r in records:
        for f in r.get("flags") or []:
            if f not in by_rank.get(int(r["rank"]), []):
                advice.setdefault(f, {}).setdefault(r["position_id"], []).append(r["turbine_id"])
    adv_rows = tuple((text, "; ".join(
        p + ("" if len(ts) == n_turbines else f" ({', '.join(ts)})") for p, ts in where.items()))
        for text, where in advice.items())
    blocks = []
    if out_rows:
        blocks.append(Table("exclusions", ("Rank", "Position", "Turbine", "Why excluded"),
                            out_rows, ("r", "l", "l", "l"), "The constraints each excluded "
                            "combination fails, with the numbers behind them.",
                            title="Why combinations were excluded"))
    if adv_rows:
        blocks.append(Table("advice", ("Advice", "Applies to"), adv_rows, ("l", "l"),
                            "Each note once, with the positions it concerns (every turbine "
                            "there unless turbines are named).", title="Advice on positions"))
    return tuple(blocks)


def _ranking(evaluation, records, centre) -> tuple[Section, list]:
    cols = ["rank", "position_id", "turbine_id", "hub_height_m", "mean_speed_ms", centre]
    if any("p90_aep_kwh" in r for r in records):
        cols.append("p90_aep_kwh")
    cols += ["capacity_factor", "status"]
    for r in records:
        r["status"] = "excluded" if r.get("excluded") else "eligible"
    caption = ("Every position and turbine combination, best first; excluded ones are ranked "
               "last. Their reasons, and advice on the positions, follow.")
    if centre == "aep_kwh":
        caption += (" Net energy is the central (P50) estimate after losses; no P90 was "
                    "computed for this site.")
    blocks = (records_table("ranking", records, cols, caption),) + _grouped_notes(
        evaluation, records)
    return Section("ranking", "Ranked positions", blocks), cols


#: The money a client reads in the body, in this order (the cost split, the support-free NPV
#: and the discounted payback are in the data files and the appendix's ranked table).
MONEY_COLUMNS = ("verdict", "installed_cost", "self_consumed_share", "npv", "payback_years",
                 "lcoe_per_kwh", "break_even_import_price", "co2_avoided_kg_per_year")


#: Most rows of the body's cost table (the ranking files hold every row).
COST_TABLE_ROWS = 10


def _costs(a, records, raw) -> tuple[Section, list]:
    present = {c for r in records for c in r}
    cost_cols = [c for c in MONEY_COLUMNS if c in present]
    e = a.economics
    econ = Paragraph(
        f"Money in {e.currency}: tariff {e.tariff_per_kwh:g} per kWh, operation and maintenance "
        f"{e.om_cost_per_year:g} a year, discount rate {e.discount_rate:.1%}, lifetime "
        f"{e.lifetime_years:g} years, grid emission factor {e.emission_factor_kg_per_kwh:g} "
        "kg CO2 per kWh.")
    turb_costs = Table("turbine-costs", ("Turbine", "Name", "Rated power (kW)",
                                          f"Installed cost ({e.currency})"),
                       tuple((t.id, t.name, fmt_fixed(t.rated_power_w / 1000.0, 2),
                              fmt_fixed(t.installed_cost, 0)) for t in a.turbines),
                       ("l", "l", "r", "r"))
    if cost_cols:
        # The allowed combinations first, then the best-ranked excluded ones, up to
        # COST_TABLE_ROWS rows; every row's money is in the attached ranking files.
        order = sorted(range(len(records)), key=lambda i: (bool(records[i].get("excluded")), i))
        keep = sorted(order[:COST_TABLE_ROWS])
        left = len(records) - len(keep)
        note = (f" {left} more excluded combination(s) are in the attached ranking files."
                if left else "")
        blocks = (econ, records_table(
            "costs", [records[i] for i in keep], ["rank", "position_id", "turbine_id"]
            + cost_cols,
            f"Cost metrics per combination ({e.currency}), the allowed ones first. A payback of "
            "\"never\" means the yearly income does not cover operation and maintenance." + note,
            raw=[raw[i] for i in keep], currency=e.currency), turb_costs)
    else:
        blocks = (econ, turb_costs, Paragraph(
            "No cost metrics (cost of energy, payback) were computed for this site.", "note"))
    return Section("costs", "Cost metrics", blocks), cost_cols


def _charts(evaluation, best, with_charts) -> Section:
    if with_charts:
        from engine.report import static_charts
        figs = static_charts.summary_figures(
            evaluation, best["position_id"] if best else None,
            best["turbine_id"] if best else None)
        blocks = tuple(FigureBlock(f) for f in figs)
    else:
        blocks = (Paragraph("Charts were left out of this summary.", "note"),)
    return Section("charts", "Charts", blocks)


def _quality(a, best, records, centre, series=()) -> Section:
    c, u = a.climate, with_climate(a.uncertainty, a.climate)
    lt_from = (" (the long-term correction's own)" if u is not a.uncertainty else "")
    qual = [Table("climate", ("Item", "Value"), (
        ("Climate source", c.source),
        ("Description", c.label or DASH),
        ("Reference height", f"{c.height_m:g} m"),
        ("Reference roughness length", f"{c.roughness_m:g} m"),
        ("Sectors", str(c.n_sectors)),
        ("Measured record", (f"{c.record_file} (SHA-256 {c.record_sha256})"
                             if c.record_file else "none: the climate is a table")),
        ("Monthly mean speeds", "given" if c.monthly_mean_ms else "not given"),
        ("Measured at", (f"position {c.position_id}: used there as measured, referred to the "
                         "free stream for the others" if c.measured_at == "position"
                         else "a reference, carried to every position")),
        ("Measured turbulence", ("per sector, used at the logger's position"
                                 if c.turbulence_intensity else "none: modelled")),
        ("Spot readings", str(len(a.spot_readings))),
    ), ("l", "l"))]
    unc_rows = (("Wind data (measurement)", fmt_percent(u.speed_data), "of mean speed"),
                ("Long-term representativeness" + lt_from, fmt_percent(u.speed_long_term),
                 "of mean speed"),
                ("Transfer to the site", fmt_percent(u.speed_transfer), "of mean speed"),
                ("Building flow model", fmt_percent(u.speed_building_model), "of mean speed"),
                ("Power curve", fmt_percent(u.energy_power_curve), "of energy"))
    qual.append(Table("uncertainty", ("Source of uncertainty", "One sigma", "As a share"),
                      unc_rows, ("l", "r", "l")))
    if c.measured_at == "position":
        qual.append(Paragraph(
            f"At {c.position_id}, where the wind was measured, the P-values leave out the "
            "transfer and building-flow terms: the long-term corrected record stands in for "
            "both there. Every other position keeps them." if c.long_term_uncertainty > 0 else
            f"The wind was measured at {c.position_id}, but the record is not long-term "
            "corrected: its P-values keep the transfer and building-flow terms until it is."))
    if best and finite(best.get("p90_aep_kwh")) and finite(best.get(centre)) \
            and float(best[centre]) > 0:
        ratio = float(best["p90_aep_kwh"]) / float(best[centre])
        qual.append(Paragraph(
            f"For the leading combination P90 is {ratio:.0%} of P50: nine years in ten "
            f"should give at least {format_cell('p90_aep_kwh', best['p90_aep_kwh'])} kWh."))
    elif centre == "aep_kwh":
        qual.append(Paragraph(
            "These uncertainties are inputs; this installation did not compute a P90 from them, "
            "so the ranking shows central estimates only.", "note"))
    qual.extend(series)
    high = [r for r in records if not r.get("excluded") and finite(r.get("capacity_factor"))
            and float(r["capacity_factor"]) > CF_ALARM and r.get("kind") != "mast"]
    if high:
        qual.append(Paragraph(
            f"{len(high)} eligible building-mounted combination(s) have a capacity factor above "
            f"{CF_ALARM:.0%}, above field-trial experience; treat them with caution.", "caution"))
    return Section("quality", "Data quality and uncertainty", tuple(qual))


def _cautions(assessor) -> Section:
    blank = "_" * 28
    return Section("cautions", "Cautions", (
        Bullets(caution_lines()),
        Paragraph("Sign-off: the assessor confirms that the inputs describe the site as "
                  "surveyed and that the client has been given these cautions."),
        Table("sign-off", ("Item", "Value"), (
            ("Assessor", assessor or blank), ("Date", blank), ("Signature", blank)),
              ("l", "l"))))


def build_summary(evaluation, assessor: str = "", notes: str = "", generated_at=None,
                  with_charts: bool = True, record=None) -> Summary:
    """The siting summary's content for an evaluated site.

    Parameters
    ----------
    evaluation : :class:`engine.chain.pipeline.Evaluation`
    assessor : name of the person responsible; the site file's ``site.assessor`` when empty
    notes : the assessor's notes for this summary (the site file's notes are shown too)
    generated_at : time stamp (datetime or ISO 8601 text; UTC when naive); the current time,
        or ``SOURCE_DATE_EPOCH`` when set, if None. The only value that may differ between two
        summaries of the same site file.
    with_charts : include the charts (drawing them takes about a second)
    record : None, or (time_ns, speed_ms, direction_deg) arrays of the climate's record (its
        valid rows at the climate's height [UTC ns, m/s, deg]; for a long-term corrected
        climate, the predicted series): the leading option's time-series yield is then shown
        beside its Weibull yield (:mod:`engine.report.series_check`)

    Returns
    -------
    Summary
        Sections in the order of :data:`engine.report.content.SECTION_KEYS`: the body
        numbered, the appendix lettered; every number formatted.
    """
    a = evaluation.assessment
    doc = rank_document(evaluation)
    records = [dict(r) for r in doc["positions"]]
    raw = evaluation.table.to_dict("records")
    stamp = timestamp(generated_at)
    sha = doc["site"]["site_file_sha256"]
    assessor = (assessor or a.site.assessor or "").strip()
    centre = "p50_aep_kwh" if any("p50_aep_kwh" in r for r in records) else "aep_kwh"
    best, rec_blocks = recommendation(evaluation, records)
    ranking, shown = _ranking(evaluation, records, centre)
    costs, cost_cols = _costs(a, records, raw)
    body = [Section("answer", "The answer", tuple(Paragraph(t) for t in answer_for(evaluation))),
            _question(a, doc, stamp, assessor, notes),
            Section("recommendation", "Leading option and why", tuple(rec_blocks)),
            ranking, costs, _charts(evaluation, best, with_charts),
            _quality(a, best, records, centre, series_blocks(evaluation, best, record)),
            _cautions(assessor)]
    extra, attachments = appendix.appendix_sections(
        evaluation, records, raw, set(shown) | set(cost_cols), doc, stamp, assessor, notes,
        ranking_limits(a))
    return Summary(title=f"Siting summary: {a.site.name}", site_name=a.site.name,
                   generated_at=stamp, assessor=assessor, site_sha256=sha, version=__version__,
                   cautions_short=CAUTIONS_SHORT, sections=numbered(body + extra),
                   attachments=attachments, rank_document=doc)
