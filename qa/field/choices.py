"""Vocabularies of the field rating: building kinds, junction positions and kinds, test standards,
field descriptors.

Stored values are short stable slugs; the building kinds and junction kinds are the engine's own keys
(:data:`acoustics.building_kinds.BUILDING_KINDS`, :data:`acoustics.junctions.JUNCTION_KINDS`).
"""

from __future__ import annotations

from django.db import models


class BuildingKind(models.TextChoices):
    CONCRETE_MASONRY = "concrete_masonry", "Concrete slabs, masonry walls"
    WOOD_FRAME = "wood_frame", "Wood frame"
    STEEL_FRAME = "steel_frame", "Steel frame, concrete on steel deck"
    CLT = "clt", "Cross-laminated timber"


class JunctionPosition(models.TextChoices):
    FLOOR = "floor", "Floor"
    CEILING = "ceiling", "Ceiling"
    END_A = "end_a", "End A"
    END_B = "end_b", "End B"


class JunctionKind(models.TextChoices):
    RIGID_CROSS = "rigid_cross", "Rigid cross junction"
    RIGID_T = "rigid_t", "Rigid T junction"
    FLEXIBLE = "flexible", "T junction with a flexible interlayer"
    LIGHT_FACADE = "light_facade", "Lightweight façade"
    LIGHT_DOUBLE_ON_HEAVY = "light_double_on_heavy", "Lightweight double leaf on a heavy element"
    LIGHT_DOUBLE_COUPLED = "light_double_coupled", "Coupled lightweight double leaves"
    LIGHT_CONTINUOUS = "light_continuous", "Lightweight, flanking element continuous"
    LIGHT_INTERRUPTED = "light_interrupted", "Lightweight, flanking element interrupted"


class TestStandard(models.TextChoices):
    ASTM_E336 = "ASTM E336", "ASTM E336"
    ISO_16283_1 = "ISO 16283-1", "ISO 16283-1"


class FieldDescriptor(models.TextChoices):
    """Single-number field results a target may be set in."""

    ASTC = "astc", "ASTC"
    NNIC = "nnic", "NNIC"
    R_PRIME_W = "r_prime_w", "R'w"
    DNT_W = "dnt_w", "DnT,w"


#: Band series a field test may carry: measured levels, or the band results of a test report.
LEVEL_SERIES = ("l1", "l2", "b2", "t2")
REPORT_SERIES = ("r_prime", "dnt", "atl", "nnr")
