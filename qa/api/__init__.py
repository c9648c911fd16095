"""REST API: every object is reached through the job it belongs to."""
