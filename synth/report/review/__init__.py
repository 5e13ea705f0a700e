"""The design-review page: one self-contained HTML document (see :func:`review_html`)."""

from __future__ import annotations

__all__ = ["ReviewFigure", "ReviewedDesign", "review_figures", "review_html"]

from synth.report.review.figures import ReviewFigure, review_figures
from synth.report.review.page import ReviewedDesign, review_html
