"""Portfolio screening: which of many roofs are worth a visit?

Place in the chain: above :mod:`engine.chain` (it calls the chain's array entry point,
:mod:`engine.chain.arrays`, the steps the detailed assessment's
:func:`engine.chain.pipeline.evaluate` shares) and below :mod:`engine.report` and
:mod:`engine.cli`, which present and drive it. It never imports a charting library.

One pass over a buildings table (CSV or Parquet, thousands to millions of rows):

1. **read and check** the table in parts (:mod:`~engine.screening.table`,
   :mod:`~engine.screening.checks`); bad rows are reported by id and line with the fix;
2. **surroundings** from the table itself (:mod:`~engine.screening.neighbourhood`): plan and
   frontal area fractions and mean height of the buildings around each one, turned into
   roughness length and displacement;
3. **one roof position per building**, at the roof's centre, on the shortest mast that keeps
   the largest chosen rotor clear of the roof's high-turbulence zone, then the **yield** of
   every chosen turbine and a **suitability class with reasons**
   (:mod:`~engine.screening.compute`, with :mod:`~engine.screening.settings`);
4. the same part functions (:mod:`~engine.screening.passes`) run in a plain loop
   (:mod:`~engine.screening.local`) or as Dask partitions
   (:mod:`~engine.screening.dask_engine`); sorted parts are merged in bounded blocks
   (:mod:`~engine.screening.merge`).

:func:`assessment_for_building` gives the detailed assessment of one screened building, whose
:func:`engine.chain.pipeline.evaluate` gives the same numbers.
"""
from engine.screening.checks import (check_part, duplicate_problems, local_metres,
                                     row_problems)
from engine.screening.compute import (RESULT_COLUMNS, choose_mast_m, empty_result,
                                      rank_results, result_columns, screen_chunk,
                                      screen_columns, screen_part, suitability,
                                      turbine_columns)
from engine.screening.dask_engine import screen_dask
from engine.screening.local import ranked_frame, screen_local, write_ranked_csv
from engine.screening.neighbourhood import (AREA_QUANTUM, CELL_M, HALF_CELLS, Neighbourhood,
                                            SURROUNDINGS_FROM, cell_index, cell_sums,
                                            combine_cell_sums, frontal_area_mean_m2,
                                            neighbourhood_lookup, part_cells, surroundings)
from engine.screening.passes import ScreeningResult, finish_table
from engine.screening.positions import (FootprintScreening, best_per_building,
                                        screen_footprints, screen_positions)
from engine.screening.settings import (CLASSES, SESSION_KEY, ScreeningContext,
                                       ScreeningSettings, assessment_for_building,
                                       context_from_assessment)
from engine.screening.table import (NUMERIC_LIMITS, PART_BYTES, PART_ROWS, Part, read_part,
                                    table_parts)

__all__ = [
    "AREA_QUANTUM", "CELL_M", "CLASSES", "FootprintScreening", "best_per_building",
    "screen_footprints", "screen_positions", "HALF_CELLS", "NUMERIC_LIMITS", "Neighbourhood",
    "PART_BYTES", "PART_ROWS", "Part", "RESULT_COLUMNS", "SESSION_KEY", "SURROUNDINGS_FROM",
    "ScreeningContext", "ScreeningResult", "ScreeningSettings", "assessment_for_building",
    "cell_index", "cell_sums", "check_part", "choose_mast_m", "combine_cell_sums",
    "context_from_assessment", "duplicate_problems", "empty_result", "finish_table",
    "frontal_area_mean_m2", "local_metres", "neighbourhood_lookup", "part_cells",
    "rank_results", "ranked_frame", "read_part", "result_columns", "row_problems",
    "screen_chunk", "screen_columns", "screen_dask", "screen_local", "screen_part",
    "suitability", "table_parts", "turbine_columns", "write_ranked_csv", "surroundings",
]
