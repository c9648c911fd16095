"""The record. Everything is stored in SI units (m, m², kg/m², dB)."""

from .events import Event
from .field import FieldTest, JunctionOverride, RoomPair
from .findings import Conflict, Finding, SyncOperation
from .jobs import Job, Member
from .photos import Photo
from .stamps import Stamp
from .uploads import PhotoUpload
from .walls import Opening, SealPoint, Wall, WallType

__all__ = [
    "Conflict",
    "Event",
    "FieldTest",
    "Finding",
    "Job",
    "JunctionOverride",
    "Member",
    "Opening",
    "Photo",
    "PhotoUpload",
    "RoomPair",
    "SealPoint",
    "Stamp",
    "SyncOperation",
    "Wall",
    "WallType",
]
