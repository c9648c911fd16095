"""Photos keep no location, whichever metadata block carries it (qa/photos.py, ``clean_photo``).

Each case builds a real file here, byte by byte where Pillow cannot write the block, checks that the
location really is in it, then checks the stored image and thumbnail by walking their JPEG segments.
Sources for the layouts:

- JPEG markers and segment lengths: ITU-T T.81 (1992), Annex B.1.1 (SOI FFD8, EOI FFD9, APPn FFE0-FFEF,
  COM FFFE; every marker segment but SOI, EOI and RSTn carries a 2-byte big-endian length that
  counts itself).
- EXIF in APP1 after ``Exif\\0\\0``; tags: GPS IFD pointer 0x8825, Orientation 0x0112, DateTime 0x0132,
  DateTimeOriginal 0x9003: EXIF 2.32 (CIPA DC-008-2019), 4.5.4 and 4.6.
- XMP in APP1 after ``http://ns.adobe.com/xap/1.0/\\0``: Adobe XMP Specification Part 3 (2016), 1.1.3;
  ``exif:GPSLatitude`` in the namespace ``http://ns.adobe.com/exif/1.0/``: XMP Part 2, 3.2.
- IPTC in APP13 ``Photoshop 3.0\\0``, image resource ``8BIM`` 0x0404; IIM record 2 datasets 2:90 City,
  2:92 Sub-location, 2:101 Country: IPTC Information Interchange Model 4.2, chapter 6.
- PNG ``tEXt`` / ``iTXt`` / ``eXIf`` chunks: PNG Specification, 3rd edition (W3C, 2025), 11.3.
"""

from __future__ import annotations

import io
import struct
import zlib
from datetime import UTC, datetime

import pillow_heif
import pytest
from PIL import Image

from qa.photos import clean_photo

GPS_IFD, ORIENTATION, DATETIME, EXIF_IFD, DATETIME_ORIGINAL = 0x8825, 0x0112, 0x0132, 0x8769, 0x9003
PLACE = b"Larkspur Lane 14"  # an invented street: it must not reach the stored bytes
LAT = b"51,30.2N"
XMP_NS = b"http://ns.adobe.com/xap/1.0/\x00"


def base_jpeg(width: int = 400, height: int = 200) -> bytes:
    """A plain JPEG (Pillow writes SOI, APP0 JFIF, tables, frame, scan, EOI): left red, right blue."""
    img = Image.new("RGB", (width, height), (0, 0, 255))
    img.paste((255, 0, 0), (0, 0, width // 2, height))
    out = io.BytesIO()
    img.save(out, "JPEG", quality=90)
    return out.getvalue()


def segment(marker: int, body: bytes) -> bytes:
    return struct.pack(">BBH", 0xFF, marker, len(body) + 2) + body


def with_segments(jpeg: bytes, *segments: bytes) -> bytes:
    """Insert marker segments right after SOI, where cameras put their APPn blocks."""
    assert jpeg[:2] == b"\xff\xd8"
    return jpeg[:2] + b"".join(segments) + jpeg[2:]


def gps_exif(orientation: int | None = None) -> bytes:
    exif = Image.Exif()
    if orientation:
        exif[ORIENTATION] = orientation
    exif[0x010E] = PLACE.decode()  # ImageDescription: a readable trace to look for in the output
    exif.get_ifd(EXIF_IFD)[DATETIME_ORIGINAL] = "2026:11:16 09:41:07"
    gps = exif.get_ifd(GPS_IFD)
    gps[1], gps[2], gps[3], gps[4] = "N", (51.0, 30.0, 12.0), "W", (0.0, 7.0, 40.0)
    return exif.tobytes()  # starts with b"Exif\0\0"


def xmp_packet() -> bytes:
    return (
        b'<?xpacket begin="\xef\xbb\xbf" id="W5M0MpCehiHzreSzNTczkc9d"?>'
        b'<x:xmpmeta xmlns:x="adobe:ns:meta/"><rdf:RDF xmlns:rdf="http://www.w3.org/1999/02/22-rdf-syntax-ns#">'
        b'<rdf:Description rdf:about="" xmlns:exif="http://ns.adobe.com/exif/1.0/" '
        b'xmlns:photoshop="http://ns.adobe.com/photoshop/1.0/" '
        b'exif:GPSLatitude="' + LAT + b'" exif:GPSLongitude="0,7.6W" photoshop:City="' + PLACE + b'"/>'
        b'</rdf:RDF></x:xmpmeta><?xpacket end="w"?>'
    )


def iptc_block() -> bytes:
    """APP13 body: Photoshop 3.0 image resource 0x0404 holding IIM record 2 location datasets."""

    def dataset(number: int, value: bytes) -> bytes:
        return struct.pack(">BBBH", 0x1C, 2, number, len(value)) + value

    iim = dataset(0, b"\x00\x04") + dataset(90, PLACE) + dataset(92, b"Flat 3") + dataset(101, b"Nowhereland")
    if len(iim) % 2:
        iim += b"\x00"  # resource data is padded to an even length
    resource = b"8BIM" + struct.pack(">H", 0x0404) + b"\x00\x00" + struct.pack(">I", len(iim)) + iim
    return b"Photoshop 3.0\x00" + resource


def jpeg_segments(data: bytes) -> tuple[list[tuple[int, bytes]], bytes]:
    """Walk a JPEG (T.81 B.1.1): the marker segments before the first scan, and what follows EOI."""
    assert data[:2] == b"\xff\xd8", "not a JPEG"
    found, pos = [], 2
    while True:
        assert data[pos] == 0xFF, f"no marker at byte {pos}"
        marker = data[pos + 1]
        (length,) = struct.unpack(">H", data[pos + 2 : pos + 4])
        found.append((marker, data[pos + 4 : pos + 2 + length]))
        pos += 2 + length
        if marker == 0xDA:  # SOS: entropy-coded data follows up to EOI (progressive files not made here)
            break
    end = data.rfind(b"\xff\xd9")
    return found, data[end + 2 :]


def assert_nothing_but_pixels_and_time(data: bytes) -> None:
    """The stored JPEG holds image segments, JFIF, and at most an EXIF block with DateTime alone."""
    segments, trailing = jpeg_segments(data)
    allowed = {0xC0, 0xC1, 0xC2, 0xC4, 0xDB, 0xDD, 0xDA, 0xE0, 0xE1}
    assert {m for m, _ in segments} <= allowed, [hex(m) for m, _ in segments]
    for marker, body in segments:
        if marker == 0xE0:
            assert body.startswith(b"JFIF\x00"), body[:16]
        if marker == 0xE1:
            assert body.startswith(b"Exif\x00\x00"), body[:32]
    assert sum(1 for m, _ in segments if m == 0xE1) <= 1
    assert trailing.strip(b"\x00") == b"", "nothing may follow EOI"
    with Image.open(io.BytesIO(data)) as img:
        exif = img.getexif()
        assert set(exif) <= {DATETIME}, dict(exif)
        assert "xmp" not in img.info and "comment" not in img.info and "photoshop" not in img.info
    for needle in (b"GPS", PLACE, LAT, XMP_NS, b"Photoshop", b"8BIM", b"Nowhereland"):
        assert needle not in data, needle


def assert_clean(raw: bytes):
    clean = clean_photo(raw)
    assert_nothing_but_pixels_and_time(clean.image)
    assert_nothing_but_pixels_and_time(clean.thumbnail)
    return clean


def test_xmp_packet_with_gps_latitude_and_no_exif_is_removed():
    raw = with_segments(base_jpeg(), segment(0xE1, XMP_NS + xmp_packet()))
    with Image.open(io.BytesIO(raw)) as img:  # the fixture: no EXIF, and Pillow sees the packet
        assert len(img.getexif()) == 0 and b"exif:GPSLatitude" in img.info["xmp"]
    clean = assert_clean(raw)
    assert clean.captured_at is None


def test_iptc_location_in_a_photoshop_block_is_removed():
    raw = with_segments(base_jpeg(), segment(0xED, iptc_block()))
    with Image.open(io.BytesIO(raw)) as img:
        assert PLACE in img.info["photoshop"][0x0404]
    assert_clean(raw)


def test_second_exif_block_with_gps_behind_a_broken_first_is_removed():
    broken = b"Exif\x00\x00MM\x00\x2a\xff\xff\xff\x00" + b"\x00" * 6  # IFD offset past the end
    raw = with_segments(base_jpeg(), segment(0xE1, broken), segment(0xE1, gps_exif(orientation=6)))
    assert raw.count(b"Exif\x00\x00") == 2 and PLACE not in broken
    assert_clean(raw)


def test_jpeg_comment_naming_the_place_is_removed():
    # Pillow copies a source's comment into a JPEG it writes unless told otherwise.
    raw = with_segments(base_jpeg(), segment(0xFE, b"Taken at " + PLACE))
    with Image.open(io.BytesIO(raw)) as img:
        assert PLACE in img.info["comment"]
    assert_clean(raw)


def test_every_block_at_once_keeps_only_capture_time_and_upright_pixels():
    raw = with_segments(
        base_jpeg(),
        segment(0xE1, gps_exif(orientation=6)),
        segment(0xE1, XMP_NS + xmp_packet()),
        segment(0xED, iptc_block()),
        segment(0xE2, b"ICC_PROFILE\x00\x01\x01" + PLACE),  # an APP2 carrying text it should not
        segment(0xFE, PLACE),
    )
    clean = assert_clean(raw)
    assert clean.captured_at == datetime(2026, 11, 16, 9, 41, 7, tzinfo=UTC)
    with Image.open(io.BytesIO(clean.image)) as img:
        assert img.getexif()[DATETIME] == "2026:11:16 09:41:07"
        # Orientation 6 (rotate 90° clockwise to display): 400 × 200 stored as 200 × 400, red on top.
        assert img.size == (200, 400)
        top, bottom = img.convert("RGB").getpixel((100, 50)), img.convert("RGB").getpixel((100, 350))
    assert top[0] > 200 and top[2] < 60 and bottom[2] > 200 and bottom[0] < 60, (top, bottom)


def test_second_image_with_gps_appended_after_the_end_marker_is_removed():
    exif_jpeg = io.BytesIO()
    Image.new("RGB", (16, 16), (9, 9, 9)).save(exif_jpeg, "JPEG", exif=gps_exif())
    raw = base_jpeg() + exif_jpeg.getvalue()
    assert gps_exif() in raw
    assert_clean(raw)


def test_plain_jpeg_from_the_walk_is_re_encoded_too():
    raw = base_jpeg()
    clean = assert_clean(raw)
    assert clean.image != raw and clean.received_sha256 != clean.sha256


def png_chunk(kind: bytes, body: bytes) -> bytes:
    return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body))


def test_png_text_itxt_and_exif_chunks_are_removed():
    out = io.BytesIO()
    Image.new("RGB", (120, 80), (10, 120, 30)).save(out, "PNG")
    png = out.getvalue()
    iend = png.rindex(b"IEND") - 4
    extra = (
        png_chunk(b"tEXt", b"Location\x00" + PLACE)
        + png_chunk(b"iTXt", b"XML:com.adobe.xmp\x00\x00\x00\x00\x00" + xmp_packet())
        + png_chunk(b"eXIf", gps_exif()[6:])  # the PNG chunk holds the TIFF structure without "Exif\0\0"
    )
    raw = png[:iend] + extra + png[iend:]
    with Image.open(io.BytesIO(raw)) as img:
        img.load()
        assert PLACE in img.info["Location"].encode() and img.getexif().get_ifd(GPS_IFD)
    assert_clean(raw)


def test_webp_exif_and_xmp_are_removed():
    out = io.BytesIO()
    Image.new("RGB", (120, 80), (10, 120, 30)).save(out, "WEBP", exif=gps_exif(), xmp=xmp_packet())
    raw = out.getvalue()
    assert PLACE in raw and LAT in raw
    assert_clean(raw)


def test_heic_exif_with_gps_is_removed():
    pillow_heif.register_heif_opener()
    out = io.BytesIO()
    Image.new("RGB", (128, 96), (10, 120, 30)).save(out, "HEIF", exif=gps_exif(), xmp=xmp_packet())
    raw = out.getvalue()
    assert LAT in raw
    clean = assert_clean(raw)
    assert clean.original_format == "HEIF"


@pytest.mark.parametrize("kind", ["thumbnail", "image"])
def test_stored_files_carry_no_pillow_info_at_all(kind):
    """Whatever the source, the decoded stored file has nothing in ``info`` a location could hide in."""
    raw = with_segments(base_jpeg(), segment(0xE1, XMP_NS + xmp_packet()), segment(0xFE, PLACE))
    clean = clean_photo(raw)
    with Image.open(io.BytesIO(getattr(clean, kind))) as img:
        assert set(img.info) <= {"jfif", "jfif_version", "jfif_unit", "jfif_density", "dpi", "exif"}, img.info
