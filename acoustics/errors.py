"""Exceptions raised by :mod:`acoustics`.

All of them subclass :class:`ValueError`, so a caller that only knows "bad
input" can catch that, while a caller that wants to tell a missing band from a
bad geometry can catch the specific class.
"""

from __future__ import annotations

__all__ = ["AcousticsError", "RatingError", "GeometryError"]


class AcousticsError(ValueError):
    """Base class of every error raised on purpose by :mod:`acoustics`."""


class RatingError(AcousticsError):
    """A single-number rating cannot be computed from the band values given.

    Raised when a band that the rating needs is missing (NaN) or not finite.
    The message names the band (nominal frequency in Hz) and the rating.

    Attributes
    ----------
    band : float or None
        Nominal centre frequency of the first offending band, Hz.
    rating : str
        Name of the rating that was asked for.
    """

    def __init__(self, message: str, *, band: float | None = None, rating: str = "") -> None:
        super().__init__(message)
        self.band = band
        self.rating = rating


class GeometryError(AcousticsError):
    """A leak geometry or material parameter is outside what the model accepts."""
