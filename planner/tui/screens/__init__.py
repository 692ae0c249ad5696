"""Screens of the terminal UI (one screen per module)."""
