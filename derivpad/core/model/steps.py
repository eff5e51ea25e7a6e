"""Step and Rule value objects: what one stage of a derivation did, and by which rule.

A Step holds structured mathematics (``lines``: SymPy relations), never pre-made LaTeX; its
``latex`` property hands it to ``derivpad.render`` lazily, so the core never loads printing.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import sympy as sp

__all__ = ["Rule", "Line", "Step"]


@dataclass(frozen=True, slots=True)
class Rule:
    """One transform pair or theorem: id, name, LaTeX statement, conditions, published source."""

    id: str
    name: str
    statement: str
    conditions: str
    source: str

    def to_dict(self) -> dict:
        return {"id": self.id, "name": self.name, "statement": self.statement,
                "conditions": self.conditions, "source": self.source}


@dataclass(frozen=True, slots=True)
class Line:
    """One displayed relation ``lhs rel rhs`` (rel is "=", "\\to" for 'maps to', or ":")."""

    lhs: sp.Basic
    rhs: sp.Basic
    relation: str = "="
    label: str = ""


@dataclass(frozen=True, slots=True)
class Step:
    """One stage of the derivation: title, the rule it applies, the math shown, one sentence."""

    title: str
    rule: Rule | None
    lines: tuple[Line, ...] = ()
    note: str = ""
    substeps: tuple["Step", ...] = ()
    rules_used: tuple[Rule, ...] = field(default=())

    @property
    def latex(self) -> str:
        """The step's display math (LaTeX); rendered on demand by ``derivpad.render``."""
        from .display_hook import step_latex
        return step_latex(self)

    @property
    def rules_shown(self) -> tuple[Rule, ...]:
        """The rules a reader is shown beside the step: its own rule, or, for a step that
        only gathers sub-steps, exactly the rules they used."""
        return (self.rule,) if self.rule is not None else self.all_rules

    @property
    def all_rules(self) -> tuple[Rule, ...]:
        """Every rule this step and its sub-steps use, each once, in order of use."""
        seen: dict[str, Rule] = {}
        for rule in ((self.rule,) if self.rule else ()) + self.rules_used:
            seen.setdefault(rule.id, rule)
        for sub in self.substeps:
            for rule in sub.all_rules:
                seen.setdefault(rule.id, rule)
        return tuple(seen.values())
