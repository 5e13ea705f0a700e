"""Spread over tolerance, temperature and supply: the varying quantities, worst case, Monte Carlo
and the combined analysis.
"""

__all__: list[str] = []
