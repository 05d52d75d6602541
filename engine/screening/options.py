"""The screening's model options as one request: per-sector surroundings and their fetch,
the upwind neighbours' wakes, and the tile size; and the variants that show their effect.

:func:`with_options` checks the options together (one :class:`InputError` naming each
field) and gives the context to screen with; :func:`screen_with_options` screens a table
whole or in tiles; :func:`option_variants` lists the simpler models beside the chosen one
(without the wakes, then without the per-sector surroundings), so a page can show what each
option does to the classes (:func:`class_shares`).
"""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from engine.core.errors import InputError, Problems
from engine.screening.settings import CLASSES, ScreeningContext


@dataclass(frozen=True)
class ScreeningOptions:
    """What the assessor chose; None keeps the context's own value (the engine default)."""

    #: Surroundings per direction sector from the buildings upwind (``transfer.
    #: sector_morphometry``).
    sector_morphometry: bool | None = None
    #: Radius of the upwind wedge [m] (``transfer.sector_fetch_m``).
    sector_fetch_m: float | None = None
    #: Wakes of the upwind neighbours slow the wind at the hub (``screening.upwind_shelter``;
    #: acts only with per-sector surroundings, whose buildings it uses).
    upwind_shelter: bool | None = None
    #: Side of the square tiles [m]; the whole table at once when None.
    tile_m: float | None = None


def with_options(ctx: ScreeningContext, options: ScreeningOptions) -> ScreeningContext:
    """The context with ``options`` applied; :class:`InputError` lists every bad field.

    Fields are named ``sector_fetch_m``, ``upwind_shelter``, ``tile_m`` (as
    :class:`ScreeningOptions`), with the rule and the value.
    """
    from engine.screening.tiled import check_tile_size
    p = Problems()
    transfer, settings = ctx.transfer, ctx.settings
    try:
        transfer = replace(transfer, **{k: v for k, v in (
            ("sector_morphometry", options.sector_morphometry),
            ("sector_fetch_m", options.sector_fetch_m)) if v is not None})
    except InputError as e:
        for where, msg in e.problems:
            p.add(where.rsplit(".", 1)[-1], msg)
    if options.upwind_shelter is not None:
        settings = replace(settings, upwind_shelter=options.upwind_shelter)
    if options.tile_m is not None:
        if not transfer.sector_morphometry:
            p.add("tile_m", f"needs per-sector surroundings on (its halo is the sector fetch), "
                            f"got tiles of {options.tile_m} m with them off; turn them on or "
                            "screen the table whole")
        elif not p.items:
            try:
                check_tile_size(options.tile_m, transfer.sector_fetch_m, "tile_m")
            except InputError as e:
                p.items.extend(e.problems)
    p.raise_if_any()
    return replace(ctx, transfer=transfer, settings=settings)


def screen_with_options(source, ctx: ScreeningContext, options: ScreeningOptions,
                        progress=None):
    """Screen ``source`` (a CSV or Parquet path) with ``options``: whole, or in tiles.

    Returns the :class:`engine.screening.passes.ScreeningResult` of
    :func:`engine.screening.screen_local` or, with ``options.tile_m``,
    :func:`engine.screening.tiled.screen_tiled`.
    """
    from engine.screening.local import screen_local
    from engine.screening.tiled import read_table_frame, screen_tiled
    use = with_options(ctx, options)
    if options.tile_m is None:
        return screen_local(source, use, progress=progress)
    frame, first_line = read_table_frame(source)
    return screen_tiled(frame, use, tile_m=float(options.tile_m), first_line=first_line)


def option_variants(ctx: ScreeningContext, options: ScreeningOptions) -> list:
    """(label, options) of the chosen model and the simpler ones beside it.

    The chosen one first; then, when the wakes act, the same without them; then, when the
    per-sector surroundings are on, the plain model (surroundings averaged over every
    direction, no wakes). Tiles are kept: they change no result.
    """
    sectors = (ctx.transfer.sector_morphometry if options.sector_morphometry is None
               else options.sector_morphometry)
    shelter = (ctx.settings.upwind_shelter if options.upwind_shelter is None
               else options.upwind_shelter)
    out = [("as chosen", options)]
    if sectors and shelter:
        out.append(("without the upwind wakes", replace(options, upwind_shelter=False)))
    if sectors:
        out.append(("surroundings averaged over all directions, no wakes",
                    replace(options, sector_morphometry=False, upwind_shelter=False,
                            tile_m=None)))
    return out


def class_shares(table) -> dict:
    """Share of the screened buildings in each class of :data:`CLASSES` [-] (0 when none)."""
    got = np.asarray(table["suitability"], dtype=object)
    n = len(got)
    return {c: (float(np.count_nonzero(got == c)) / n if n else 0.0) for c in CLASSES}
