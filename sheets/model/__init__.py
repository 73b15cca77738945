"""Stage 1, load: project files (TOML + CSV) into a frozen, validated Project."""

from sheets.model.loading import load_project
from sheets.model.project import Project

__all__ = ["load_project", "Project"]
