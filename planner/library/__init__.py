"""Libraries of targets, windows and probes (package data, validated on load)."""
