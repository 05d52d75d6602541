"""The summary's appendix (lettered sections): inputs as entered, further results, methods,
reproducibility and the data files, for a colleague who checks or redoes the work."""
from __future__ import annotations

import json

from engine.core import __version__
from engine.core.model import BETZ_CP
from engine.io import sitefile
from engine.report.content import Attachment, Bullets, Paragraph, Section, Table
from engine.report.exports import export_files, library_versions, reproduce_command
from engine.report.formats import DASH, fmt_fixed, records_table
from engine.report.inputs import input_tables
from engine.report.words import OBJECTIVE_WORDS, methods_table, transfer_words

#: Columns shown in the body or as row keys, never repeated under further results.
ROW_KEYS = {"position_id", "turbine_id", "rank", "flags", "status", "excluded"}
#: Result columns per table in the further results (so a table fits the page width).
PER_POSITION_CHUNK = 6
PER_ROW_CHUNK = 5


def _positions(a) -> Section:
    pos_rows = tuple((p.id, p.kind, p.building_id or (" / ".join(p.gap_buildings) or DASH),
                      fmt_fixed(p.x_m, 1), fmt_fixed(p.y_m, 1), fmt_fixed(p.mast_height_m, 1),
                      fmt_fixed(a.hub_height_m(p), 1), p.note or DASH) for p in a.positions)
    b_rows = tuple((b.id, fmt_fixed(b.x_m, 1), fmt_fixed(b.y_m, 1), fmt_fixed(b.length_m, 1),
                    fmt_fixed(b.width_m, 1), fmt_fixed(b.height_m, 1),
                    fmt_fixed(b.orientation_deg, 0),
                    b.roof_type + (f" {b.roof_pitch_deg:g}°" if b.roof_type == "pitched" else ""),
                    fmt_fixed(b.parapet_height_m, 1)) for b in a.buildings)
    t_rows = tuple((t.id, t.name, t.axis, fmt_fixed(t.rated_power_w / 1000.0, 2),
                    fmt_fixed(t.rotor_diameter_m, 2), fmt_fixed(t.area_m2, 2),
                    f"{t.cut_in_ms:g} / {t.rated_speed_ms:g} / {t.cut_out_ms:g}",
                    t.iec_class, fmt_fixed(t.sound_power_db, 1)) for t in a.turbines)
    return Section("positions", "Positions, buildings and turbines", (
        Table("positions", ("Position", "Kind", "On / between", "East (m)", "North (m)",
                            "Mast (m)", "Hub (m)", "Note"), pos_rows,
              ("l", "l", "l", "r", "r", "r", "r", "l")),
        Table("buildings", ("Building", "East (m)", "North (m)", "Length (m)", "Width (m)",
                            "Height (m)", "Bearing (°)", "Roof", "Parapet (m)"), b_rows,
              ("l", "r", "r", "r", "r", "r", "r", "l", "r")),
        Table("turbines", ("Turbine", "Name", "Axis", "Rated (kW)", "Rotor (m)",
                           "Swept area (m²)", "Cut-in / rated / cut-out (m/s)", "IEC class",
                           "Sound power (dB(A))"), t_rows,
              ("l", "l", "l", "r", "r", "r", "r", "l", "r"))))


def _further(a, records, raw, shown) -> Section:
    """Every other result column: per position where it does not depend on the turbine
    (building diagnostics), else per combination; in tables narrow enough for a page."""
    skip = set(shown) | ROW_KEYS
    extra = [c for c in (records[0].keys() if records else []) if c not in skip]
    first_rows = {}
    for r, w in zip(records, raw):
        first_rows.setdefault(r["position_id"], (r, w))

    def same(c):
        return all(json.dumps(r.get(c), sort_keys=True) == json.dumps(
            first_rows[r["position_id"]][0].get(c), sort_keys=True) for r in records)

    per_position = [c for c in extra if same(c)]
    per_row = [c for c in extra if c not in per_position]
    order = [p.id for p in a.positions if p.id in first_rows]
    pos_records = [first_rows[i][0] for i in order]
    pos_raw = [first_rows[i][1] for i in order]
    further = []
    n = PER_POSITION_CHUNK
    for i in range(0, len(per_position), n):
        further.append(records_table(
            f"further-position-{i // n + 1}", pos_records, ["position_id"] + per_position[i:i + n],
            "Per position (the same for every turbine)." if i == 0 else "", raw=pos_raw))
    n = PER_ROW_CHUNK
    for i in range(0, len(per_row), n):
        further.append(records_table(
            f"further-row-{i // n + 1}", records,
            ["rank", "position_id", "turbine_id"] + per_row[i:i + n],
            "Per position and turbine." if i == 0 else "", raw=raw))
    if not further:
        further.append(Paragraph("No further results.", "note"))
    return Section("further", "Further results", tuple(further))


def _methods(a, air_density, limits) -> Section:
    site, c, lo, rs = a.site, a.climate, a.losses, a.ranking
    transfer = getattr(a, "transfer", None)
    assumptions = (
        f"Air density {air_density:.4f} kg/m³ from altitude "
        f"{site.altitude_m:g} m and mean temperature {site.air_temperature_c:g} °C"
        + (f" with measured pressure {site.air_pressure_pa:g} Pa." if site.air_pressure_pa
           else " with standard-atmosphere pressure."),
        f"Reference climate at {c.height_m:g} m over roughness {c.roughness_m:g} m, carried to "
        + ("the site with roughness and displacement derived from its building morphometry"
           if getattr(transfer, "use_morphometry", False) else
           f"the site's roughness {site.terrain_roughness_m:g} m and displacement "
           f"{site.displacement_m:g} m")
        + transfer_words(transfer) + ".",
        "Power curves are as published at 1.225 kg/m³; the power coefficient can never exceed "
        f"the Betz limit {BETZ_CP:.3f}.",
        "Energy by the method of bins over 0.5 m/s bins up to 40 m/s and 8760 hours a year.",
        f"Losses multiplied: availability loss (downtime) {lo.availability:.1%}, electrical "
        f"{lo.electrical:.1%}, icing {lo.icing:.1%}, cut-out hysteresis "
        f"{lo.cut_out_hysteresis:.1%}, other {lo.other:.1%}.",
        f"Ranking objective: {OBJECTIVE_WORDS[rs.objective][1]}; constraints: "
        f"{', '.join(limits)}.",
    )
    return Section("methods", "Assumptions and methods", (Bullets(assumptions),
                                                          methods_table()))


def _inputs(a) -> Section:
    return Section("inputs", "Inputs as entered", (Paragraph(
        "Every value of the site file, as entered (the attached site file holds the same "
        "values)."),) + input_tables(sitefile.assessment_to_dict(a)))


def _reproducibility(a, sha, stamp, assessor, notes) -> Section:
    return Section("reproducibility", "Reproducibility", (
        Table("reproduce", ("Item", "Value"), (
            ("Tool", f"perch {__version__}"),
            ("Libraries", library_versions()),
            ("Site file SHA-256", sha),
            ("Summary made", stamp),
            ("To reproduce", reproduce_command(a.site.name, stamp, assessor, a.site.assessor,
                                               notes)),
        ), ("l", "l")),
        Paragraph("The chain has no random parts: the same site file with the same tool and "
                  "libraries gives the same numbers, and the same time stamp the same summary. "
                  "Save the attached site file and run the command above; every input is "
                  "listed under \"Inputs as entered\".")))


def _data(evaluation) -> tuple[Section, tuple]:
    files = export_files(evaluation)
    attachments = tuple(Attachment(n, m, b, d) for n, (m, b, d) in files.items())
    return Section("data", "Data files", (
        Table("files", ("File", "What", "Size (bytes)"),
              tuple((x.name, x.description, str(len(x.data))) for x in attachments),
              ("l", "l", "r"),
              "Carried inside this summary: links in the HTML, attachments in the PDF."),)), \
        attachments


def appendix_sections(evaluation, records, raw, shown, doc, stamp, assessor, notes,
                      limits) -> tuple[list, tuple]:
    """(appendix sections in order, attachments) of a summary."""
    a = evaluation.assessment
    data, attachments = _data(evaluation)
    return [_positions(a), _further(a, records, raw, shown),
            _methods(a, doc["site"]["air_density_kgm3"], limits), _inputs(a),
            _reproducibility(a, doc["site"]["site_file_sha256"], stamp, assessor, notes),
            data], attachments
