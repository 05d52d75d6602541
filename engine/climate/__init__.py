"""The wind climate: quality control of a record, per-sector Weibull fits, long-term correction
(measure-correlate-predict), Weibull closed forms and air density.

Above :mod:`engine.io` (it reads records) and below :mod:`engine.flow` (which carries the
climate to each hub height): its product is an :class:`engine.core.model.WindClimate`.
"""
from engine.climate import air, fit, mcp, qc, sectors, weibull
from engine.climate.fit import (ClimateSummary, climate_from_mean_speed, climate_from_record,
                                climate_from_series, climate_from_table)
from engine.climate.mcp import long_term_climate, mcp_long_term
from engine.climate.qc import run_qc

__all__ = ["air", "fit", "mcp", "qc", "sectors", "weibull", "ClimateSummary", "climate_from_mean_speed",
           "climate_from_record", "climate_from_series", "climate_from_table",
           "long_term_climate", "mcp_long_term", "run_qc"]
