"""Widgets of the terminal UI (one widget per module)."""
