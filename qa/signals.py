"""Signal hooks. Leak-audit cache invalidation lives with the adapter (qa/impact.py)."""
