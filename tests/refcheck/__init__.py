"""Independent reference checker for rnsynth's tests.

Written apart from rnsynth's own code (nothing under ``synth/`` is imported or read): its
E-series tables are typed in from ``/work/shared/FACTS.md``, its DC solver is a plain
modified nodal analysis (numpy float64, plus exact rational paths with ``fractions`` and
SymPy), and its searches are written out exhaustively, so that rnsynth's answers can be
compared with figures obtained by a different route.

Modules:

- :mod:`.eseries`: IEC 60063 tables and decade-scaled values.
- :mod:`.network`: the DC solver (batched float and exact), seen resistance.
- :mod:`.ratings`: package ratings from ``catalogs/packages.csv`` and allowances.
- :mod:`.targets`: target definitions, windows and the objective.
- :mod:`.search`: exhaustive search over positions (single, series or parallel parts).
- :mod:`.spread`: worst case over the tolerance box, interior power peaks, Monte Carlo.
- :mod:`.scenarios`: reference figures for everyday design cases.
"""
