"""The circuits behind the quick commands, built as design-file tables.
"""

__all__: list[str] = []
