"""Temperature sensors as resistances: platinum RTDs (IEC 60751) and NTC thermistors, their
inverse functions and tolerances.
"""

__all__: list[str] = []
