"""The review page's style sheet: plain on screen, and made for paper.

Printing: the page size is left to the printer's paper (A4 or letter) with 15 mm
margins, so the text block is at most 186 mm wide on either; nothing has a fixed
width over 170 mm (figures and tables shrink to the text block), table headers
repeat on every page, rows and figures are never split, and a heading stays with
what follows it.  Nothing needs colour: a status is a word, and a failing row is
also marked by a thick dashed rule and bold text; the fonts are the reader's own
(no font is fetched).
"""

from __future__ import annotations

__all__ = ["STYLE"]

STYLE = """
:root { color: #000; background: #fff; }
body { font-family: "DejaVu Sans", "Liberation Sans", Arial, Helvetica, sans-serif;
       font-size: 10pt; line-height: 1.35; margin: 1.5rem auto; max-width: 60rem;
       padding: 0 1rem; }
h1 { font-size: 16pt; margin: 0 0 0.4em; }
h2 { font-size: 13pt; margin: 1.6em 0 0.4em; border-bottom: 1.5pt solid #000; }
h3 { font-size: 11pt; margin: 1.2em 0 0.3em; }
h2, h3, caption { break-after: avoid; page-break-after: avoid; }
table { border-collapse: collapse; width: 100%; margin: 0.3em 0 0.8em; font-size: 8.5pt; }
caption { caption-side: top; text-align: left; font-weight: bold; padding: 0.2em 0; }
th, td { border: 0.5pt solid #555; padding: 0.15em 0.35em; text-align: left;
         vertical-align: top; overflow-wrap: break-word; }
th { background: #eee; font-weight: bold; }
thead { display: table-header-group; }
tr, figure, .verdict, dl.facts { break-inside: avoid; page-break-inside: avoid; }
span.n { white-space: nowrap; font-variant-numeric: tabular-nums; }
tr.fail td { font-weight: bold; border-top: 2pt dashed #000; border-bottom: 2pt dashed #000; }
tr.fail td:first-child::before { content: "\\2717\\00a0"; }
.verdict { border: 1.5pt solid #000; padding: 0.4em 0.6em; margin: 0.5em 0 0.8em; }
.verdict.fail { border: 3pt double #000; }
.verdict p { margin: 0.15em 0; }
.word { font-weight: bold; text-transform: uppercase; letter-spacing: 0.05em; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 0.1em 1em;
           margin: 0.3em 0 0.8em; }
dl.facts dt { font-weight: bold; }
dl.facts dd { margin: 0; overflow-wrap: break-word; min-width: 0; }
code, .hash { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace;
              font-size: 8.5pt; overflow-wrap: anywhere; word-break: break-all; }
figure { margin: 0.6em 0 1em; max-width: 100%; }
figure svg { display: block; max-width: 100%; width: 130mm; height: auto; }
figcaption { font-size: 9pt; font-style: italic; margin-top: 0.2em; }
ul.cautions li { margin: 0.15em 0; }
footer { margin-top: 2em; border-top: 0.5pt solid #000; font-size: 8.5pt; }
@page { margin: 15mm; }
@media print {
  body { margin: 0; max-width: none; padding: 0; font-size: 9.5pt; }
  section.design + section.design { break-before: page; page-break-before: always; }
  a { color: #000; text-decoration: none; }
}
"""
