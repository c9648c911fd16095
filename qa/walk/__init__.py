"""The walk: the offline phone app's server side — the job bundle, the outbox sync, resumable photo
uploads, and their views and routes."""
