"""Static files storage: hashed names, compressed copies, and hashed names inside ES module imports.

The walk's modules import each other (``import { db } from "./db.js"``). Without rewriting those
imports, a page would load hashed files that then fetch unhashed ones, which the service worker has
not precached, and the walk would break offline in production.
"""

from __future__ import annotations

from whitenoise.storage import CompressedManifestStaticFilesStorage


class StaticStorage(CompressedManifestStaticFilesStorage):
    support_js_module_import_aggregation = True
