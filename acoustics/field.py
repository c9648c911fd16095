"""Field descriptors from measured level differences: NIC, NNIC, ASTC, R'w, DnT,w, Dn,w.

The band quantities are formed first, band by band (absorption varies with
frequency), and then rated with the laboratory procedure of the same family:
ASTM E413 for the E336 quantities, ISO 717-1 for the ISO 16283-1 quantities.
Never convert single numbers between them.

Notes
-----
ASTM E336 [1]_: NR = L1 - L2; NNR = NR + 10 lg(T2 / 0.5 s);
ATL = NR + 10 lg(S / A2) with A2 = 55.26 V / (c T2) (Sabine).
ISO 16283-1 [2]_: D = L1 - L2; R' = D + 10 lg(S / A) with A = 0.16 V / T;
DnT = D + 10 lg(T / 0.5 s); Dn = D - 10 lg(A / 10 m^2).

References
----------
.. [1] ASTM E336-20 (band quantities, from memory) rated by ASTM E413-22 Section 1.3
   (NIC, NNIC, ASTC).
.. [2] ISO 16283-1:2014 Formulas for D, R', DnT (as transcribed); Dn with A0 = 10 m^2
   from memory; rated by ISO 717-1:2020.
.. [3] EN 12354-1:2000, Formula (26) and Annex H.3 (simplified flanking model), as
   transcribed; Vigran, T. E. (2008) *Building Acoustics*, Eq. 9.47.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import numpy.typing as npt

from .bands import BANDS
from .constants import A0_ISO, C0, SABINE_ASTM, SABINE_ISO, T0_ISO
from .errors import AcousticsError
from .ratings import RwResult, _as_bands, rw, stc

__all__ = [
    "sabine_absorption",
    "normalized_noise_reduction",
    "apparent_tl",
    "apparent_r",
    "standardized_level_difference",
    "normalized_level_difference",
    "nic",
    "nnic",
    "astc",
    "r_prime_w",
    "dnt_w",
    "dn_w",
    "flanking_path_index",
    "energy_sum_index",
    "dnt_from_r_prime",
    "FieldInputError",
    "background_correction",
    "FieldTest",
    "field_test",
    "field_test_from_report",
]


class FieldInputError(AcousticsError):
    """Bad input to a field test or a field prediction; the message names the field and the rule.

    Attributes
    ----------
    field : str
        Name of the offending input (e.g. ``"t2"``, ``"b2[125 Hz]"``, ``"junction[floor].length"``).
    rule : str
        The rule it breaks, in words.
    """

    def __init__(self, field: str, rule: str) -> None:
        super().__init__(f"{field}: {rule}")
        self.field = field
        self.rule = rule


def _positive(value: Any, name: str, unit: str) -> npt.NDArray[np.float64]:
    v = np.asarray(value, dtype=np.float64)
    if not np.all(np.isfinite(v)) or np.any(v <= 0):
        raise ValueError(f"{name} must be finite and > 0 {unit} (scalar or one value per band)")
    return v


def sabine_absorption(
    volume: float, t: npt.ArrayLike, *, standard: str = "iso", c0: float = C0
) -> npt.NDArray[np.float64]:
    """Equivalent absorption area of a room from its reverberation time, m^2.

    Parameters
    ----------
    volume : float
        Room volume V, m^3.
    t : float or array_like, shape (21,)
        Reverberation time T, s.
    standard : {"iso", "astm"}
        "iso": A = 0.16 V / T (ISO 16283-1); "astm": A = 55.26 V / (c T) (ASTM E336).
    """
    v = _positive(volume, "volume", "m^3")
    tv = _positive(t, "t (reverberation time)", "s")
    if standard == "iso":
        return SABINE_ISO * v / tv
    if standard == "astm":
        return 55.26 * v / (c0 * tv)
    raise ValueError(f"standard must be 'iso' or 'astm', got {standard!r}")


def _absorption(a: Any, volume: Any, t: Any, standard: str, name: str) -> npt.NDArray[np.float64]:
    if a is not None:
        if volume is not None or t is not None:
            raise ValueError(f"give either {name} or volume and t, not both")
        return _positive(a, name, "m^2")
    if volume is None or t is None:
        raise ValueError(f"give {name} (m^2) or both volume (m^3) and t (s)")
    return sabine_absorption(volume, t, standard=standard)


def normalized_noise_reduction(nr: npt.ArrayLike, t2: npt.ArrayLike) -> npt.NDArray[np.float64]:
    """NNR = NR + 10 lg(T2 / 0.5 s), dB (ASTM E336)."""
    return _as_bands(nr, "nr") + 10.0 * np.log10(_positive(t2, "t2", "s") / T0_ISO)


def apparent_tl(
    nr: npt.ArrayLike,
    area: float,
    *,
    a2: npt.ArrayLike | None = None,
    volume: npt.ArrayLike | None = None,
    t2: npt.ArrayLike | None = None,
) -> npt.NDArray[np.float64]:
    """ATL = NR + 10 lg(S / A2), dB (ASTM E336); A2 given or from V and T2 (Sabine, ASTM constant)."""
    s = _positive(area, "area", "m^2")
    return _as_bands(nr, "nr") + 10.0 * np.log10(s / _absorption(a2, volume, t2, "astm", "a2"))


def apparent_r(
    d: npt.ArrayLike,
    area: float,
    *,
    a: npt.ArrayLike | None = None,
    volume: npt.ArrayLike | None = None,
    t: npt.ArrayLike | None = None,
) -> npt.NDArray[np.float64]:
    """R' = D + 10 lg(S / A), dB (ISO 16283-1); A given or 0.16 V / T."""
    s = _positive(area, "area", "m^2")
    return _as_bands(d, "d") + 10.0 * np.log10(s / _absorption(a, volume, t, "iso", "a"))


def standardized_level_difference(d: npt.ArrayLike, t: npt.ArrayLike) -> npt.NDArray[np.float64]:
    """DnT = D + 10 lg(T / 0.5 s), dB (ISO 16283-1)."""
    return _as_bands(d, "d") + 10.0 * np.log10(_positive(t, "t", "s") / T0_ISO)


def normalized_level_difference(
    d: npt.ArrayLike,
    *,
    a: npt.ArrayLike | None = None,
    volume: npt.ArrayLike | None = None,
    t: npt.ArrayLike | None = None,
) -> npt.NDArray[np.float64]:
    """Dn = D - 10 lg(A / 10 m^2), dB (ISO 16283-1)."""
    return _as_bands(d, "d") - 10.0 * np.log10(_absorption(a, volume, t, "iso", "a") / A0_ISO)


def nic(nr: npt.ArrayLike) -> Any:
    """Noise Isolation Class: ASTM E413 rating of the noise reduction NR (dB per band)."""
    return stc(nr, _label="NIC")


def nnic(nr: npt.ArrayLike, t2: npt.ArrayLike) -> Any:
    """Normalized Noise Isolation Class: E413 rating of NNR = NR + 10 lg(T2 / 0.5 s)."""
    return stc(normalized_noise_reduction(nr, t2), _label="NNIC")


def astc(
    nr: npt.ArrayLike,
    area: float,
    *,
    a2: npt.ArrayLike | None = None,
    volume: npt.ArrayLike | None = None,
    t2: npt.ArrayLike | None = None,
) -> Any:
    """Apparent Sound Transmission Class: E413 rating of ATL = NR + 10 lg(S / A2)."""
    return stc(apparent_tl(nr, area, a2=a2, volume=volume, t2=t2), _label="ASTC")


def r_prime_w(
    d: npt.ArrayLike,
    area: float,
    *,
    a: npt.ArrayLike | None = None,
    volume: npt.ArrayLike | None = None,
    t: npt.ArrayLike | None = None,
    decimal: bool = False,
) -> RwResult:
    """Weighted apparent sound reduction index R'w (with C, Ctr): ISO 717-1 rating of R'."""
    return rw(apparent_r(d, area, a=a, volume=volume, t=t), decimal=decimal, _label="R'w")


def dnt_w(d: npt.ArrayLike, t: npt.ArrayLike, *, decimal: bool = False) -> RwResult:
    """Weighted standardized level difference DnT,w (with C, Ctr): ISO 717-1 rating of DnT."""
    return rw(standardized_level_difference(d, t), decimal=decimal, _label="DnT,w")


def dn_w(
    d: npt.ArrayLike,
    *,
    a: npt.ArrayLike | None = None,
    volume: npt.ArrayLike | None = None,
    t: npt.ArrayLike | None = None,
    decimal: bool = False,
) -> RwResult:
    """Weighted normalized level difference Dn,w (with C, Ctr): ISO 717-1 rating of Dn."""
    return rw(normalized_level_difference(d, a=a, volume=volume, t=t), decimal=decimal, _label="Dn,w")


def flanking_path_index(
    r_i: npt.ArrayLike, r_j: npt.ArrayLike, k_ij: npt.ArrayLike, area: float, length: float
) -> npt.NDArray[np.float64]:
    """Flanking-path index R_ij = (R_i + R_j)/2 + K_ij + 10 lg(S_s / (l0 l_ij)), dB (l0 = 1 m).

    Parameters
    ----------
    r_i, r_j : float or array_like
        Indices of the two elements of the path (weighted or per band), dB.
    k_ij : float or array_like
        Vibration reduction index of the junction, dB.
    area : float
        Separating-element area S_s, m^2.
    length : float
        Junction length l_ij, m.

    References
    ----------
    .. [1] EN 12354-1:2000, simplified method; Vigran (2008) Eq. 9.47.
    """
    s = _positive(area, "area", "m^2")
    lf = _positive(length, "length", "m")
    return (
        (np.asarray(r_i, np.float64) + np.asarray(r_j, np.float64)) / 2.0
        + np.asarray(k_ij, np.float64)
        + 10.0 * np.log10(s / lf)
    )


def energy_sum_index(indices: npt.ArrayLike, axis: int = 0) -> npt.NDArray[np.float64]:
    """Apparent index of parallel paths, R' = -10 lg sum_p 10^(-R_p/10), dB (EN 12354-1 Formula (26))."""
    r = np.asarray(indices, dtype=np.float64)
    return -10.0 * np.log10(np.sum(10.0 ** (-r / 10.0), axis=axis))


def dnt_from_r_prime(r_prime: npt.ArrayLike, volume: float, area: float) -> npt.NDArray[np.float64]:
    """DnT = R' + 10 lg(0.32 V / S), dB (EN/ISO 12354-1 Formula 5b; 0.32 = 0.16 / 0.5 s)."""
    v = _positive(volume, "volume", "m^3")
    s = _positive(area, "area", "m^2")
    return np.asarray(r_prime, np.float64) + 10.0 * np.log10(SABINE_ISO / T0_ISO * v / s)


# ------------------------------------------------------------------ field tests (measured bands)
_ISO_RANGE = (3, 19)  # 100-3150 Hz, ISO 717-1
_ASTM_RANGE = (4, 20)  # 125-4000 Hz, ASTM E413


def _band_input(value: Any, name: str) -> npt.NDArray[np.float64]:
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise FieldInputError(name, "must be numbers, one per band (dB)") from None
    if arr.shape != (len(BANDS),):
        raise FieldInputError(
            name, f"must have {len(BANDS)} one-third-octave bands (50-5000 Hz), NaN if not measured"
        )
    if np.any(np.isinf(arr)):
        raise FieldInputError(name, "must be finite where measured (NaN marks a band not measured)")
    return arr


def _scalar(value: Any, name: str, unit: str, upper: float) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise FieldInputError(name, f"must be a number in {unit}") from None
    if not (np.isfinite(v) and 0 < v <= upper):
        raise FieldInputError(name, f"must be > 0 {unit} and at most {upper:g} {unit}")
    return v


def background_correction(
    l2: npt.ArrayLike, b2: npt.ArrayLike
) -> tuple[npt.NDArray[np.float64], npt.NDArray[np.bool_]]:
    """Correct receiving-room levels for background noise (ISO 16283-1 Clause 9.2; ASTM E336 likewise).

    Parameters
    ----------
    l2 : array_like, shape (21,)
        Receiving-room level with the source on (signal plus background), dB.
    b2 : array_like, shape (21,)
        Background level, dB.

    Returns
    -------
    corrected : ndarray
        L2 - B2 > 10 dB: unchanged; 6-10 dB: 10 lg(10^(L2/10) - 10^(B2/10));
        below 6 dB: L2 - 1.3 dB (the correction at 6 dB) and the band's result is a limit.
    limit : ndarray of bool
        Bands where the correction hit that limit (the level difference is then a lower
        bound: the true insulation is at least the value reported).

    References
    ----------
    .. [1] ISO 16283-1:2014, Clause 9.2 (from memory: 10 dB / 6 dB thresholds, 1.3 dB limit).
    .. [2] ASTM E336 background correction (from memory; the same thresholds are applied here).
    """
    level = np.asarray(l2, np.float64)
    background = np.asarray(b2, np.float64)
    diff = level - background
    with np.errstate(invalid="ignore", over="ignore"):
        logsub = 10.0 * np.log10(np.maximum(10.0 ** (level / 10.0) - 10.0 ** (background / 10.0), 1e-300))
        out = np.where(diff > 10.0, level, np.where(diff >= 6.0, logsub, level - 1.3))
        limit = diff < 6.0
    return np.where(np.isnan(background), level, out), limit & ~np.isnan(background)


@dataclass(frozen=True, eq=False)
class FieldTest:
    """Field descriptors of one room pair, per band (NaN where not measured) and rated.

    Attributes
    ----------
    d, dnt, r_prime : ndarray
        ISO 16283-1 D, DnT and R', dB.
    nr, nnr, atl : ndarray
        ASTM E336 NR, NNR and ATL, dB.
    limit : ndarray of bool
        Bands whose background correction was limited (result is a lower bound).
    r_prime_w, dnt_w : RwResult or None
        ISO 717-1 ratings (None when a band 100-3150 Hz is missing).
    astc, nnic, nic : int or None
        ASTM E413 ratings (None when a band 125-4000 Hz is missing).
    flags : tuple of str
        "background_limit" (some band is a limit value), "iso_incomplete", "astm_incomplete".
    """

    d: npt.NDArray[np.float64]
    dnt: npt.NDArray[np.float64]
    r_prime: npt.NDArray[np.float64]
    nr: npt.NDArray[np.float64]
    nnr: npt.NDArray[np.float64]
    atl: npt.NDArray[np.float64]
    limit: npt.NDArray[np.bool_]
    r_prime_w: RwResult | None
    dnt_w: RwResult | None
    astc: int | None
    nnic: int | None
    nic: int | None
    flags: tuple[str, ...]

    @property
    def limit_bands(self) -> list[int]:
        """Nominal frequencies (Hz) of the bands whose result is a limit value."""
        return [int(f) for f in BANDS[self.limit]]


def _complete(*arrays: npt.NDArray[np.float64], rng: tuple[int, int]) -> bool:
    return all(np.all(np.isfinite(a[rng[0] : rng[1]])) for a in arrays)


def _rate_test(bands: dict[str, npt.NDArray[np.float64]], limit: npt.NDArray[np.bool_]) -> FieldTest:
    iso = _complete(bands["dnt"], bands["r_prime"], rng=_ISO_RANGE)
    astm = _complete(bands["atl"], bands["nnr"], rng=_ASTM_RANGE)
    nic_ok = _complete(bands["nr"], rng=_ASTM_RANGE)
    if not iso and not astm:
        first = next(
            (int(BANDS[i]) for i in range(_ISO_RANGE[0], _ASTM_RANGE[1]) if not np.isfinite(bands["d"][i])),
            None,
        )
        raise FieldInputError(
            "bands",
            "all bands 100-3150 Hz (ISO 16283-1 / ISO 717-1) or 125-4000 Hz (ASTM E336 / E413) "
            "must be measured" + (f"; {first} Hz is missing" if first else ""),
        )
    flags = []
    if np.any(limit):
        flags.append("background_limit")
    flags += [] if iso else ["iso_incomplete"]
    flags += [] if astm else ["astm_incomplete"]
    return FieldTest(
        **bands,
        limit=limit,
        r_prime_w=rw(bands["r_prime"], _label="R'w") if iso else None,
        dnt_w=rw(bands["dnt"], _label="DnT,w") if iso else None,
        astc=stc(bands["atl"], _label="ASTC") if astm else None,
        nnic=stc(bands["nnr"], _label="NNIC") if astm else None,
        nic=stc(bands["nr"], _label="NIC") if nic_ok else None,
        flags=tuple(flags),
    )


def field_test(
    l1: Any,
    l2: Any,
    t2: Any,
    volume: float,
    area: float,
    *,
    b2: Any = None,
    strict_background: bool = False,
) -> FieldTest:
    """Field descriptors from measured band levels (ISO 16283-1 and ASTM E336 together).

    Parameters
    ----------
    l1, l2 : array_like, shape (21,)
        Space- and time-averaged source and receiving room levels, dB (NaN: not measured).
    t2 : float or array_like, shape (21,)
        Receiving-room reverberation time, s (0 < T2 <= 20 s).
    volume : float
        Receiving-room volume V, m^3.
    area : float
        Separating area S, m^2.
    b2 : array_like, optional
        Receiving-room background level, dB; corrected by :func:`background_correction`.
    strict_background : bool
        Raise :class:`FieldInputError` instead of flagging a band whose background is
        within 6 dB of the receiving level.

    Returns
    -------
    FieldTest

    Notes
    -----
    D = L1 - L2; DnT = D + 10 lg(T2 / 0.5 s); R' = D + 10 lg(S / A), A = 0.16 V / T2 [1]_.
    NR = L1 - L2; NNR = NR + 10 lg(T2 / 0.5 s); ATL = NR + 10 lg(S / A2),
    A2 = 55.26 V / (c T2) [2]_.

    References
    ----------
    .. [1] ISO 16283-1:2014, Formulas for D, DnT, R' (as transcribed) and Clause 9.2.
    .. [2] ASTM E336 (from memory), rated by ASTM E413-22.
    """
    l1 = _band_input(l1, "l1")
    l2 = _band_input(l2, "l2")
    t = np.asarray(t2, float)
    t = np.full(len(BANDS), float(t)) if t.ndim == 0 else _band_input(t, "t2")
    measured = np.isfinite(l1) & np.isfinite(l2)
    if np.any(np.isfinite(l1) != np.isfinite(l2)):
        i = int(np.argmax(np.isfinite(l1) != np.isfinite(l2)))
        raise FieldInputError(f"l2[{int(BANDS[i])} Hz]", "l1 and l2 must be measured in the same bands")
    bad_t = measured & ~((t > 0) & (t <= 20))
    if np.any(bad_t):
        i = int(np.argmax(bad_t))
        raise FieldInputError(f"t2[{int(BANDS[i])} Hz]", "reverberation time must be > 0 s and at most 20 s")
    v = _scalar(volume, "volume", "m^3", 1e5)
    s = _scalar(area, "area", "m^2", 1e4)
    limit = np.zeros(len(BANDS), bool)
    if b2 is not None:
        b = _band_input(b2, "b2")
        missing = measured & np.isnan(b)
        if np.any(missing):
            raise FieldInputError(
                f"b2[{int(BANDS[np.argmax(missing)])} Hz]", "background must be given in every measured band"
            )
        l2, limit = background_correction(l2, b)
        limit &= measured
        if strict_background and np.any(limit):
            raise FieldInputError(
                f"b2[{int(BANDS[np.argmax(limit)])} Hz]",
                "background must be at least 6 dB below the receiving level (ISO 16283-1 Clause 9.2)",
            )
    d = l1 - l2
    with np.errstate(invalid="ignore"):
        bands = {
            "d": d,
            "dnt": d + 10 * np.log10(t / T0_ISO),
            "r_prime": d + 10 * np.log10(s * t / (SABINE_ISO * v)),
            "nr": d,
            "nnr": d + 10 * np.log10(t / T0_ISO),
            "atl": d + 10 * np.log10(s * t / (SABINE_ASTM * v)),
        }
    return _rate_test(bands, limit)


def field_test_from_report(
    *,
    r_prime: Any = None,
    dnt: Any = None,
    atl: Any = None,
    nnr: Any = None,
    nr: Any = None,
    d: Any = None,
) -> FieldTest:
    """Field descriptors from a test report's band results (dB per band, NaN where not reported).

    Give the ISO pair (``r_prime``, ``dnt``) and/or the ASTM set (``atl``, ``nnr``, optionally ``nr``);
    bands not given stay NaN and the ratings that need them are None.
    """
    nan = np.full(len(BANDS), np.nan)
    given = {
        k: (nan.copy() if v is None else _band_input(v, k))
        for k, v in dict(r_prime=r_prime, dnt=dnt, atl=atl, nnr=nnr, nr=nr, d=d).items()
    }
    if all(v is None for v in (r_prime, dnt, atl, nnr)):
        raise FieldInputError("bands", "give r_prime and dnt (ISO 16283-1) or atl and nnr (ASTM E336)")
    return _rate_test(given, np.zeros(len(BANDS), bool))
