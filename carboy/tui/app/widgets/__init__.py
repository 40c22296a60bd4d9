"""Reusable widgets of the carboy app (one module each)."""
