"""Photo intake (qa/photos.py) on real image files made here with Pillow and pillow-heif.

What a user would check: the stored photo stands the right way up, carries no location, keeps
when it was taken, and anything that is not a photo (or is too big, or a bomb) is refused with
a message naming the rule. EXIF tag numbers are from the EXIF 2.32 specification (CIPA DC-008):
Orientation 0x0112 (value 6 = rotate 90° clockwise to display), GPS IFD pointer 0x8825,
DateTimeOriginal 0x9003 in the Exif IFD 0x8769, DateTime 0x0132.
"""

from __future__ import annotations

import hashlib
import io
import struct
import zlib
from datetime import UTC, datetime

import pillow_heif
import pytest
from PIL import Image

from qa.photos import PhotoError, clean_photo

ORIENTATION, GPS_IFD, EXIF_IFD, DATETIME_ORIGINAL, DATETIME = 0x0112, 0x8825, 0x8769, 0x9003, 0x0132


def half_red(width: int = 400, height: int = 200) -> Image.Image:
    """Left half red, right half blue: after a rotation the colours tell which way it went."""
    img = Image.new("RGB", (width, height), (0, 0, 255))
    img.paste((255, 0, 0), (0, 0, width // 2, height))
    return img


def jpeg_with_gps_and_rotation() -> bytes:
    exif = Image.Exif()
    exif[ORIENTATION] = 6
    exif[0x010F] = "Phone maker"  # Make: must not survive either
    exif.get_ifd(EXIF_IFD)[DATETIME_ORIGINAL] = "2026:11:16 09:41:07"
    gps = exif.get_ifd(GPS_IFD)
    gps[1], gps[2], gps[3], gps[4] = "N", (51.0, 30.0, 12.0), "W", (0.0, 7.0, 40.0)
    out = io.BytesIO()
    half_red().save(out, "JPEG", quality=90, exif=exif.tobytes())
    return out.getvalue()


def stored_exif(data: bytes) -> Image.Exif:
    with Image.open(io.BytesIO(data)) as img:
        return img.getexif()


def test_jpeg_is_oriented_gps_stripped_capture_time_kept():
    raw = jpeg_with_gps_and_rotation()
    assert stored_exif(raw).get_ifd(GPS_IFD)  # the fixture really carries a location
    clean = clean_photo(raw)
    with Image.open(io.BytesIO(clean.image)) as img:
        assert img.format == "JPEG"
        # Orientation 6: the 400×200 sensor image displays as 200 wide × 400 tall, red half on top.
        assert img.size == (200, 400) == (clean.width, clean.height)
        rgb = img.convert("RGB")
        top, bottom = rgb.getpixel((100, 50)), rgb.getpixel((100, 350))
        assert top[0] > 200 and top[2] < 60, top
        assert bottom[2] > 200 and bottom[0] < 60, bottom
        exif = img.getexif()
    assert not exif.get_ifd(GPS_IFD), "GPS must not be stored"
    assert GPS_IFD not in exif
    assert ORIENTATION not in exif  # pixels are upright; a left-over tag would rotate them twice
    assert 0x010F not in exif
    assert b"GPS" not in clean.image and b"Phone maker" not in clean.image
    assert exif[DATETIME] == "2026:11:16 09:41:07"
    assert clean.captured_at == datetime(2026, 11, 16, 9, 41, 7, tzinfo=UTC)
    assert clean.original_format == "JPEG"
    assert clean.received_sha256 != clean.sha256
    with Image.open(io.BytesIO(clean.thumbnail)) as thumb:
        assert max(thumb.size) <= 320 and thumb.size[1] > thumb.size[0]


def test_capture_time_with_offset_is_kept_as_an_aware_time():
    exif = Image.Exif()
    exif.get_ifd(EXIF_IFD)[DATETIME_ORIGINAL] = "2026:11:16 09:41:07"
    exif.get_ifd(EXIF_IFD)[0x9011] = "+02:00"  # OffsetTimeOriginal
    out = io.BytesIO()
    half_red().save(out, "JPEG", exif=exif.tobytes())
    clean = clean_photo(out.getvalue())
    assert clean.captured_at == datetime(2026, 11, 16, 7, 41, 7, tzinfo=UTC)


def test_plain_phone_jpeg_is_re_encoded_with_nothing_added():
    """Every stored photo is re-encoded, even a metadata-free JPEG (a block the intake did not know
    about would otherwise pass); what the device sent is identified by ``received_sha256``."""
    out = io.BytesIO()
    half_red().save(out, "JPEG", quality=80)
    raw = out.getvalue()
    clean = clean_photo(raw)
    assert clean.image != raw
    assert clean.received_sha256 == hashlib.sha256(raw).hexdigest() != clean.sha256
    assert clean.captured_at is None
    with Image.open(io.BytesIO(clean.image)) as img:
        assert img.size == (400, 200) and len(img.getexif()) == 0
        assert img.convert("RGB").getpixel((100, 100))[0] > 200  # same picture: red on the left


def test_png_is_stored_as_jpeg():
    out = io.BytesIO()
    half_red().convert("RGBA").save(out, "PNG")
    clean = clean_photo(out.getvalue())
    assert clean.original_format == "PNG"
    assert clean.image[:3] == b"\xff\xd8\xff"
    assert (clean.width, clean.height) == (400, 200)


def test_heic_from_a_phone_is_accepted():
    heif = pillow_heif.from_pillow(half_red())
    out = io.BytesIO()
    heif.save(out, quality=80)
    raw = out.getvalue()
    assert raw[4:8] == b"ftyp"  # ISO base media file: really HEIF, not a JPEG in disguise
    clean = clean_photo(raw)
    assert clean.original_format == "HEIF"
    with Image.open(io.BytesIO(clean.image)) as img:
        assert img.format == "JPEG" and img.size == (400, 200)
        assert img.convert("RGB").getpixel((50, 100))[0] > 200


def test_large_photo_is_downscaled_to_the_long_edge(settings):
    settings.PHOTO_LONG_EDGE = 300
    out = io.BytesIO()
    half_red(1200, 600).save(out, "JPEG")
    clean = clean_photo(out.getvalue())
    assert (clean.width, clean.height) == (300, 150)


@pytest.mark.parametrize(
    "data, rule",
    [
        (b"", "empty"),
        (b"this is a text file, not a photo\n" * 20, "not a readable image"),
        (b"<!DOCTYPE html><html><script>alert(1)</script></html>", "not a readable image"),
        (
            b'<?xml version="1.0"?><svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>',
            "not a readable image",
        ),
    ],
    ids=["empty", "text", "html-as-jpg", "svg-as-jpg"],
)
def test_not_an_image_is_refused(data, rule):
    with pytest.raises(PhotoError, match=rf"^image: .*{rule}"):
        clean_photo(data)


def test_gif_is_not_an_accepted_format():
    out = io.BytesIO()
    half_red().save(out, "GIF")
    with pytest.raises(PhotoError, match=r"image: GIF format is not accepted"):
        clean_photo(out.getvalue())


def test_oversize_file_is_refused_before_decoding(settings):
    settings.PHOTO_MAX_BYTES = 2048
    with pytest.raises(PhotoError, match=r"image: the file is larger than 2 KB"):
        clean_photo(b"\xff\xd8" + b"\x00" * 4096)


def png_declaring(width: int, height: int) -> bytes:
    """A tiny PNG whose header declares ``width`` × ``height`` pixels (PNG spec §11.2.2 IHDR)."""

    def chunk(kind: bytes, body: bytes) -> bytes:
        return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body))

    ihdr = struct.pack(">IIBBBBB", width, height, 8, 2, 0, 0, 0)
    return (
        b"\x89PNG\r\n\x1a\n"
        + chunk(b"IHDR", ihdr)
        + chunk(b"IDAT", zlib.compress(b"\x00" * 64))
        + chunk(b"IEND", b"")
    )


@pytest.mark.parametrize("side", [100_000, 8_000], ids=["far-over", "just-over"])
def test_decompression_bomb_is_refused(side):
    # 100 000² is 200× the 50 MP limit (Pillow raises); 8 000² = 64 MP is between the limit and twice it
    # (Pillow only warns; the upload must still be refused).
    with pytest.raises(PhotoError, match=r"image: too many pixels \(limit 50 megapixels\)"):
        clean_photo(png_declaring(side, side))


def test_truncated_jpeg_is_refused():
    out = io.BytesIO()
    half_red(800, 600).save(out, "JPEG", quality=95)
    raw = out.getvalue()
    with pytest.raises(PhotoError, match=r"image: not a readable image"):
        clean_photo(raw[: len(raw) // 2])
