"""Photo intake: verify the file is an image, orient it, strip location, keep the capture time, thumbnail it.

Every stored photo is a freshly encoded JPEG made from the decoded pixels, whatever the device sent:
nothing survives but the pixels, turned upright by their orientation tag, and the capture time
(written back as the one EXIF tag ``DateTime``). So no metadata block can carry a location through:
not an EXIF GPS directory, not an XMP packet (``exif:GPSLatitude``), not an IPTC record in a
Photoshop block, not a second EXIF block behind a broken first one, not a JPEG comment, not the text
chunks of a PNG. What the device sent is identified by ``received_sha256`` (a resumed upload is
checked against that), never by the stored bytes.
"""

from __future__ import annotations

import hashlib
import io
import warnings
from dataclasses import dataclass
from datetime import UTC, datetime

from django.conf import settings
from PIL import Image, ImageOps, UnidentifiedImageError

ACCEPTED_FORMATS = {"JPEG", "PNG", "HEIF", "WEBP"}
EXIF_DATETIME_ORIGINAL = 0x9003
EXIF_OFFSET_TIME_ORIGINAL = 0x9011
EXIF_IFD = 0x8769


class PhotoError(ValueError):
    """The upload is not an acceptable photo; the message says which rule it broke."""


@dataclass(frozen=True)
class CleanPhoto:
    image: bytes
    thumbnail: bytes
    width: int
    height: int
    captured_at: datetime | None
    original_format: str
    received_sha256: str
    sha256: str


def _capture_time(exif: Image.Exif) -> datetime | None:
    sub = exif.get_ifd(EXIF_IFD)
    raw = sub.get(EXIF_DATETIME_ORIGINAL) or exif.get(0x0132)
    if not raw:
        return None
    try:
        moment = datetime.strptime(str(raw).strip("\x00 "), "%Y:%m:%d %H:%M:%S")
    except ValueError:
        return None
    offset = sub.get(EXIF_OFFSET_TIME_ORIGINAL)
    if offset:
        try:
            return datetime.strptime(f"{moment:%Y-%m-%d %H:%M:%S} {offset}", "%Y-%m-%d %H:%M:%S %z")
        except ValueError:
            pass
    # Phones without an offset tag record local time; we keep it, marked as UTC-naive converted.
    return moment.replace(tzinfo=UTC)


def _size(n: int) -> str:
    return f"{n / (1024 * 1024):g} MB" if n >= 1024 * 1024 else f"{n / 1024:g} KB"


def clean_photo(data: bytes) -> CleanPhoto:
    """Validate and re-encode an uploaded photo.

    Raises
    ------
    PhotoError
        Too large, not an image, an unsupported format, truncated, or too many pixels.
    """
    if len(data) == 0:
        raise PhotoError("image: the file is empty")
    if len(data) > settings.PHOTO_MAX_BYTES:
        raise PhotoError(f"image: the file is larger than {_size(settings.PHOTO_MAX_BYTES)}")
    received = hashlib.sha256(data).hexdigest()
    Image.MAX_IMAGE_PIXELS = settings.PHOTO_MAX_PIXELS
    limit_mp = f"{settings.PHOTO_MAX_PIXELS / 1e6:g} megapixels"
    try:
        with warnings.catch_warnings():
            # Between the limit and twice it Pillow only warns; here a warning is a refusal.
            warnings.simplefilter("error", Image.DecompressionBombWarning)
            # A broken EXIF block is read as far as it goes; none of it is stored, so it is no error.
            warnings.filterwarnings("ignore", message="Corrupt EXIF data", category=UserWarning)
            with Image.open(io.BytesIO(data)) as probe:
                fmt = probe.format or ""
                if fmt not in ACCEPTED_FORMATS:
                    raise PhotoError(
                        f"image: {fmt or 'this'} format is not accepted; send JPEG, PNG, HEIC or WebP"
                    )
                if probe.width * probe.height > settings.PHOTO_MAX_PIXELS:
                    raise PhotoError(f"image: too many pixels (limit {limit_mp})")
                probe.verify()
            with Image.open(io.BytesIO(data)) as img:
                exif = img.getexif()
                captured = _capture_time(exif)
                img.load()
                oriented = ImageOps.exif_transpose(img)  # HEIF is already oriented on decode: then a no-op
                rgb = oriented.convert("RGB")
    except PhotoError:
        raise
    except (Image.DecompressionBombError, Image.DecompressionBombWarning):
        raise PhotoError(f"image: too many pixels (limit {limit_mp})") from None
    except (UnidentifiedImageError, OSError, SyntaxError, ValueError) as exc:
        raise PhotoError(f"image: not a readable image ({exc.__class__.__name__})") from None

    rgb.thumbnail((settings.PHOTO_LONG_EDGE, settings.PHOTO_LONG_EDGE), Image.Resampling.LANCZOS)
    # Pillow carries some of the source's metadata in ``info`` through convert and copy, and writes a
    # JPEG comment from it on save; the stored image starts from an empty ``info``.
    rgb.info = {}
    kept = Image.Exif()
    if captured is not None:
        # Only the capture time goes back in: no GPS, no maker notes, no serial numbers.
        kept[0x0132] = captured.strftime("%Y:%m:%d %H:%M:%S")
    out = io.BytesIO()
    rgb.save(out, "JPEG", quality=85, optimize=True, exif=kept.tobytes() if len(kept) else b"")
    thumb = rgb.copy()
    thumb.info = {}
    thumb.thumbnail((settings.PHOTO_THUMB_EDGE, settings.PHOTO_THUMB_EDGE), Image.Resampling.LANCZOS)
    tout = io.BytesIO()
    thumb.save(tout, "JPEG", quality=75)
    image_bytes = out.getvalue()
    return CleanPhoto(
        image=image_bytes,
        thumbnail=tout.getvalue(),
        width=rgb.width,
        height=rgb.height,
        captured_at=captured,
        original_format=fmt,
        received_sha256=received,
        sha256=hashlib.sha256(image_bytes).hexdigest(),
    )
