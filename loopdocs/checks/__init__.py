"""Checks: pure functions from records to findings.

Each check module exposes ``checks(project) -> Iterable[Finding]``; ``run_checks`` runs
them all. Findings met while reading and converting the index come from
``loopdocs.model.build``.
"""

from __future__ import annotations

from typing import Callable, Iterable

from loopdocs.checks import consistency, flow, split, structural
from loopdocs.findings import Finding
from loopdocs.model.records import Project

CheckFunction = Callable[[Project], Iterable[Finding]]

ALL_CHECKS: tuple[CheckFunction, ...] = (structural.checks, consistency.checks, flow.checks, split.checks)


def run_checks(project: Project) -> list[Finding]:
    return [finding for check in ALL_CHECKS for finding in check(project)]
