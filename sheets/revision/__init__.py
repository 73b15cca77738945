"""Revisions of a design: what changed between two of them."""
