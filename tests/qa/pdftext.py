"""Text shown in a PDF, for tests: no PDF library involved.

Each stream is cut by its declared ``/Length`` (a compressed stream may itself end in a byte that looks like
a line break, so cutting at "endstream" is not reliable), inflated with zlib when compressed, and the strings
of its ``Tj`` operators are joined.
"""

from __future__ import annotations

import re
import zlib

_STREAM = re.compile(rb"/Length (\d+)(?:(?!>>).)*>>\s*stream\r?\n", re.S)


def pdf_strings(data: bytes) -> str:
    chunks = []
    for m in _STREAM.finditer(data):
        raw = data[m.end() : m.end() + int(m.group(1))]
        try:
            raw = zlib.decompress(raw)
        except zlib.error:
            pass
        chunks.append(raw.decode("latin-1"))
    shown = re.findall(r"\(((?:[^()\\]|\\.)*)\)\s*Tj", "".join(chunks))
    return " ".join(re.sub(r"\\(.)", r"\1", s) for s in shown)
