"""Catalogues: the IEC 60063 series, the package table and house stock lists (data in
``catalogs/``).
"""

__all__: list[str] = []
