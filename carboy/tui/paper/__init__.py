"""Paper: carboy's documents (``carboy.model.documents``) rendered to PDF.

Used by both front ends; it imports neither of them, nor textual.  Labels print at
70 × 37 mm (one to a page, or 24 to an A4 sheet); records and lists on A4 with the
date of printing and page numbers.

The entry points are in :mod:`carboy.tui.paper.render` (``render``, ``write_pdf``,
``PaperError``, ``LABEL_SIZES``); this package file imports nothing, so a submodule can be
loaded without pulling in the others.
"""
