"""Which states each design check takes, from the combinations' ``purpose`` tags.

A combination is tagged ``purpose = "strength"`` or ``"serviceability"`` in the
project file. Member checks and sizing take the strength combinations; where
no combination is tagged for strength they take every state except the
serviceability combinations, and ``note`` says so for the sheets. The
serviceability combinations get the displacement checks
(sheets.analysis.serviceability). The design outcome (sheets.analysis.outcome)
looks at the states either kind of check takes.
"""

from __future__ import annotations

from dataclasses import dataclass

from sheets.analysis.states import State


@dataclass(frozen=True)
class DesignStates:
    strength: tuple[State, ...]  # the states member checks and sizing take
    serviceability: tuple[State, ...]  # the combinations tagged "serviceability"
    tagged: bool  # some combination is tagged "strength"
    note: str  # what the strength states are, in words for the sheets

    @property
    def checked(self) -> tuple[State, ...]:
        """Every state a design check takes (strength first), each once."""
        ids = {s.id for s in self.strength}
        return self.strength + tuple(s for s in self.serviceability if s.id not in ids)


def design_states(analysis) -> DesignStates:
    purposes = {c.id: c.purpose for c in analysis.project.combinations}
    strength = tuple(s for s in analysis.combinations if purposes.get(s.id) == "strength")
    service = tuple(s for s in analysis.combinations if purposes.get(s.id) == "serviceability")
    if strength:
        ids = ", ".join(s.id for s in strength)
        return DesignStates(strength, service, True, f"the combinations tagged purpose = \"strength\" ({ids})")
    rest = tuple(s for s in analysis.states if purposes.get(s.id) != "serviceability") or analysis.states
    ids = ", ".join(s.id for s in rest)
    return DesignStates(rest, service, False,
                        f"every load case and combination ({ids}): no combination is tagged purpose = \"strength\"")
