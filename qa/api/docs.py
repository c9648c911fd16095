"""The OpenAPI schema and a server-rendered docs page (no external viewer, nothing from the network)."""

from __future__ import annotations

from django.contrib.auth.decorators import login_required
from django.shortcuts import render
from drf_spectacular.generators import SchemaGenerator
from drf_spectacular.views import SpectacularAPIView

schema_view = SpectacularAPIView.as_view()


@login_required
def docs_page(request):
    schema = SchemaGenerator().get_schema(request=None, public=True)
    operations = []
    for route, methods in schema.get("paths", {}).items():
        for method, op in methods.items():
            if method.startswith("x-") or method == "parameters":
                continue
            operations.append(
                {
                    "method": method.upper(),
                    "path": route,
                    "summary": op.get("summary") or (op.get("description") or "").split("\n")[0],
                    "params": [p["name"] for p in op.get("parameters", []) if p.get("in") == "query"],
                    "tag": (op.get("tags") or ["api"])[0],
                }
            )
    return render(request, "qa/api_docs.html", {"operations": operations, "info": schema.get("info", {})})
