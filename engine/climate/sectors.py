"""Direction sectors: which sector each record falls in, and per-sector counts and sums of a
long record in one cache-friendly pass.

Sector ``i`` of ``n`` is centred on ``i * 360 / n`` degrees, 360° (north) is sector 0. Every
part of the engine that bins directions (climate fits, long-term correction, spot readings)
uses :func:`sector_index`, so a direction on a sector edge lands in the same sector everywhere.
"""
from __future__ import annotations

import numpy as np

from engine.core.errors import InputError


def sector_index(direction_deg, n_sectors: int) -> np.ndarray:
    """Sector of each direction, sector ``i`` centred on ``i * 360 / n`` degrees [-].

    Notes
    -----
    i = floor((θ mod 360) / w + 1/2) mod n, w = 360/n; 360° is north (sector 0). Taken as
    i = (h + 1) // 2 with the half-sector h = floor(θ · 2n / 360), which is the same number
    without the rounding of adding 1/2 in floating point.
    """
    d = np.asarray(direction_deg, float)
    if d.size and (d.min() < 0.0 or d.max() > 360.0):
        d = np.mod(d, 360.0)
    # int32: half the cast's cost of intp; sector counts are far below its range.
    half = (d * (2 * n_sectors / 360.0)).astype(np.int32)
    half += 1
    half >>= 1
    np.putmask(half, half >= n_sectors, 0)
    return half


#: Rows per block of :func:`sector_sums`: its scratch arrays (about 32k rows x 8 bytes) stay in
#: the processor's cache, where whole-record temporaries would each be fresh memory.
SECTOR_BLOCK_ROWS = 32768
#: Sub-sector bins per sector in :func:`sector_sums` (a power of two, at least 2). Consecutive
#: records of a real record mostly fall in the same sector, and one running sum per sector
#: makes each addition wait for the previous one; narrower bins spread neighbouring records over
#: several sums, which then overlap. The sub-bins are added up per sector at the end.
SECTOR_SUBBINS = 16


def sector_sums(speed_ms, direction_deg, n_sectors: int, index_out=None):
    """Records, sum of V and sum of V³ per direction sector, in one blocked pass.

    Parameters
    ----------
    speed_ms : (N,) speeds [m/s]
    direction_deg : (N,) directions the wind comes from [deg]; values outside 0–360 are
        taken modulo 360
    n_sectors : number of sectors, sector ``i`` centred on ``i * 360 / n`` degrees
    index_out : optional (N,) intp array that receives each record's sector, as
        :func:`sector_index` gives it

    Returns
    -------
    counts : (n,) int64 records per sector [-]
    sum_v : (n,) float sum of speeds per sector [m/s]
    sum_v3 : (n,) float sum of cubed speeds per sector [m³/s³]

    Raises
    ------
    InputError
        when a direction is NaN or infinite (the quality control excludes those records)

    Notes
    -----
    Same sectors as :func:`sector_index`. With L = :data:`SECTOR_SUBBINS` a power of two, the
    records are counted in sub-bins j = floor(θ · nL / 360) = floor((L/2) h'), h' = θ · 2n / 360
    (the scaling by L/2 is exact in floating point), and sub-bin j belongs to sector
    floor((j + L/2) / L) = floor((h' + 1) / 2), the sector of :func:`sector_index`. For
    0 ≤ θ ≤ 360, j runs from 0 to nL; sector n (the half-sector below 360°) is folded into sector
    0 at the end. The record is taken in blocks of :data:`SECTOR_BLOCK_ROWS` with preallocated
    scratch arrays that stay in cache; the totals are those of ``np.bincount`` over the whole
    record up to the order of the additions.
    """
    v = np.asarray(speed_ms, float)
    d = np.asarray(direction_deg, float)
    if v.shape != d.shape or v.ndim != 1:
        raise ValueError(f"speed_ms and direction_deg must be 1-D of one length, got "
                         f"{v.shape} and {d.shape}")
    n = int(n_sectors)
    sub = SECTOR_SUBBINS
    shift = sub.bit_length() - 1
    if sub < 2 or sub != 1 << shift:
        raise ValueError(f"SECTOR_SUBBINS must be a power of two of at least 2, got {sub}")
    half = sub // 2
    top = n * sub  # the sub-bin of 360 deg; a larger one means a direction beyond 360
    width = top + half  # sub-bins 0 .. top + half - 1 (top + half is the next sector's start)
    total = v.size
    counts = np.zeros(width, np.int64)
    sum_v = np.zeros(width)
    sum_v3 = np.zeros(width)
    block = max(1, min(SECTOR_BLOCK_ROWS, total))
    q_buf = np.empty(block)
    i_buf = np.empty(block, np.intp)
    c_buf = np.empty(block)
    scale = n * sub / 360.0  # exactly L/2 times 2n/360
    for a in range(0, total, block):
        m = min(block, total - a)
        vb, db = v[a:a + m], d[a:a + m]
        q, idx, cube = q_buf[:m], i_buf[:m], c_buf[:m]
        counts += _sub_bin_counts(db, scale, width, top, q, idx, first_row=a)
        sum_v += np.bincount(idx, vb, minlength=width)
        np.multiply(vb, vb, out=cube)
        cube *= vb
        sum_v3 += np.bincount(idx, cube, minlength=width)
        if index_out is not None:
            out = index_out[a:a + m]
            np.add(idx, half, out=out)
            out >>= shift
    if index_out is not None and total:
        np.putmask(index_out, index_out >= n, 0)
    return tuple(_fold_sub_bins(x, n, sub) for x in (counts, sum_v, sum_v3))


def _sub_bin_counts(db, scale, width, top, q, idx, first_row):
    """Sub-bin of each direction of one block into ``idx`` (scratch ``q``), and the counts.

    The fast path casts θ · scale straight to integers; a direction below 0, above 360 or not
    finite takes the modulo path, and one that is not finite is an input problem.
    """
    np.multiply(db, scale, out=q)
    cnt = None
    if q.max() < width:  # False for NaN too; keeps the cast and the counts small
        idx[...] = q  # float to integer truncates toward zero
        try:
            cnt = np.bincount(idx, minlength=width)
        except ValueError:  # a negative sub-bin: a direction below -w/L
            cnt = None
    if cnt is None or cnt[top + 1:].any():
        if not np.all(np.isfinite(db)):
            m = db.size
            raise InputError([("direction_deg", f"has a missing or infinite value in rows "
                                                f"{first_row + 1}-{first_row + m}; remove "
                                                "those records or run the quality control "
                                                "first")])
        np.multiply(np.mod(db, 360.0), scale, out=q)
        idx[...] = q
        cnt = np.bincount(idx, minlength=width)
    return cnt


def _fold_sub_bins(x, n, sub):
    """Sums over sub-bins to sums over the n sectors (the half-sector below 360° into 0)."""
    half = sub // 2
    per = np.concatenate([np.zeros(half, x.dtype), x]).reshape(n + 1, sub).sum(axis=1)
    per[0] += per[n]
    return per[:n]
