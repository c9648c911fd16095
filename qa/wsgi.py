"""WSGI entry point: ``gunicorn qa.wsgi``."""

import os

from django.core.wsgi import get_wsgi_application

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "qa.settings")
application = get_wsgi_application()
