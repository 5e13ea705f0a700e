"""Design files: the records of a design, reading and validating TOML, boards of several designs.
"""

__all__: list[str] = []
