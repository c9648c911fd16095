"""Token auth for scripts: obtain (throttled) and revoke."""

from __future__ import annotations

from rest_framework import status
from rest_framework.authtoken.models import Token
from rest_framework.authtoken.views import ObtainAuthToken
from rest_framework.permissions import IsAuthenticated
from rest_framework.response import Response
from rest_framework.throttling import ScopedRateThrottle
from rest_framework.views import APIView


class ObtainToken(ObtainAuthToken):
    """POST username and password; answers the user's API token. Throttled per client address."""

    throttle_classes = [ScopedRateThrottle]
    throttle_scope = "login"


class RevokeToken(APIView):
    """POST to delete the token used (or the user's token); scripts holding it stop working at once."""

    permission_classes = [IsAuthenticated]

    def post(self, request):
        Token.objects.filter(user=request.user).delete()
        return Response(status=status.HTTP_204_NO_CONTENT)
