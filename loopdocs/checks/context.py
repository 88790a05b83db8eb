"""What the split, valve and loop-load rules share: the project with its split groups,
the "could not verify" record, and the severity cap for findings that rest on a default.

A rule is a function ``rule(ctx) -> Iterable[Finding | Unverified]``. Where data a rule
needs is missing it yields an :class:`Unverified` instead of a finding; ``collect`` merges
them into ONE ``check.not-verified`` info per tag or group, listing everything that could
not be verified there (docs/design.md §2.3: a check never guesses silently).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Iterable, Iterator

from loopdocs.core.findings import Finding, Location, Severity
from loopdocs.core.formatting import fmt_pct
from loopdocs.model.groups import SplitElement, SplitGroup, groups_for
from loopdocs.model.records import Project

NOT_VERIFIED = "check.not-verified"


@dataclass(frozen=True)
class Unverified:
    """Something a rule could not verify for ``subject`` (a tag, or a group's controller)."""

    subject: str
    what: str
    loop: str | None
    tags: tuple[str, ...]
    location: Location | None


@dataclass(frozen=True)
class Context:
    """The project, its split groups, and two indexes built once for all rules."""

    project: Project
    groups: list[SplitGroup]
    pairs: list[tuple[SplitGroup, SplitElement]]
    """Every (group, element), groups in order, elements in CO order."""
    group_of: dict[str, SplitGroup]
    """Element tag -> its group."""

    @classmethod
    def of(cls, project: Project) -> "Context":
        groups = groups_for(project)
        pairs = [(group, element) for group in groups for element in group.elements]
        return cls(project, groups, pairs, {e.tag: g for g, e in pairs})

    def elements(self) -> list[tuple[SplitGroup, SplitElement]]:
        return self.pairs


Rule = Callable[[Context], Iterable["Finding | Unverified"]]


def defaults_used(element: SplitElement, keys: Iterable[str]) -> list[str]:
    """The sentences of the defaults among ``keys`` that ``element`` rests on."""
    return [element.assumptions[k] for k in keys if k in element.assumptions]


def capped(severity: Severity, message: str, defaults: list[str]) -> tuple[Severity, str]:
    """A finding resting on a default says so and is at most a warning (docs/design.md §3.4)."""
    if not defaults:
        return severity, message
    if severity is Severity.ERROR:
        severity = Severity.WARNING
    return severity, f"{message} (rests on defaults: {'; '.join(defaults)})"


def segment_text(element: SplitElement) -> str:
    """``'CO 52 to 100 %'``."""
    return f"CO {fmt_pct(element.co_start_pct)} to {fmt_pct(element.co_end_pct)} %"


def travel_text(element: SplitElement) -> str:
    """``'travel 0 to 100 %'``."""
    return f"travel {fmt_pct(element.travel_start_pct)} to {fmt_pct(element.travel_end_pct)} %"


def group_tags(group: SplitGroup) -> tuple[str, ...]:
    """The controller first, then the elements in CO order."""
    return (group.controller, *group.tags)


def collect(ctx: Context, rules: Iterable[Rule]) -> Iterator[Finding]:
    """Run ``rules``; pass findings on, merge ``Unverified`` into one info per subject."""
    pending: dict[str, list[Unverified]] = {}
    for rule in rules:
        for item in rule(ctx):
            if isinstance(item, Unverified):
                pending.setdefault(item.subject, []).append(item)
            else:
                yield item
    for subject, items in pending.items():
        tags: list[str] = []
        for item in items:
            tags += [t for t in item.tags if t not in tags]
        whats = list(dict.fromkeys(item.what for item in items))
        yield Finding(
            NOT_VERIFIED, Severity.INFO,
            f"{subject}: could not verify " + "; ".join(whats),
            loop=items[0].loop, tags=tuple(tags), location=items[0].location,
        )
