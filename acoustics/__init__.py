"""Sealwalk acoustics engine: band spectra, ratings, leaks, composite TL and the leak audit.

Pure numpy (scipy only for special functions); never imports Django, so it can
run in a worker, a notebook or a test without the web app. Every spectrum is an
array over :data:`BANDS` (21 one-third-octave bands, 50-5000 Hz, NaN = not
measured); every function is vectorised over leading axes.
"""

from __future__ import annotations

import importlib.util as _ilu

from .bands import BAND_INDEX, BANDS, N_BANDS, band_edges, band_slice, exact_centres, sub_band_frequencies
from .composite import composite, tau_from_tl, tl_from_tau, tl_with_added_area
from .errors import AcousticsError, GeometryError, RatingError
from .ratings import RATINGS, RwResult, contour, oitc, rate, rw, stc

__all__ = [
    "BANDS",
    "BAND_INDEX",
    "N_BANDS",
    "band_edges",
    "band_slice",
    "exact_centres",
    "sub_band_frequencies",
    "AcousticsError",
    "GeometryError",
    "RatingError",
    "RATINGS",
    "RwResult",
    "contour",
    "oitc",
    "rate",
    "rw",
    "stc",
    "composite",
    "tau_from_tl",
    "tl_from_tau",
    "tl_with_added_area",
]

from .audit import Audit, audit
from .bands import averaging_frequencies
from .field import (
    apparent_r,
    apparent_tl,
    astc,
    dn_w,
    dnt_from_r_prime,
    dnt_w,
    energy_sum_index,
    flanking_path_index,
    nic,
    nnic,
    normalized_level_difference,
    normalized_noise_reduction,
    r_prime_w,
    sabine_absorption,
    standardized_level_difference,
)
from .leaks import (
    FLAG_TEXT,
    Leak,
    added_area,
    band_average,
    crack,
    filled_gap,
    hole,
    open_area,
    ring_gap,
    skin_gap,
    slit,
)
from .ratings import rating_weights, round_half_up

__all__ += [
    "dnt_from_r_prime",
    "energy_sum_index",
    "flanking_path_index",
    "apparent_r",
    "apparent_tl",
    "astc",
    "dn_w",
    "dnt_w",
    "nic",
    "nnic",
    "normalized_level_difference",
    "normalized_noise_reduction",
    "r_prime_w",
    "sabine_absorption",
    "standardized_level_difference",
    "FLAG_TEXT",
    "Leak",
    "added_area",
    "band_average",
    "crack",
    "filled_gap",
    "hole",
    "open_area",
    "ring_gap",
    "skin_gap",
    "slit",
    "Audit",
    "audit",
    "rating_weights",
    "round_half_up",
    "averaging_frequencies",
]

# Wall prediction modules are developed alongside; re-export them once they exist.
for _name in ("materials", "walls", "defects"):
    if _ilu.find_spec(f"{__name__}.{_name}") is not None:
        _mod = __import__(f"{__name__}.{_name}", fromlist=["__all__"])
        for _public in getattr(_mod, "__all__", ()):
            globals()[_public] = getattr(_mod, _public)
            __all__.append(_public)
        del _mod
del _ilu, _name
