"""Errors a user can cause, and the exit codes the command line maps them to.

A ``ProjectError`` carries every problem found in one pass, each saying where
(file, table/key, line) and what to do, so a user fixes a file in one go.
"""

from __future__ import annotations

from dataclasses import dataclass

EXIT_OK = 0
EXIT_BAD_INPUT = 2
EXIT_MECHANISM = 3
EXIT_CHECK_FAILED = 4
# the results are written; the design outcome has flags (members over utilisation 1, cables in
# compression, struts in tension, uplift at supports, deflection over the limit). 4 wins over 5.
EXIT_DESIGN_FLAGS = 5
EXIT_BATCH_FAILURES = 6  # sheets batch: one or more projects could not be built (each is reported)


@dataclass(frozen=True)
class Problem:
    """One thing wrong with the input."""

    file: str
    where: str  # dotted key path, e.g. "members.B7.ends"
    message: str
    hint: str = ""
    line: int | None = None

    def __str__(self) -> str:
        place = self.file
        if self.line is not None:
            place += f":{self.line}"
        text = f"{place}: [{self.where}] {self.message}" if self.where else f"{place}: {self.message}"
        if self.hint:
            text += f" -> {self.hint}"
        return text


class ProjectError(Exception):
    """The project cannot be read as given; ``problems`` lists every reason."""

    exit_code = EXIT_BAD_INPUT

    def __init__(self, problems: list[Problem] | tuple[Problem, ...]):
        self.problems = tuple(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


class MechanismError(Exception):
    """A load has a component along a mechanism of the frame: it cannot be carried."""

    exit_code = EXIT_MECHANISM

    def __init__(self, state_id: str, message: str, motions: tuple[tuple[str, str, float], ...]):
        self.state_id = state_id
        self.motions = motions  # (node id, axis, relative motion) largest first
        super().__init__(message)


class CheckFailedError(Exception):
    """A verification check on a computed result failed its tolerance."""

    exit_code = EXIT_CHECK_FAILED


class OutputError(Exception):
    """The output location cannot take the files (a file where a folder should be, no permission,
    a full disk, a folder sheets did not make, another build writing there): exit code 2."""

    exit_code = EXIT_BAD_INPUT

    def __init__(self, path, message: str, hint: str = ""):
        self.path = str(path)
        self.message = message
        self.hint = hint
        super().__init__(f"{self.path}: {message}" + (f" -> {hint}" if hint else ""))
