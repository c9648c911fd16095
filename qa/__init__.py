"""Sealwalk's record: jobs, walls, seal points, findings, photos, events, and the web app."""
