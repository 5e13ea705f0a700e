"""The electrical network of a design and its batched solves: loop currents (mesh), controlled
sources, nodal cross-check, and measuring targets and part stress.
"""

__all__: list[str] = []
