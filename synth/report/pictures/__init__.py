"""Pictures of a design and its results, one module per kind (matplotlib, object API).

Every function returns a :class:`matplotlib.figure.Figure`, or draws on the
``ax`` it is given and returns that axes' figure; none writes a file (the
command line does, through :func:`synth.report.pictures.axes.figure_bytes`).
"""

__all__: list[str] = []
