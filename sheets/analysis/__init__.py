"""Stage 2, analyse: equilibrium matrix, determinacy, forces, checks, envelopes."""

from sheets.analysis.analyse import Analysis, analyse

__all__ = ["Analysis", "analyse"]
