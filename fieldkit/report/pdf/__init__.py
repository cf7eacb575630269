"""The job card as a PDF (fpdf2). Importing this package imports the PDF library.

Inside, imports run one way: :mod:`.style` (colours, fonts, sizes; a leaf) ← :mod:`.text` (line
breaking) ← :mod:`.layout` (page geometry, headings, blocks) ← :mod:`.tables`, :mod:`.draw`,
:mod:`.boxes` ← :mod:`.card` (the whole card). The import contracts in ``pyproject.toml`` hold it.
"""

from fieldkit.report.pdf.card import render_pdf

__all__ = ["render_pdf"]
