"""Security headers on every answer: a content security policy with no inline script, and friends.

Data reaches JS through ``json_script`` blocks (type application/json, not executed), so
``script-src 'self'`` holds everywhere. Placed right after Django's SecurityMiddleware so that
files whitenoise answers itself (the service worker at the site root) carry the same headers.
"""

from __future__ import annotations

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
