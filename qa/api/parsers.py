"""A JSON parser that refuses a body nested deeper than :data:`MAX_DEPTH` before decoding it.

Python's decoder recurses once per ``[`` or ``{``: a body of 100 000 opening brackets (200 KB) ended
in a RecursionError, a server error. No body the product takes nests more than a handful of levels
(a sync batch: body → ops → operation → payload → changes → a list), so 64 is generous. The check
is one pass over the brackets and the strings (whose brackets do not count), in C through the
regular expression, and stops at the first level too deep.
"""

from __future__ import annotations

import io
import re

from rest_framework.exceptions import ParseError
from rest_framework.parsers import JSONParser

MAX_DEPTH = 64

#: A JSON string (its brackets are text) or one bracket.
_TOKENS = re.compile(rb'"(?:[^"\\]|\\.)*"|[\[\]{}]', re.DOTALL)
_OPEN = frozenset(b"[{")


def json_depth_exceeds(body: bytes, limit: int = MAX_DEPTH) -> bool:
    """True when ``body`` opens more than ``limit`` arrays or objects inside one another.

    Counts brackets outside strings; a malformed body is left to the decoder to refuse.
    """
    if body.count(b"[") + body.count(b"{") <= limit:
        return False  # cannot be deeper than the number of brackets it has
    depth = 0
    for match in _TOKENS.finditer(body):
        token = match.group()
        if len(token) != 1:
            continue  # a string
        if token[0] in _OPEN:
            depth += 1
            if depth > limit:
                return True
        else:
            depth -= 1
    return False


class BoundedJSONParser(JSONParser):
    """DRF's JSON parser with a nesting limit: a body deeper than :data:`MAX_DEPTH` is a 400."""

    def parse(self, stream, media_type=None, parser_context=None):
        body = stream.read() if stream is not None else b""
        if json_depth_exceeds(body):
            raise ParseError(f"JSON parse error - nested deeper than {MAX_DEPTH} levels")
        try:
            return super().parse(io.BytesIO(body), media_type, parser_context)
        except RecursionError:  # a decoder with a smaller stack than expected: still the client's fault
            raise ParseError(f"JSON parse error - nested deeper than {MAX_DEPTH} levels") from None
