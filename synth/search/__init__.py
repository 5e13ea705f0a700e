"""The exact search for standard values: each position's choices, ideal values, the problem's
bounds, ranking and branch and bound.
"""

__all__: list[str] = []
