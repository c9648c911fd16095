"""Structural path of a double wall: studs, resilient channel and point ties between the leaves.

Sharp's bridge model as presented by Vigran [1]_: the leaves tied by line
connections (studs) or point connections (screws through a channel, ties)
transmit tau_B = tau_M 10^(-dR/10), tau_M the field mass law of the combined
mass m1 + m2; line: dR = 10 lg(b f_c,line) - 23, point: dR = 20 lg(a f_g) - 45.
Elastic connections reduce tau_B by |Y1 + Y2|^2 / |Y1 + Y2 + Y_s|^2 (plate
mobilities Y_i, spring mobility Y_s = j omega / k; capped at 1 - derived, after
Davy's compliance idea [2]_).

References
----------
.. [1] Vigran, T. E. (2008) *Building Acoustics*, Taylor & Francis, pp. 292-294, Eq. 8.19-8.26.
.. [2] Davy, J. L. (2012) JASA 132(2), 814-821 (compliant connections; cited from memory).
.. [4] Craik, R. J. M. & Smith, R. S. (2000) Sound transmission through lightweight parallel plates.
   Part II: structure-borne sound. Applied Acoustics 61(2), 247-269 (SEA of the stud path; from memory).
.. [3] Cremer, L., Heckl, M. & Petersson, B. A. T. (2005) *Structure-Borne Sound*, 3rd ed.: point
   mobility of an infinite plate 1/(8 sqrt(B m')), line mobility (1 - j)/(4 m' c_B) (from memory).
"""

from __future__ import annotations

import numpy as np

from .assembly import Assembly, Leaf

__all__ = ["bridge_tau", "damping_factor", "ETA_REF"]


def _line_mobility(f: np.ndarray, leaf: Leaf) -> np.ndarray:
    """Line-force mobility of an infinite plate per unit length, m/(N s) per m [3]_."""
    w = 2 * np.pi * f
    cb = (w**2 * leaf.stiffness / leaf.m) ** 0.25
    out: np.ndarray = (1 - 1j) / (4 * leaf.m * cb)
    return out


def _compliance(y1: np.ndarray, y2: np.ndarray, f: np.ndarray, k: float | None) -> np.ndarray:
    if k is None:
        return np.ones_like(f)
    ys = 1j * 2 * np.pi * f / (k * (1 + 0.1j))
    return np.asarray(np.minimum(1.0, np.abs(y1 + y2) ** 2 / np.abs(y1 + y2 + ys) ** 2), dtype=float)


def bridge_tau(asm: Assembly, f: np.ndarray, tau_m: np.ndarray, dip: np.ndarray) -> np.ndarray:
    """Stud/point path tau (Vigran Eq. 8.20-8.26 with compliance), zero for decoupled leaves."""
    a, b = asm.leaves
    c = asm.connection
    m1, m2, fc1, fc2 = a.m, b.m, a.fc, b.fc
    pitch = asm.pitch
    if c.type in ("none", "double_studs") or (c.type == "points" and pitch <= 0):
        return np.zeros_like(f)
    k: float | None
    if c.channel_leaf is not None or c.type == "points":
        grid = (c.channel_spacing * pitch) if c.channel_leaf is not None else pitch**2
        fg = (m1 * fc2 + m2 * fc1) / (m1 + m2)
        dr = max(0.0, 20 * np.log10(np.sqrt(grid) * fg) - 45)
        y1 = np.full(f.shape, 1 / (8 * np.sqrt(a.stiffness * m1)), complex)
        y2 = np.full(f.shape, 1 / (8 * np.sqrt(b.stiffness * m2)), complex)
        if c.channel_leaf is not None:
            k = c.channel_stiffness
            if c.stiffness is not None:  # channel on a steel stud: springs in series (stud per point)
                k = 1 / (1 / k + 1 / (c.stiffness * c.channel_spacing))
        else:
            k = c.stiffness
        comp = _compliance(y1, y2, f, k)
        if c.channel_leaf is not None and c.channel_shorted:
            # A screw through the channel into the stud makes that crossing a rigid point tie of the same
            # grid (Sharp's point bridge, compliance 1): the share q of rigid crossings adds q (1 - comp).
            comp = comp + c.channel_shorted * (1.0 - comp)
    else:
        spacing = asm.height / 2 if c.type == "staggered_studs" else pitch
        fcl = ((m1 * np.sqrt(fc2) + m2 * np.sqrt(fc1)) / (m1 + m2)) ** 2
        dr = max(0.0, 10 * np.log10(spacing * fcl) - 23)
        comp = _compliance(_line_mobility(f, a), _line_mobility(f, b), f, c.stiffness)
    # Below fc/2 Sharp's bridge term; from fc up the rigidly tied leaves radiate as one panel of mass
    # m1 + m2 (resonant radiation, sigma ~ 1), so the bridge gain fades: straight line in lg f between.
    fcb = min(fc1, fc2)
    x = np.clip(np.log2(f / (fcb / 2)), 0.0, 1.0) if c.type != "staggered_studs" else 0.0
    tl_b = -10 * np.log10(tau_m) + dr * (1 - x) - dip
    out: np.ndarray = 10 ** (-tl_b / 10) * comp * damping_factor(a, f) * damping_factor(b, f)
    return out


def damping_factor(leaf: Leaf, f: np.ndarray) -> np.ndarray:
    """Reduction of the structural path by a leaf damped beyond screw-fixed board, eta_ref / eta (<= 1).

    Notes
    -----
    Power fed through the studs builds up a reverberant bending field in each leaf whose energy is
    inversely proportional to the leaf's total loss factor (statistical energy analysis of the stud
    path, Craik & Smith 2000 [4]_), while Sharp's bridge term was fitted to plain screw-fixed board
    (eta about 0.03, :data:`ETA_REF`). A leaf with a damped laminated board (viscoelastic core, eta
    about 0.2) thus cuts the stud path by 10 lg(0.2/0.03) = 8 dB; both leaves damped, twice that. The
    factor is symmetric in the leaves, as reciprocity requires; a leaf less damped than the reference
    is not penalised (the reference data already include it).
    """
    out: np.ndarray = np.minimum(1.0, ETA_REF / leaf.eta(f))
    return out


#: Loss factor of the screw-fixed gypsum board that Sharp's bridge terms were checked against (the
#: materials' board value, from memory).
ETA_REF = 0.03
