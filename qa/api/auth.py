"""Token auth for scripts: obtain (throttled) and revoke."""

from __future__ import annotations

from drf_spectacular.utils import extend_schema
from rest_framework import status
from rest_framework.authtoken.models import Token
from rest_framework.authtoken.views import ObtainAuthToken
from rest_framework.exceptions import Throttled
from rest_framework.parsers import FormParser, MultiPartParser
from rest_framework.permissions import IsAuthenticated
from rest_framework.response import Response
from rest_framework.throttling import ScopedRateThrottle
from rest_framework.views import APIView

from .. import login_throttle
from .parsers import BoundedJSONParser


class ObtainToken(ObtainAuthToken):
    """POST username and password; answers the user's API token.

    Two brakes: a rate per client address (``DEFAULT_THROTTLE_RATES["login"]``) and the same
    failure count per user name and address as the sign-in page, so a guesser gains nothing by
    switching from the page to the API.
    """

    throttle_classes = [ScopedRateThrottle]
    throttle_scope = "login"
    # DRF's token view names its own parsers; keep the depth-bounded JSON one (qa/api/parsers.py).
    parser_classes = [BoundedJSONParser, FormParser, MultiPartParser]

    def post(self, request, *args, **kwargs):
        username = str(request.data.get("username", ""))[:150] if hasattr(request.data, "get") else ""
        address = login_throttle.client_address(request._request)
        if login_throttle.is_locked(username, address):
            raise Throttled(wait=login_throttle.window_s(), detail=login_throttle.lockout_message())
        serializer = self.get_serializer(data=request.data)
        if not serializer.is_valid():
            login_throttle.record_failure(username, address)
            serializer.is_valid(raise_exception=True)
        login_throttle.clear(username, address)
        token, _ = Token.objects.get_or_create(user=serializer.validated_data["user"])
        return Response({"token": token.key})


class RevokeToken(APIView):
    """POST to delete the user's API token; scripts holding it stop working at once (403 after)."""

    permission_classes = [IsAuthenticated]

    @extend_schema(request=None, responses={204: None})
    def post(self, request):
        Token.objects.filter(user=request.user).delete()
        return Response(status=status.HTTP_204_NO_CONTENT)
