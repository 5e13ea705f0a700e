"""The bill of materials of a board: CP-SAT value consolidation and BOM lines.
"""

__all__: list[str] = []
