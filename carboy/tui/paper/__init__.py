"""Paper: carboy's documents (``carboy.model.documents``) rendered to PDF.

Used by both front ends; it imports neither of them, nor textual.  Labels print at
70 × 37 mm (one to a page, or 24 to an A4 sheet); records and lists on A4 with the
date of printing and page numbers.
"""

from carboy.tui.paper.render import LABEL_SIZES, PaperError, render, write_pdf

__all__ = ["LABEL_SIZES", "PaperError", "render", "write_pdf"]
