"""Transmission loss of walls predicted from their construction (laboratory-type values).

A wall is one leaf (a board stack, a masonry core) or two leaves on a cavity
joined by studs, channels or nothing. Each design strategy is an explicit
input: **mass** (the layers), **cavity depth**, **absorption** (a porous fill),
**decoupling** (the connection type, resilient channel), **damping** (a
material's loss factor, or ``loss_factor`` on a leaf) and **sealing** (the
perimeter). Use :func:`predict` for the full result (per-leaf TL, cavity and
stud paths, f0, f_l) and :func:`predict_tl` for the web app's (21,) curve.

Spec format: see :mod:`acoustics.assembly` (``Assembly.from_dict``). The formulas of each path are
in :mod:`acoustics.wall_physics` (single leaf, cavity path and its resonance) and
:mod:`acoustics.structural` (studs, channels, ties); this module combines them.

Notes
-----
Single leaf (Sharp's method as given by Bies [1]_ Eq. 7.40-7.44): field mass
law TL_0 - 5.5 below fc/2, at low frequency the finite-panel (Sewell) value
when it is higher [2]_; above fc TL_0 + 10 lg(2 eta f / (pi fc)); a straight
line in lg f between. Heavy mortared leaves get the laboratory edge loss
eta += m/(485 sqrt f) (EN 12354-1 Annex C, from memory).

Double leaf, cavity path (Sharp/Bies Eq. 7.62-7.64): f0 = (1/2pi) sqrt(s''(m1+m2)/(m1 m2)),
s'' = rho0 c0^2 / (d + 0.4 t) for a fill of thickness t (isothermal fill, bulk
modulus / 1.4; derived) plus the spring stiffness of resilient mounts per
unit area (Hopkins Eq. 4.89); TL_M below f0, TL1 + TL2 + 20 lg(2kd) up to
f_l = c0/(2 pi d), TL1 + TL2 + 6 above. Sharp's branches assume an absorbing
cavity; a poorly absorbing cavity is limited by a diffuse-cavity energy
balance tau >= tau1 tau2 / (4 alpha) (derived; equal to Sharp's top branch
at alpha = 1), alpha the larger of the bare-cavity absorption and the fill's
absorption (Delany-Bazley, rigidly backed layer).

Resonance of the cavity path (derived; Sharp's TL_M below f0 has no dip): below f_l the cavity
path is max(Sharp, tau_M R(f)), R the diffuse-field transmission of two limp leaves on the damped
cavity over that of one leaf of mass m1 + m2 (:func:`resonance_factor`, a transfer-matrix model of
the mass-air-mass system of Bies Eq. 7.62 / Hopkins Eq. 4.72 with its damping kept). The cavity's
own loss is eta = alpha / (2 k d) (:func:`cavity_loss_factor`, Sabine energy balance); a fill adds
its flow resistance (Delany-Bazley dynamic density), which damps the lateral air motion; studs and
furring block that motion across the bays. An empty cavity thus dips 5-10 dB below the mass law
near f0 and over the octave above it; a filled one barely.

Stud path (Sharp's model as presented by Vigran [3]_ Eq. 8.19-8.26):
tau_B = tau_M 10^(-dR/10); line: dR = 10 lg(b f_c,line) - 23, point:
dR = 20 lg(a f_g) - 45. Elastic connections (steel studs, resilient channel)
reduce tau_B by |Y1 + Y2|^2 / |Y1 + Y2 + Y_s|^2 (plate mobilities Y_i, spring
mobility Y_s = j omega / k; capped at 1 — derived, after Davy's compliance
idea [4]_). Above coincidence the stud path follows the leaves' coincidence
dip (derived). Total tau = tau_cavity + tau_B; tau is averaged over each
third octave (8 points).

References
----------
.. [1] Bies, Hansen & Howard (2017) *Engineering Noise Control* 5th ed., Eq. 7.40, 7.42, 7.44, 7.62-7.64 [TR].
.. [2] Sewell, E. C. (1970) J. Sound Vib. 12 (formula from memory, checked against ISO 15186-3 Table A.1).
.. [3] Vigran, T. E. (2008) *Building Acoustics*, Taylor & Francis, pp. 292-294, Eq. 8.19-8.26.
.. [4] Davy, J. L. (2012) JASA 132(2), 814-821 (compliant connections; cited from memory).
.. [5] Hopkins, C. (2007) *Sound Insulation*, Eq. 4.72 and 4.89.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from . import apertures as ap
from .assembly import Assembly
from .bands import sub_band_frequencies
from .constants import C0, RHO0
from .structural import bridge_tau
from .wall_physics import (
    _limp_tau,
    cavity_absorption,
    cavity_loss_factor,
    cavity_path_tl,
    resonance_factor,
    resonance_frequency,
)

__all__ = ["POINTS", "Prediction", "predict", "predict_tl"]

#: Sub-band points per third octave for tau averaging.
POINTS = 8
#: Depth a resilient channel adds to the cavity, m (1/2 in channel).
CHANNEL_DEPTH = 0.0127
#: Largest excess of a double leaf's cavity path over the mass law of its combined leaves, dB. Sharp's
#: branch TL1 + TL2 + 6 climbs to 75-107 dB above 1 kHz for decoupled walls, where laboratories measure
#: 60-75 dB: the leaves stay coupled at their edges (head, sill, the test opening) and the cavity field is
#: not ideally absorbed. Fitted to published decoupled walls (ASHRAE 2019 Ch. 49 Table 40 double steel studs,
#: octave TL 62-74 dB at 500-4000 Hz, and the double-stud rows of the published-assemblies table), no
#: published formula; a limit of this kind is common practice.
HF_LIMIT = 22.0
#: Connections whose studs or furring run through the cavity and block lateral air motion across the bays.
PARTITIONING = ("wood_stud", "steel_stud", "staggered_studs", "double_studs", "furring")


def _spring_per_area(asm: Assembly) -> float:
    c, pitch = asm.connection, asm.pitch
    if pitch <= 0:
        return 0.0
    if c.channel_leaf is not None:
        return c.channel_stiffness / (c.channel_spacing * pitch)
    if c.stiffness is None or c.type in ("none", "double_studs", "staggered_studs"):
        return 0.0
    return c.stiffness / (pitch if c.type != "points" else pitch**2)


def _depth(asm: Assembly) -> float:
    return asm.gap.depth + (CHANNEL_DEPTH if asm.connection.channel_leaf is not None else 0.0)


def _paths(asm: Assembly, f: np.ndarray, extra: tuple[Any, Any] = (0.0, 0.0)) -> dict[str, Any]:
    """tau of every path at frequencies f; ``extra`` adds (21,)-band tau to each leaf (one-face leaks)."""
    S = asm.area
    intact = [10 ** (-lf.tl(f, S) / 10) for lf in asm.leaves]
    leaf_tau = [
        t + np.asarray(e, float).reshape(-1, *([1] * (f.ndim - 1))) if np.ndim(e) else t + e
        for t, e in zip(intact, extra[: len(intact)], strict=True)
    ]
    out: dict[str, Any] = {"leaf_tau": leaf_tau}
    if len(asm.leaves) == 1:
        out["cavity"] = leaf_tau[0]
        out["bridge"] = np.zeros_like(f)
        out["f0"] = out["f_l"] = None
        return out
    a, b = asm.leaves
    d = _depth(asm)
    cav = asm.gap
    f0 = resonance_frequency(
        a.m, b.m, d, fill_thickness=cav.absorber_thickness, spring_per_area=_spring_per_area(asm)
    )
    # The cavity path switches branch at the air resonance: the studs' own springs (in f0 above) act on the
    # structural path, and switching the cavity path at a spring-raised f0 left an 8-10 dB step between
    # adjacent bands.
    f0_air = resonance_frequency(a.m, b.m, d, fill_thickness=cav.absorber_thickness)
    fl = C0 / (2 * np.pi * d)
    tau_m = _limp_tau(f, a.m + b.m, S, C0, RHO0)
    limp = [_limp_tau(f, lf.m, S, C0, RHO0) for lf in asm.leaves]
    # Coincidence dip of each leaf: how far its TL falls below the limp-panel value, dB.
    dips = [np.maximum(0, 10 * np.log10(lt / lm)) for lm, lt in zip(limp, intact, strict=True)]
    dip = (dips[0] + dips[1]) / 2
    alpha = cavity_absorption(f, cav.absorber_thickness, cav.flow_resistivity)
    tl_m = -10 * np.log10(tau_m)
    tcav = 10 ** (
        -cavity_path_tl(
            f,
            -10 * np.log10(leaf_tau[0]),
            -10 * np.log10(leaf_tau[1]),
            tl_m,
            f0_air,
            d,
            alpha,
            floor=tl_m - dips[0] - dips[1],
        )
        / 10
    )
    tcav = np.maximum(tcav, tau_m * 10 ** (-HF_LIMIT / 10))
    # Resonance of the air-coupled leaves (Sharp's TL_M below f0 has none): where the damped
    # mass-air-mass model transmits more than Sharp's branches, below f_l, it governs.
    low = np.any(f < fl, axis=-1)  # bands that reach below f_l (only these need the resonance model)
    res = np.zeros_like(f)
    res[low] = resonance_factor(
        f[low],
        a.m,
        b.m,
        d,
        cavity_loss_factor(f[low], d, alpha[low]),
        fill_thickness=cav.absorber_thickness,
        flow_resistivity=cav.flow_resistivity,
        partitioned=asm.connection.type in PARTITIONING,
    )
    tcav = np.where(f < fl, np.maximum(tcav, tau_m * res), tcav)
    out.update(cavity=tcav, bridge=bridge_tau(asm, f, tau_m, dip), f0=f0, f_l=fl)
    return out


@dataclass(frozen=True)
class Prediction:
    """Predicted TL of an assembly on the 21 bands (laboratory-type, no flanking).

    Attributes: ``tl``, ``tau`` (21,); ``leaf_tl`` per leaf; ``cavity_tl`` and ``bridge_tl``
    (path TLs; bridge inf when decoupled); ``f0``, ``f_l``, ``fc`` (Hz); ``flags``; ``assembly``.
    """

    tl: np.ndarray
    tau: np.ndarray
    leaf_tl: tuple[np.ndarray, ...]
    cavity_tl: np.ndarray
    bridge_tl: np.ndarray
    f0: float | None
    f_l: float | None
    fc: tuple[float, ...]
    flags: tuple[str, ...]
    assembly: Assembly


def _band(x: np.ndarray) -> np.ndarray:
    return np.asarray(x, float).mean(axis=-1)


def _tl(tau: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return -10 * np.log10(tau)


def predict(spec: dict[str, Any] | Assembly) -> Prediction:
    """Predict the TL of a wall from its construction.

    Parameters
    ----------
    spec : dict or Assembly
        The JSON-like spec of the module docstring, or an :class:`Assembly`.

    Returns
    -------
    Prediction
        Band TL (dB), band-averaged tau of each path, f0/f_l/fc (Hz) and flags.
    """
    asm = spec if isinstance(spec, Assembly) else Assembly.from_dict(spec)
    f = sub_band_frequencies(POINTS)
    p = _paths(asm, f)
    tau = _band(p["cavity"] + p["bridge"])
    flags = ["predicted"]
    if asm.perimeter_gap:
        depth = sum(lf.thickness for lf in asm.leaves) + (_depth(asm) if asm.cavity else 0.0)
        length = 2 * (asm.area / asm.height + asm.height)
        slit = _band(ap.gomperts_slit_tau(f, asm.perimeter_gap, depth, edge=True))
        tau = tau + asm.perimeter_gap * length * slit / asm.area
        flags.append("perimeter_unsealed")
    if p["f0"] is not None:
        if p["f0"] > 125:
            flags.append("f0_in_rating_range")
        if p["f0"] >= p["f_l"]:
            flags.append("f0_above_f_l")
        if asm.gap.absorber_thickness == 0:
            flags.append("cavity_empty")
    bridge = _band(p["bridge"])
    return Prediction(
        _tl(tau),
        tau,
        tuple(_tl(_band(t)) for t in p["leaf_tau"]),
        _tl(_band(p["cavity"])),
        _tl(bridge),
        p["f0"],
        p["f_l"],
        tuple(lf.fc for lf in asm.leaves),
        tuple(flags),
        asm,
    )


def predict_tl(layers_spec: dict[str, Any]) -> tuple[np.ndarray, tuple[str, ...]]:
    """(21,) TL in dB and flags for a stored wall-type spec (the web app's entry point)."""
    p = predict(layers_spec)
    return p.tl, p.flags
