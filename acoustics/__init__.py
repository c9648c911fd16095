"""Sealwalk acoustics engine: band spectra, ratings, leaks, composite TL and the leak audit.

Pure numpy (scipy only for special functions); never imports Django, so it can
run in a worker, a notebook or a test without the web app. Every spectrum is an
array over :data:`BANDS` (21 one-third-octave bands, 50-5000 Hz, NaN = not
measured); every function is vectorised over leading axes.
"""

from __future__ import annotations

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

from .assembly import CONNECTION_TYPES, Assembly, Cavity, Connection, Leaf, WallSpecError
from .bands import averaging_frequencies
from .compound_gaps import annular_gap, series_slit
from .defects import (
    back_to_back_boxes,
    channel_short_circuit,
    insulation_defect,
    missing_layer,
    one_face_gap,
    one_face_gap_from_lab,
    rigid_bridge,
)
from .doors import DoorSet, door_leak
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
from .leak_audit import Audit, audit
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
from .materials import MATERIALS, Material, bending_stiffness, critical_frequency, get_material
from .ratings import rating_weights, round_half_up
from .wall_audit import WallAudit, audit_wall
from .wall_model import WallModel, wall_model
from .wall_physics import (
    cavity_absorption,
    cavity_loss_factor,
    cavity_path_tl,
    finite_size_tau,
    mass_law,
    resonance_factor,
    resonance_frequency,
    single_leaf_tl,
)
from .walls import Prediction, predict, predict_tl

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
    "WallAudit",
    "audit_wall",
    "WallModel",
    "wall_model",
    "DoorSet",
    "door_leak",
    "annular_gap",
    "series_slit",
    "rating_weights",
    "round_half_up",
    "averaging_frequencies",
]

__all__ += [
    "CONNECTION_TYPES",
    "Assembly",
    "Cavity",
    "Connection",
    "Leaf",
    "WallSpecError",
    "back_to_back_boxes",
    "channel_short_circuit",
    "insulation_defect",
    "missing_layer",
    "one_face_gap",
    "one_face_gap_from_lab",
    "rigid_bridge",
    "MATERIALS",
    "Material",
    "bending_stiffness",
    "critical_frequency",
    "get_material",
    "cavity_absorption",
    "cavity_loss_factor",
    "cavity_path_tl",
    "finite_size_tau",
    "mass_law",
    "resonance_factor",
    "resonance_frequency",
    "single_leaf_tl",
    "Prediction",
    "predict",
    "predict_tl",
]

# Field tests and the ISO 12354-1 field prediction.
from .building_kinds import BUILDING_KINDS, default_junctions, predict_wall  # noqa: E402
from .field import FieldInputError, FieldTest, background_correction, field_test, field_test_from_report  # noqa: E402
from .field_inputs import Element, Junction, Room, Separating  # noqa: E402
from .field_prediction import FieldPrediction, predict_field, predict_simplified  # noqa: E402

__all__ += [
    "BUILDING_KINDS",
    "default_junctions",
    "predict_wall",
    "FieldInputError",
    "FieldTest",
    "background_correction",
    "field_test",
    "field_test_from_report",
    "Element",
    "Junction",
    "Room",
    "Separating",
    "FieldPrediction",
    "predict_field",
    "predict_simplified",
]
