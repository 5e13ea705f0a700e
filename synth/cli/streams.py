"""Where the command line reads and writes: files, or the standard streams for ``-``.

A design-file argument of ``-`` reads the design from standard input (named ``<stdin>``
in messages); an output option of ``-`` (``bom --output -``, ``--save -``) writes that
output to standard output, and whatever the command would print there goes to stderr.
Every other output is a file written by :func:`synth.files.write_atomic`: created with
the user's umask, exclusively unless ``--force``, never over a device.  Plots are drawn
by the library as figures and only written here, all of a run's plots as one output.
"""

from __future__ import annotations

__all__ = [
    "STREAM", "check_output", "check_plot_folder", "plot_files", "plots_left_out", "read_design",
    "write_files", "write_output",
]

from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

import click

from synth.errors import DesignError

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from synth.deadline import Deadline
    from synth.design.model import Design

STREAM = "-"
"""The name of standard input (for a design file) or standard output (for an output)."""



def read_design(path: str) -> Design:
    """The design in the file ``path``, or on standard input for ``-``."""
    from synth.design.load import load_design, load_design_stream

    if path == STREAM:
        return load_design_stream(click.get_binary_stream("stdin"))
    return load_design(path)


def check_output(path: str | None, *, force: bool) -> None:
    """Refuse an output file that would be refused at the end, before any work is done."""
    if path is None or path == STREAM:
        return
    from synth.files import check_destination

    check_destination(path, force=force)


def write_output(path: str, data: str | bytes, *, force: bool) -> bool:
    """Write ``data`` (text as UTF-8) to the file ``path``, or to standard output for ``-``.

    Returns
    -------
    bool
        True when a file was written, False for standard output.

    Raises
    ------
    DesignError
        As :func:`synth.files.write_atomic`.
    """
    payload = data.encode("utf-8") if isinstance(data, str) else data
    if path == STREAM:
        stream = click.get_binary_stream("stdout")
        stream.write(payload)
        stream.flush()
        return False
    from synth.files import write_atomic

    write_atomic(path, payload, force=force)
    return True


def check_plot_folder(folder: str | None) -> None:
    """Refuse a plot folder that cannot be one, before any work: ``-``, or a file's name."""
    if folder is None:
        return
    if folder == STREAM:
        raise DesignError("--plots -: plots are PNG and SVG files, not a stream; name a "
                          "folder for them")
    for place in (Path(folder), *Path(folder).parents):
        if place.exists():
            if not place.is_dir():
                raise DesignError(f"{folder}: cannot create the plot folder ({place} is not a "
                                  "folder); name a folder for the plots")
            return


def _make_folder(folder: Path) -> list[Path]:
    """Create ``folder`` and its missing parents; return those created, outermost first."""
    missing = [p for p in (folder, *folder.parents) if not p.exists()]
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise DesignError(f"{folder}: cannot create the plot folder ({exc.strerror})") from None
    return missing[::-1]


def plot_files(figures: Sequence[tuple[str, Figure]], folder: str,
               deadline: Deadline | None = None) -> list[tuple[Path, bytes]]:
    """Each ``(stem, figure)`` rendered as ``folder/stem.png`` and ``folder/stem.svg``.

    With a limited ``deadline`` the figures are drawn in order while it lasts, the first
    one always; the note of :func:`plots_left_out` names the rest.
    """
    from synth.report.pictures.axes import FORMATS, figure_bytes

    check_plot_folder(folder)
    out = Path(folder)
    files: list[tuple[Path, bytes]] = []
    for k, (stem, figure) in enumerate(figures):
        if k and deadline is not None and deadline.expired():
            break
        files.extend((out / f"{stem}.{form}", figure_bytes(figure, form)) for form in FORMATS)
    return files


def plots_left_out(figures: Sequence[tuple[str, Figure]],
                   files: Sequence[tuple[Path, bytes]]) -> str | None:
    """A one-line note naming the figures :func:`plot_files` left out (None: none)."""
    drawn = {path.stem for path, _ in files}
    left = [stem for stem, _ in figures if stem not in drawn]
    if not left:
        return None
    from synth.errors import name_list

    return (f"the time limit left {len(left)} of {len(figures)} plots undrawn "
            f"({name_list(left)}); a longer --time-limit draws them")


def write_files(outputs: Sequence[tuple[str | Path, str | bytes]], *, force: bool,
                folder: str | None = None) -> list[Path]:
    """Write a run's output files as one: all of them, or none that the run created.

    Each name is checked before the first is written, an existing file is kept unless
    ``force``, and when one write fails the files created, and the ``folder`` (the plot
    folder) with its parents when this call created them, are removed again.

    Returns
    -------
    list of Path
        The files written.

    Raises
    ------
    DesignError
        As :func:`synth.files.write_all`, or when ``folder`` cannot be created.
    """
    from synth.files import write_all

    if not outputs:
        return []
    created = _make_folder(Path(folder)) if folder is not None else []
    try:
        return write_all(outputs, force=force)
    except BaseException:
        for made in reversed(created):
            try:
                made.rmdir()
            except OSError:
                pass  # something else is in it now: keep it
        raise
