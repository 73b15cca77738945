"""Stage 6, assemble: the calculation sheet set as one PDF (reportlab).

A sheet set is a list of sections, each a small function that returns
reportlab flowables given what the earlier stages produced (the analysis, the
member checks, the figures). A section whose stage does not exist yet, or has
nothing to show, returns nothing; nothing is faked.

Modules:
    templates   sheet templates (TOML data in templates/): page, title block,
                section order, caution text
    fonts       the embedded TrueType fonts (DejaVu Sans, shipped with matplotlib)
    vector      matplotlib figures replayed as vector paths on the PDF canvas
    document    page layout: title block and footer on every page, contents,
                bookmarks, "sheet n of N"
    tables      number formatting and table flowables
    sections    the sections, in the order a reviewer reads them
    figures     the figures a sheet set shows, from whichever render stages exist
    assemble    everything above into PDF bytes
"""
