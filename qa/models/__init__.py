"""The record. Everything is stored in SI units (m, m², kg/m², dB)."""

from .events import Event
from .findings import Conflict, Finding, SyncOperation
from .jobs import Job, Member
from .photos import Photo
from .uploads import PhotoUpload
from .walls import Opening, SealPoint, Wall, WallType

__all__ = [
    "Conflict",
    "Event",
    "Finding",
    "Job",
    "Member",
    "Opening",
    "Photo",
    "PhotoUpload",
    "SealPoint",
    "SyncOperation",
    "Wall",
    "WallType",
]
