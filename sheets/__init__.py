"""sheets: calculation sheets for pin-jointed frames, drawn with graphic statics.

The package is a chain of pure stages over frozen values::

    load (sheets.model) -> analyse (sheets.analysis) -> export (sheets.export)

and a thin command line (sheets.cli) around them.
"""

__version__ = "0.1.0"
