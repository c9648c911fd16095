"""Security headers on every answer: a content security policy with no inline script, and friends.

Data reaches JS through ``json_script`` blocks (type application/json, not executed), so
``script-src 'self'`` holds everywhere. Placed right after Django's SecurityMiddleware so that
files whitenoise answers itself (the service worker at the site root) carry the same headers.
"""

from __future__ import annotations

from django.conf import settings
from django.http import JsonResponse

POLICY = "; ".join(
    [
        "default-src 'self'",
        "script-src 'self'",
        "style-src 'self'",
        "img-src 'self' data: blob:",
        "connect-src 'self'",
        "worker-src 'self'",
        "manifest-src 'self'",
        "font-src 'self'",
        "object-src 'none'",
        "base-uri 'self'",
        "form-action 'self'",
        "frame-ancestors 'none'",
    ]
)

HEADERS = {
    "Content-Security-Policy": POLICY,
    # The camera is used by the walk for photos; location never (photos are stripped of it, too).
    "Permissions-Policy": "geolocation=(), microphone=(), camera=(self)",
    # Also set by Django's middlewares for views; repeated here for whitenoise's answers.
    "X-Frame-Options": "DENY",
    "X-Content-Type-Options": "nosniff",
    "Cross-Origin-Opener-Policy": "same-origin",
    "Cross-Origin-Resource-Policy": "same-origin",
}


class ContentSecurityPolicyMiddleware:
    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        response = self.get_response(request)
        for name, value in HEADERS.items():
            response.headers.setdefault(name, value)
        return response


#: Room for the multipart boundaries and the small fields sent beside a photo (id, wall, caption...).
MULTIPART_MARGIN = 64 * 1024


class BodySizeLimitMiddleware:
    """Refuse a request whose declared body is larger than the largest thing the product accepts.

    The largest is a photo of ``PHOTO_MAX_BYTES`` with its multipart fields. Django's
    ``DATA_UPLOAD_MAX_MEMORY_SIZE`` leaves file parts out and ``FILE_UPLOAD_MAX_MEMORY_SIZE`` only
    decides when a file is streamed to disk, so without this an over-size photo is read to the end
    (and written to a temporary file) before the serializer refuses it. Judged on ``CONTENT_LENGTH``
    alone: nothing of the body is read. A request without one has no body for Django.
    """

    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        limit = settings.PHOTO_MAX_BYTES + MULTIPART_MARGIN
        declared = request.META.get("CONTENT_LENGTH") or "0"
        try:
            size = int(declared) if declared.isascii() else 0
        except ValueError:
            size = 0
        if size > limit:
            field = "image" if request.path.rstrip("/").endswith("/photos") else "body"
            return JsonResponse(
                {
                    field: [
                        f"is larger than the {limit} bytes accepted in one request "
                        f"(a photo of at most {settings.PHOTO_MAX_BYTES} bytes with its fields)"
                    ]
                },
                status=413,
            )
        return self.get_response(request)
