"""Ampline: electrical-calculation service."""

__version__ = "0.1.0"
API_VERSION = "1.0.0"
