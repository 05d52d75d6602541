"""Sound paths over the site's buildings: which building screens which hub from which receptor.

Each building is a box (a rectangle on the plan, flat top at its ``height_m``). A path from a
hub to a receptor is screened by a building when the straight line between them passes through
the box; the sound then diffracts over its roof edges, once (a single edge, e.g. the roof edge
of the building a turbine stands on) or twice (over both edges of a building between them,
ISO 9613-2 double diffraction with the roof depth ``e``). A building that contains the
receptor (a window on its own facade) does not screen it.

Sound also bends round the building's vertical edges (ISO 9613-2 section 7.4, eq. 13).
:func:`lateral_paths` gives, on each side of the line of sight, the path round the corner
with the shortest detour. That path is never longer than the taut path round the building,
so its path difference, and the screening it allows, is a lower bound: the sceptical side
for a neighbour.

References
----------
ISO 9613-2:1996, section 7.4 (screening: path difference z, equations 14, 16, 18).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: D_z caps of ISO 9613-2 section 7.4 [dB]: single and double diffraction.
DZ_MAX_SINGLE_DB = 20.0
DZ_MAX_DOUBLE_DB = 25.0


@dataclass(frozen=True)
class ScreeningPaths:
    """Geometry of the diffracted path over every building, arrays (P, R, B)."""

    blocked: np.ndarray  # the line of sight passes through the building
    double: np.ndarray   # over both roof edges (else one edge)
    dss_m: np.ndarray    # source to (first) diffraction edge
    dsr_m: np.ndarray    # (last) diffraction edge to receiver
    e_m: np.ndarray      # between the two edges (0 for one edge)
    z_m: np.ndarray      # path difference: dss + e + dsr - d
    source_inside: np.ndarray  # the hub is inside the building's footprint (on its roof)


def barrier_dz_db(dss_m, dsr_m, e_m, d_m, z_m, wavelength_m, double, cap=True):
    """Barrier attenuation D_z [dB] of diffraction over a top edge (ISO 9613-2 eq. 14).

    Parameters
    ----------
    dss_m, dsr_m : source to first edge, last edge to receiver [m]
    e_m : distance between the two edges of double diffraction [m] (0 for single)
    d_m : direct source-receiver distance [m]
    z_m : path difference [m]
    wavelength_m : λ at the band's nominal mid frequency [m]
    double : True for double diffraction
    cap : apply the caps (False for one of several paths whose sum is capped instead)

    Notes
    -----
    D_z = 10 lg[3 + (C_2/λ) C_3 z K_met], C_2 = 20; C_3 = 1 for single diffraction and
    C_3 = [1 + (5λ/e)²] / [1/3 + (5λ/e)²] for double (eq. 16);
    K_met = exp[-(1/2000) √(d_ss d_sr d / (2 z))] for z > 0, else 1 (eq. 18).
    D_z is capped at 20 dB (single) and 25 dB (double).

    References
    ----------
    ISO 9613-2:1996, section 7.4.
    """
    lam = np.asarray(wavelength_m, float)
    e = np.asarray(e_m, float)
    z = np.asarray(z_m, float)
    double = np.asarray(double, bool)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(e > 0, (5.0 * lam / np.where(e > 0, e, 1.0)) ** 2, np.inf)
        c3 = np.where(double & (e > 0), (1.0 + ratio) / (1.0 / 3.0 + ratio), 1.0)
        kmet = np.where(z > 0, np.exp(-np.sqrt(np.asarray(dss_m) * dsr_m * d_m
                                               / (2.0 * np.where(z > 0, z, 1.0))) / 2000.0), 1.0)
    arg = np.maximum(3.0 + 20.0 / lam * c3 * z * kmet, 1e-12)
    dz = 10.0 * np.log10(arg)
    return np.minimum(dz, np.where(double, DZ_MAX_DOUBLE_DB, DZ_MAX_SINGLE_DB)) if cap else dz


def segment_box_interval(p0_xy, p1_xy, buildings):
    """Where each plan segment p0→p1 runs inside each building's rectangle.

    ``p0_xy`` (P, 1, 2) and ``p1_xy`` (1, R, 2) broadcast; returns ``t_in``, ``t_out``
    (P, R, B) as fractions of the segment (``t_in >= t_out`` when it misses) and whether
    each end lies inside the rectangle (slab method).
    """
    cx = np.array([b.x_m for b in buildings], float)
    cy = np.array([b.y_m for b in buildings], float)
    th = np.radians([b.orientation_deg for b in buildings])
    half = np.array([[b.length_m / 2.0, b.width_m / 2.0] for b in buildings], float)  # (B, 2)
    axes = np.stack([np.stack([np.sin(th), np.cos(th)], -1),       # along the length side
                     np.stack([np.cos(th), -np.sin(th)], -1)], 1)  # (B, 2 axes, 2 xy)
    p0 = np.asarray(p0_xy, float)[..., None, None, :]  # (P, 1, 1, 1, 2)
    p1 = np.asarray(p1_xy, float)[..., None, None, :]
    centre = np.stack([cx, cy], -1)[:, None, :]        # (B, 1, 2)
    a0 = np.sum((p0 - centre) * axes, -1)              # (P, R, B, 2)
    da = np.sum((p1 - p0) * axes, -1)
    # A near-zero step (a subnormal coordinate difference) overflows to ±inf: the slab
    # method reads that as "parallel to the side", which it is to within rounding.
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        t1 = (-half - a0) / da
        t2 = (half - a0) / da
    lo = np.where(da == 0, np.where(np.abs(a0) <= half, -np.inf, np.inf), np.minimum(t1, t2))
    hi = np.where(da == 0, np.where(np.abs(a0) <= half, np.inf, -np.inf), np.maximum(t1, t2))
    t_in = np.clip(lo.max(-1), 0.0, 1.0)
    t_out = np.clip(hi.min(-1), 0.0, 1.0)
    first, last = lo.max(-1), hi.min(-1)
    start_inside = (first <= 0.0) & (last >= 0.0)
    end_inside = (first <= 1.0) & (last >= 1.0)
    return t_in, t_out, start_inside, end_inside


def building_screening_paths(hub_xyz_m, receptor_xyz_m, buildings) -> ScreeningPaths:
    """Diffraction paths over each building between each hub (P, 3) and receptor (R, 3).

    Notes
    -----
    In the vertical plane through source S = (0, h_s) and receiver R = (L, h_r), the roof
    edges are E1 = (a, H) where the line enters the box and E2 = (b, H) where it leaves. An
    edge diffracts when its end of the path is below the roof (h_s < H for E1, h_r < H for
    E2) and the box does not contain that end (a hub on the roof has no E1); the path is
    screened when the line of sight passes below H at the diffracting edge(s). z is the
    taut path S-E1-E2-R (or over the one edge) minus the direct distance d.
    """
    hub = np.asarray(hub_xyz_m, float)
    rec = np.asarray(receptor_xyz_m, float)
    t_in, t_out, src_in, rec_in = segment_box_interval(hub[:, None, :2], rec[None, :, :2],
                                                       buildings)
    height = np.array([b.height_m for b in buildings], float)
    hs = hub[:, None, None, 2]
    hr = rec[None, :, None, 2]
    plan = np.sqrt(np.sum((hub[:, None, :2] - rec[None, :, :2]) ** 2, -1))[..., None]
    d = np.sqrt(plan ** 2 + (hs - hr) ** 2)
    crosses = (t_out > t_in) & ~rec_in
    a, b = t_in * plan, t_out * plan
    use1 = crosses & ~src_in & (hs < height)
    use2 = crosses & (hr < height)
    los_a = hs + (hr - hs) * t_in
    los_b = hs + (hr - hs) * t_out
    blocked = (use1 & use2) | (use1 & (los_a < height)) | (use2 & (los_b < height))
    double = use1 & use2
    s_e1 = np.hypot(a, height - hs)
    s_e2 = np.hypot(b, height - hs)
    e1_r = np.hypot(plan - a, height - hr)
    e2_r = np.hypot(plan - b, height - hr)
    dss = np.where(use1, s_e1, s_e2)
    dsr = np.where(use2, e2_r, e1_r)
    e = np.where(double, b - a, 0.0)
    z = np.where(blocked, dss + e + dsr - d, 0.0)
    return ScreeningPaths(blocked=blocked, double=double, dss_m=dss, dsr_m=dsr, e_m=e, z_m=z,
                          source_inside=np.broadcast_to(src_in, blocked.shape))


@dataclass(frozen=True)
class LateralPaths:
    """Paths round the vertical edges of every building, arrays (2 sides, P, R, B)."""

    dss_m: np.ndarray  # source to the corner
    dsr_m: np.ndarray  # corner to receiver
    z_m: np.ndarray    # path difference: dss + dsr - d


def lateral_paths(hub_xyz_m, receptor_xyz_m, buildings) -> LateralPaths:
    """Round each building's corners on each side of the line hub -> receptor (P, 3), (R, 3).

    Notes
    -----
    For the corners c on one side (sign of the cross product (R - S) x (c - S) on the plan),
    the shortest plan detour L = min_c (|S c| + |c R|); the taut path round a convex box
    passes through at least one such corner and is never shorter. The path rises evenly
    from h_s to h_r, so its length is √(L² + (h_s - h_r)²) and z = that - d. A side without
    a corner gets z = +inf (no path).
    """
    hub = np.asarray(hub_xyz_m, float)[:, None, None, :]      # (P, 1, 1, 3)
    rec = np.asarray(receptor_xyz_m, float)[None, :, None, :]  # (1, R, 1, 3)
    cx = np.array([b.x_m for b in buildings], float)
    cy = np.array([b.y_m for b in buildings], float)
    th = np.radians([b.orientation_deg for b in buildings])
    hl = np.array([b.length_m / 2.0 for b in buildings], float)
    hw = np.array([b.width_m / 2.0 for b in buildings], float)
    signs = np.array([[1, 1], [1, -1], [-1, 1], [-1, -1]], float)            # (4, 2)
    ux = signs[:, :1] * hl * np.sin(th) + signs[:, 1:] * hw * np.cos(th)     # (4, B)
    uy = signs[:, :1] * hl * np.cos(th) - signs[:, 1:] * hw * np.sin(th)
    corner = np.stack([cx + ux, cy + uy], -1)                                 # (4, B, 2)
    s_xy, r_xy = hub[..., None, :, :2], rec[..., None, :, :2]                 # (.., 1, 1, 2)
    c_xy = corner.transpose(1, 0, 2)[None, None]                              # (1, 1, B, 4, 2)
    leg1 = np.linalg.norm(c_xy - s_xy, axis=-1)
    leg2 = np.linalg.norm(r_xy - c_xy, axis=-1)                               # (P, R, B, 4)
    sr, sc = r_xy - s_xy, c_xy - s_xy
    side = sr[..., 0] * sc[..., 1] - sr[..., 1] * sc[..., 0] >= 0.0
    plan = np.linalg.norm(r_xy - s_xy, axis=-1)[..., 0]                       # (P, R, 1)
    dh = (hub[..., 2] - rec[..., 2])                                          # (P, R, 1)
    d = np.sqrt(plan ** 2 + dh ** 2)
    out = []
    for mask in (side, ~side):
        detour = np.where(mask, leg1 + leg2, np.inf)
        k = np.argmin(detour, axis=-1)[..., None]
        best = np.take_along_axis(detour, k, -1)[..., 0]
        first = np.take_along_axis(leg1, k, -1)[..., 0]
        with np.errstate(invalid="ignore"):
            length = np.sqrt(best ** 2 + dh ** 2)
            share = np.where(np.isfinite(best), first / np.where(best > 0, best, 1.0), 0.5)
        out.append((share * length, (1.0 - share) * length, length - d))
    dss, dsr, z = (np.stack(x) for x in zip(*out))
    return LateralPaths(dss_m=dss, dsr_m=dsr, z_m=np.maximum(z, 0.0))
