"""Field prediction of a separating wall: direct, flanking and leak paths by ISO 12354-1.

From the wall's own curve (as designed, as found or now: the caller passes
curves, all predicted in one call), its four junctions (floor, ceiling and the
two ends), the flanking elements met there, the leaks recorded by the walk and
the two rooms, predict what a field test would find: the apparent sound
reduction index R' per band and R'w (C, Ctr), DnT and DnT,w, the apparent
transmission loss rated as ASTC and the normalized noise reduction rated as
NNIC, with each path's share of the transmitted sound.
:func:`predict_simplified` is the single-number method.

Notes
-----
Detailed method, per band [1]_:
tau' = tau_Dd + sum_leaks (S tau) / S_s + sum_junctions (tau_Ff + tau_Fd + tau_Df),
R' = -10 lg tau'. Each flanking path i -> j across a junction of length l_f:

R_ij = (R_i + R_j)/2 + dR_i + dR_j + Dv,ij + 10 lg(S_s / sqrt(S_i S_j)),
Dv,ij = K_ij - 10 lg(l_f / sqrt(a_i a_j)), K_ij >= K_ij,min,

with in-situ R and the equivalent absorption length a from the in-situ loss
factor for a heavy (type A) element, R* (resonant-only R) and a = S / 1 m for a
lightweight (type B) element, so that with junction data Dv,ij,n (ISO 10848;
the RR-331 practice [2]_) R_ij = (R_i + R_j)/2 + dR + Dv,ij,n + 10 lg(S_s / l_f),
and with a measured flanking level difference (Formula 16)
R_Ff = Dn,f + 10 lg(l_lab / l_f) + 10 lg(S_s / 10 m^2). Fd joins the source-side
flanking element to the wall, Df the wall to the receiving-side flanking
element. The direct path of a heavy wall gets the in-situ correction
R_situ = R + 10 lg(eta_situ / eta_lab) with its four junctions as edges.

Rooms: D = R' - 10 lg(S_s / A), A = 0.16 V / T; DnT = R' + 10 lg(0.16 V / (T0 S_s)),
T0 = 0.5 s (Formula 5b). ASTM E336 [3]_: the apparent transmission loss ATL is
the band quantity R'; NR = ATL - 10 lg(S_s / A2), A2 = 0.161 V / T;
NNR = NR + 10 lg(T / T0) = R' + 10 lg(0.161 V / (T0 S_s)); ASTC and NNIC by the
E413 contour, NIC from NR.

Geometry defaults: each room is a box spanning the wall, of depth V / (L H);
floor and ceiling junctions are L long, the ends H; flanking areas follow.

References
----------
.. [1] ISO 12354-1:2017, Clause 4 (Formulas 5b, 11-23) and Annexes C, E;
   EN 12354-1:2000 Clause 4.4 and Formula (26) (simplified model).
.. [2] Zeitler, B., Quirt, D., Hoeller, C., Mahn, J., Schoenwald, S., Sabourin, I.
   (2016) *Guide to Calculating Airborne Sound Transmission in Buildings*, NRC
   Canada RR-331, 2nd ed. (type B elements with Dv,ij,n; ASTC from the ISO result).
.. [3] ASTM E336 (ATL, NR, NNR; from memory); ASTM E413-22 (ASTC, NIC, NNIC).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import numpy.typing as npt

from . import junctions as jn
from .bands import BANDS, N_BANDS
from .constants import C0, SABINE_ASTM, SABINE_ISO, T0_ISO
from .field import FieldInputError, energy_sum_index, flanking_path_index
from .field_inputs import PREDICTION_FLAGS, Element, Junction, Room, Separating
from .ratings import RwResult, rating_weights, rw, stc

Floats = npt.NDArray[np.float64]
#: An edge of a heavy element for its in-situ loss factor: (length l_k in m, absorption coefficient alpha_k).
Edge = tuple[float, Floats]

__all__ = ["FieldPrediction", "predict_field", "SimplifiedPrediction", "predict_simplified"]

_W_RW = rating_weights("rw")
_LOW = BANDS < 100
# Path-by-path Kij,min and K formula inputs: (source element role, receiving element role, Annex E path).
_PATHS = (("Ff", "F", "f", "through"), ("Fd", "F", "d", "corner"), ("Df", "D", "f", "corner"))


def _tau(r: Floats) -> Floats:
    return 10.0 ** (-np.asarray(r, np.float64) / 10.0)


def _r(tau: Floats) -> Floats:
    with np.errstate(divide="ignore"):
        r: Floats = -10.0 * np.log10(tau)
    return r


def _receive(j: Junction) -> Element:
    # Junction.__post_init__ puts flank into flank_receive when no receiving-side element was given.
    return j.flank if j.flank_receive is None else j.flank_receive


def _area(wall: Separating) -> float:
    # Separating.__post_init__ fills the area in (length x height unless given).
    return wall.length * wall.height if wall.area is None else wall.area


@dataclass(frozen=True, eq=False)
class FieldPrediction:
    """Result of :func:`predict_field`. Band arrays have shape (..., 21), the leading axes those of the
    wall curves passed (e.g. designed / as found / now); single numbers likewise.

    Attributes
    ----------
    r_prime : ndarray
        Apparent sound reduction index R' per band, dB (equals the apparent transmission loss ATL).
    dnt, d, nr, nnr : ndarray
        DnT and D (ISO 16283-1), NR and NNR (ASTM E336) per band, dB.
    r_prime_w, dnt_w : RwResult
        R'w and DnT,w with C, Ctr (ISO 717-1).
    astc, nnic, nic : int or ndarray
        ASTM E413 ratings of R', NNR and NR.
    paths : dict of str -> ndarray
        Index of each path per band, dB: "Dd", "leaks" (if any), "<position>.Ff" / ".Fd" / ".Df".
    share : dict of str -> ndarray
        Each path's share of the transmitted power per band (0-1; they sum to 1).
    share_weighted : dict of str -> float or ndarray
        Share over 100-3150 Hz weighted by ISO 717-1 spectrum No. 1 (pink noise, A-weighted).
    flags : tuple of str
        Keys of :data:`acoustics.field_inputs.PREDICTION_FLAGS`.
    area, volume : float
        Separating area S_s (m^2) and receiving-room volume (m^3) used.
    """

    r_prime: Floats
    dnt: Floats
    d: Floats
    nr: Floats
    nnr: Floats
    r_prime_w: RwResult
    dnt_w: RwResult
    astc: Any
    nnic: Any
    nic: Any
    paths: dict[str, Floats]
    share: dict[str, Floats]
    share_weighted: dict[str, Any]
    flags: tuple[str, ...]
    area: float
    volume: float

    def flag_text(self) -> list[str]:
        """The flags in words, for reports."""
        return [PREDICTION_FLAGS[f] for f in self.flags]

    def as_dict(self, index: int | None = None) -> dict[str, Any]:
        """JSON-ready summary of one wall curve (``index`` into the leading axis; None for 1-D input)."""

        def pick(a: Any) -> Any:
            a = np.asarray(a)
            return a if index is None else a[index]

        def num(v: Any) -> Any:
            v = float(pick(v))
            return None if not math.isfinite(v) else (int(v) if v == int(v) else round(v, 2))

        def bands(a: Any) -> list[float | None]:
            return [None if not math.isfinite(x) else round(x, 2) for x in pick(a).tolist()]

        rated = {"r_prime_w": self.r_prime_w, "dnt_w": self.dnt_w}
        out: dict[str, Any] = {
            k: {"value": num(v.rw), "c": num(v.c), "ctr": num(v.ctr)} for k, v in rated.items()
        }
        out.update(astc=num(self.astc), nnic=num(self.nnic), nic=num(self.nic))
        out["bands"] = {k: bands(getattr(self, k)) for k in ("r_prime", "dnt", "d", "nr", "nnr")}
        out["paths"] = {k: bands(v) for k, v in self.paths.items()}
        out["share"] = {k: num(v) for k, v in self.share_weighted.items()}
        out["flags"] = list(self.flags)
        return out


def _wall_leaf(wall: Separating, flags: set[str]) -> Floats:
    # r and r_leaf are band arrays once Separating.__post_init__ has run.
    if wall.r_leaf is not None:
        given: Floats = wall.r_leaf
        return given
    if wall.kind == "heavy":
        own: Floats = wall.r
        return own
    flags.add("separating_leaf_estimated")
    # Field-incidence mass law of one leaf (Sharp: 20 lg(m f) - 47), half the wall's mass.
    return 20.0 * np.log10(0.5 * wall.mass * BANDS) - 47.0


def _geometry(j: Junction, wall: Separating, src: Room, rcv: Room) -> tuple[float, float, float]:
    """(l_f, S_F, S_f) for a junction, from the wall and the rooms unless given."""
    depth_s = src.volume / (wall.length * wall.height)
    depth_r = rcv.volume / (wall.length * wall.height)
    along = j.position in ("floor", "ceiling")
    length = j.length if j.length is not None else (wall.length if along else wall.height)
    side = wall.length if along else wall.height
    s_src = j.area_source if j.area_source is not None else side * depth_s
    s_rcv = j.area_receive if j.area_receive is not None else side * depth_r
    return length, s_src, s_rcv


def _k_paths(j: Junction, wall: Separating, flags: set[str]) -> dict[str, Floats]:
    """Annex E K_ij of the three paths (the wall is the element across each junction)."""
    out = {}
    for name, a, _b, geom in _PATHS:
        elem = j.flank if a == "F" else _receive(j)
        out[name] = jn.kij(j.kind, geom, wall.mass / elem.mass)
    if j.kind in ("rigid_cross", "rigid_t", "flexible") and (
        j.flank.mass < 100 or _receive(j).mass < 100 or wall.mass < 100
    ):
        flags.add("annex_e_outside_scope")
    return out


def _situ(elem: Element, area: float, edges: list[Edge], c0: float, flags: set[str]) -> tuple[Floats, Floats]:
    """(in-situ R, absorption length) of one element."""
    if elem.kind == "light":
        return elem.r_star, np.full(N_BANDS, area)
    if elem.eta_situ is not None or elem.in_situ and elem.fc is None:
        eta = elem.eta_situ if elem.eta_situ is not None else jn.lab_loss_factor(elem.mass, elem.eta_int)
        r = (
            elem.r
            if elem.in_situ
            else jn.in_situ_index(elem.r, jn.lab_loss_factor(elem.mass, elem.eta_int), eta)
        )
        return r, jn.absorption_length(area, eta, c0=c0)
    if elem.fc is None:
        flags.add("no_in_situ_correction")
        eta = jn.lab_loss_factor(elem.mass, elem.eta_int)
        return elem.r, jn.absorption_length(area, eta, c0=c0)
    eta = jn.situ_loss_factor(elem.mass, area, elem.fc, elem.eta_int, edges, c0=c0)
    r = elem.r if elem.in_situ else jn.in_situ_index(elem.r, jn.lab_loss_factor(elem.mass, elem.eta_int), eta)
    return r, jn.absorption_length(area, eta, c0=c0)


def _wall_situ(
    wall: Separating, leaf: Floats, edges: list[Edge], c0: float, flags: set[str]
) -> tuple[Floats, Floats, Floats]:
    """(in-situ leaf index for Fd/Df, absorption length, direct-path index) of the separating wall."""
    s_s = _area(wall)
    if wall.kind == "light":
        return leaf, np.full(N_BANDS, s_s), wall.r
    eta_lab = jn.lab_loss_factor(wall.mass, wall.eta_int)
    if wall.eta_situ is not None:
        eta = wall.eta_situ
    elif wall.fc is not None and edges:
        eta = jn.situ_loss_factor(wall.mass, s_s, wall.fc, wall.eta_int, edges, c0=c0)
    else:
        if not wall.in_situ:
            flags.add("no_in_situ_correction")
        return leaf, jn.absorption_length(s_s, eta_lab, c0=c0), wall.r
    if wall.in_situ:
        return leaf, jn.absorption_length(s_s, eta, c0=c0), wall.r
    return (
        jn.in_situ_index(leaf, eta_lab, eta),
        jn.absorption_length(s_s, eta, c0=c0),
        jn.in_situ_index(wall.r, eta_lab, eta),
    )


def _flank_edges(elem: Element, area: float, length: float, alpha: Floats) -> list[Edge]:
    # Whole perimeter of a rectangle with one side l_f, coupled like the known junction.
    return [(2.0 * (length + area / length), alpha)]


def predict_field(
    wall: Separating,
    junctions: Sequence[Junction],
    source_room: Room,
    receiving_room: Room,
    *,
    leaks: Any = None,
    c0: float = C0,
) -> FieldPrediction:
    """Predict the field performance of a separating wall (ISO 12354-1 detailed method, per band).

    Parameters
    ----------
    wall : Separating
        The wall: direct-path curve(s) R, dB, shape (..., 21), size, surface density.
    junctions : sequence of Junction
        Its junctions (usually floor, ceiling, end_a, end_b); an empty sequence gives the direct path only.
    source_room, receiving_room : Room
        Volumes (m^3) and receiving-room reverberation time (s) or absorption (m^2).
    leaks : array_like or sequence of Leak, optional
        Airborne leak paths recorded by the walk: transmission areas S tau per band (m^2), shape
        (21,) or (..., 21) or a list of :class:`acoustics.Leak`; added to the direct path.
    c0 : float
        Speed of sound, m/s (ISO 12354-1 Annex L uses 340).

    Returns
    -------
    FieldPrediction

    Raises
    ------
    FieldInputError
        Bad geometry, rooms or junction data (the message names the field and the rule).
    """
    if not all(isinstance(x, Room) for x in (source_room, receiving_room)):
        raise FieldInputError("rooms", "source_room and receiving_room must be Room objects")
    seen = [j.position for j in junctions]
    if len(set(seen)) != len(seen):
        raise FieldInputError("junctions", f"each position may appear once, got {seen}")
    flags = {"prediction"}
    s_s = _area(wall)
    leaf = _wall_leaf(wall, flags)
    geo = [_geometry(j, wall, source_room, receiving_room) for j in junctions]
    ks = []
    for j, (length, s_src, s_rcv) in zip(junctions, geo, strict=True):
        k = _k_paths(j, wall, flags) if j.kind in jn.JUNCTION_KINDS else {}
        k.update(j.k or {})
        for name, a, b, _g in _PATHS:
            if name in k:
                sa = s_src if a == "F" else s_s
                sb = s_rcv if b == "f" else s_s
                kmin = jn.kij_min(length, sa, sb)
                if np.any(k[name] < kmin):
                    flags.add("kij_min_applied")
                    k[name] = np.maximum(k[name], kmin)
        ks.append(k)

    # The wall's own in-situ data: its four junctions are its edges.
    # The wall's own in-situ data: its junctions are its edges.
    wall_edges = []
    for j, k, (length, _s1, _s2) in zip(junctions, ks, geo, strict=True):
        if wall.kind == "heavy" and j.flank.fc is not None and "Fd" in k and "Df" in k:
            pairs = [(j.flank.fc, k["Fd"]), (_receive(j).fc or j.flank.fc, k["Df"])]
            if j.kind == "rigid_cross":
                pairs.append(
                    (wall.fc or j.flank.fc, jn.kij("rigid_cross", "through", j.flank.mass / wall.mass))
                )
            wall_edges.append((length, jn.edge_absorption(pairs)))
    leaf_situ, a_wall, direct = _wall_situ(wall, leaf, wall_edges, c0, flags)

    paths: dict[str, Floats] = {"Dd": direct}
    if leaks is not None:
        leak_area = (
            np.sum([lk.area for lk in leaks], axis=0) if _is_leak_list(leaks) else np.asarray(leaks, float)
        )
        if leak_area.shape[-1:] != (N_BANDS,) or not np.all(np.isfinite(leak_area)) or np.any(leak_area < 0):
            raise FieldInputError("leaks", "must be transmission areas S tau >= 0 m^2 per band (21 bands)")
        paths["leaks"] = _r(leak_area / s_s)

    for j, k, (length, s_src, s_rcv) in zip(junctions, ks, geo, strict=True):
        rows = {"F": (j.flank, s_src), "f": (_receive(j), s_rcv)}
        # Per role: (in-situ index R, absorption length a, lining dR (all per band), area S).
        situ: dict[str, tuple[Floats, Floats, Floats, float]] = {}
        for role, (elem, area) in rows.items():
            other = _receive(j) if role == "F" else j.flank
            edges: list[Edge] = []
            if elem.kind == "heavy" and elem.fc is not None and "Ff" in k:
                pairs = [
                    (other.fc or elem.fc, k["Ff"]),
                    (wall.fc or elem.fc, k["Fd" if role == "F" else "Df"]),
                ]
                if j.kind == "rigid_cross":
                    pairs.append((wall.fc or elem.fc, k["Fd" if role == "F" else "Df"]))
                edges = _flank_edges(elem, area, length, jn.edge_absorption(pairs))
                flags.add("perimeter_assumed")
            situ[role] = (*_situ(elem, area, edges, c0, flags), elem.lining, area)
        situ["D"] = (leaf_situ, a_wall, wall.lining_source, s_s)
        situ["d"] = (leaf_situ, a_wall, wall.lining_receive, s_s)
        for name, a, b, _g in _PATHS:
            if name not in j.paths:
                continue
            r_i, a_i, dr_i, s_i = situ[a]
            r_j, a_j, dr_j, s_j = situ[b]
            base = (r_i + r_j) / 2.0 + dr_i + dr_j
            dvn = (j.dvn or {}).get(name)
            if name == "Ff" and j.dnf is not None:
                r_path = j.dnf + 10 * np.log10(j.dnf_length / length) + 10 * np.log10(s_s / 10.0)
            elif dvn is not None or j.kind in ("light_continuous", "light_interrupted") and name not in k:
                if dvn is None:
                    dvn = _light_dvn(j, name, flags)
                r_path = base + dvn + 10 * np.log10(s_s / length)
            else:
                dv = jn.velocity_level_difference(k[name], length, a_i, a_j)
                r_path = base + dv + 10 * np.log10(s_s / math.sqrt(s_i * s_j))
            paths[f"{j.position}.{name}"] = np.broadcast_to(r_path, np.shape(direct)[:-1] + (N_BANDS,))

    return _finish(paths, s_s, receiving_room, flags)


def _is_leak_list(leaks: Any) -> bool:
    return isinstance(leaks, (list, tuple)) and all(hasattr(lk, "area") for lk in leaks) and len(leaks) > 0


def _light_dvn(j: Junction, name: str, flags: set[str]) -> Floats:
    """Representative Dv,ij,n of a lightweight junction (ISO 12354-1:2017 Annex L.2 data)."""
    flags.add("light_data_representative")
    data = jn.LIGHT_FRAME_DATA
    if j.position in ("end_a", "end_b"):
        dvn = data["dvn_wall_wall"]
    else:
        dvn = data["dvn_wall_floor_ff"] if name == "Ff" else data["dvn_floor_wall"]
    if j.kind == "light_interrupted" and name == "Ff":
        flags.add("interrupted_assumed")
        dvn = dvn + 10.0
    return dvn


def _finish(paths: dict[str, Floats], s_s: float, rcv: Room, flags: set[str]) -> FieldPrediction:
    lead = np.shape(paths["Dd"])[:-1]
    taus = {k: np.broadcast_to(_tau(v), lead + (N_BANDS,)) for k, v in paths.items()}
    # Summed from a zero band array rather than 0 so the total is typed as an array; the values are the same.
    total = sum(taus.values(), np.zeros(lead + (N_BANDS,)))
    r_prime = _r(total)
    share = {k: t / total for k, t in taus.items()}
    w_total = np.sum(total * _W_RW, axis=-1)
    share_w: dict[str, Floats | float] = {k: np.sum(t * _W_RW, axis=-1) / w_total for k, t in taus.items()}
    if not lead:
        share_w = {k: float(v) for k, v in share_w.items()}
    v = rcv.volume
    t_iso = rcv.t_bands(SABINE_ISO)
    t_astm = rcv.t_bands(SABINE_ASTM)
    dnt = r_prime + 10 * np.log10(SABINE_ISO * v / (T0_ISO * s_s))
    d = r_prime - 10 * np.log10(s_s * t_iso / (SABINE_ISO * v))
    nr = r_prime - 10 * np.log10(s_s * t_astm / (SABINE_ASTM * v))
    nnr = r_prime + 10 * np.log10(SABINE_ASTM * v / (T0_ISO * s_s))
    if np.any(_LOW):
        flags.add("low_bands")
    return FieldPrediction(
        r_prime=r_prime,
        dnt=dnt,
        d=d,
        nr=nr,
        nnr=nnr,
        r_prime_w=rw(r_prime, _label="R'w"),
        dnt_w=rw(dnt, _label="DnT,w"),
        astc=stc(r_prime, _label="ASTC"),
        nnic=stc(nnr, _label="NNIC"),
        nic=stc(nr, _label="NIC"),
        paths={k: np.asarray(p) for k, p in paths.items()},
        share=share,
        share_weighted=share_w,
        flags=tuple(sorted(flags)),
        area=s_s,
        volume=v,
    )


@dataclass(frozen=True)
class SimplifiedPrediction:
    """Result of :func:`predict_simplified`: path indices R_ij,w (dB), R'w and DnT,w (unrounded, dB)."""

    paths: dict[str, float]
    r_prime_w: float
    dnt_w: float | None

    @property
    def rounded(self) -> tuple[int, int | None]:
        """(R'w, DnT,w) rounded to whole decibels, as the standard states them."""
        dnt = None if self.dnt_w is None else int(math.floor(self.dnt_w + 0.5))
        return int(math.floor(self.r_prime_w + 0.5)), dnt


def predict_simplified(
    rw_direct: float,
    area: float,
    elements: Sequence[Mapping[str, Any]],
    *,
    volume: float | None = None,
) -> SimplifiedPrediction:
    """ISO 12354-1 simplified (single-number) method: R'w from weighted indices and K_ij.

    Parameters
    ----------
    rw_direct : float
        R_w of the separating element including its linings, dB.
    area : float
        Separating area S_s, m^2.
    elements : sequence of mapping
        One per flanking element: ``name``, ``rw`` (R_F,w), optional ``rw_receive`` (R_f,w, default
        ``rw``), ``k_ff``, ``k_fd``, ``k_df`` (default ``k_fd``), ``length`` (l_f, m), optional
        ``dr_ff``, ``dr_fd``, ``dr_df`` (combined lining improvements, dB) and ``rw_separating`` (the
        wall's index in Fd/Df, default ``rw_direct``).
    volume : float, optional
        Receiving-room volume, m^3, for DnT,w = R'w + 10 lg(0.32 V / S_s).

    Returns
    -------
    SimplifiedPrediction

    References
    ----------
    .. [1] EN 12354-1:2000 Formulas (26)-(28a) and Annex H.3; ISO 12354-1:2017 Clause 4.4.
    """
    s = float(area)
    if not (math.isfinite(s) and s > 0):
        raise FieldInputError("area", "must be > 0 m^2")
    paths = {"Dd": float(rw_direct)}
    for n, el in enumerate(elements):
        name = el.get("name", f"element{n + 1}")
        try:
            r_f, length, k_ff, k_fd = (float(el[key]) for key in ("rw", "length", "k_ff", "k_fd"))
        except KeyError as exc:
            raise FieldInputError(f"elements[{n}].{exc.args[0]}", "is required") from None
        if not (length > 0):
            raise FieldInputError(f"elements[{n}].length", "must be > 0 m")
        r_rcv = float(el.get("rw_receive", r_f))
        r_sep = float(el.get("rw_separating", rw_direct))
        k_df = float(el.get("k_df", k_fd))
        paths[f"{name}.Ff"] = float(flanking_path_index(r_f, r_rcv, k_ff + el.get("dr_ff", 0.0), s, length))
        paths[f"{name}.Fd"] = float(flanking_path_index(r_f, r_sep, k_fd + el.get("dr_fd", 0.0), s, length))
        paths[f"{name}.Df"] = float(flanking_path_index(r_sep, r_rcv, k_df + el.get("dr_df", 0.0), s, length))
    r_prime = float(energy_sum_index(list(paths.values())))
    dnt = None
    if volume is not None:
        if not (float(volume) > 0):
            raise FieldInputError("volume", "must be > 0 m^3")
        dnt = r_prime + 10 * math.log10(SABINE_ISO / T0_ISO * float(volume) / s)
    return SimplifiedPrediction(paths, r_prime, dnt)
