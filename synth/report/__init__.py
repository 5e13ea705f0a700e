"""Rendering results as text, JSON, CSV and plots (no computation here).
"""

__all__: list[str] = []
