"""Checks: pure functions from records to findings, and the registry that runs them all.

Every rule module is imported here and nowhere else runs them:

- ``structural``: ranges and loop ids of single rows;
- ``consistency``: contradictions between columns (sensor, signal, units, switch, element);
- ``flow``: differential-pressure flow transmitters and their square root;
- ``alarms``: alarm settings and switch set points and resets;
- ``installation``: power and air supplies, barriers in classified areas, screens;
- ``split_rules``, ``valve`` and ``loopload``: rules over the split groups of
  ``loopdocs.model.groups`` (one ``Context`` built once), what they could not verify merged
  into one ``check.not-verified`` per tag or group (``context.collect``).

Findings met while reading and converting the index come from ``loopdocs.model.from_rows``;
``check_project`` joins them, applies the accepted deviations of the project file and sorts.
Every rule is described in docs/design.md §5.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Iterable, Iterator

from loopdocs.checks import alarms, consistency, flow, installation, loopload, split_rules, structural, valve
from loopdocs.checks.context import Context, Rule, collect
from loopdocs.core.findings import Acceptance, Finding, Severity, sorted_findings
from loopdocs.model.groups import SplitGroup, groups_for
from loopdocs.model.loading import load_project
from loopdocs.model.records import Project
from loopdocs.read.background import PendingRead
from loopdocs.read.project_file import ProjectConfig

CheckFunction = Callable[[Project], Iterable[Finding]]

#: The rules over split groups (every final element is in one), in report order.
GROUP_RULES: tuple[Rule, ...] = (
    *split_rules.RULES,
    valve.air_fail, valve.signal_loss, valve.control_sense,
    loopload.loop_load, loopload.shared_channel,
)


def group_checks(project: Project) -> Iterator[Finding]:
    """Every split-range, valve and loop-load finding of the project."""
    yield from collect(Context.of(project), GROUP_RULES)


ALL_CHECKS: tuple[CheckFunction, ...] = (
    structural.checks, consistency.checks, flow.checks, alarms.checks, installation.checks, group_checks,
)


def run_checks(project: Project) -> list[Finding]:
    return [finding for check in ALL_CHECKS for finding in check(project)]


@dataclass(frozen=True)
class Checked:
    project: Project
    findings: list[Finding]
    splits: list["SplitGroup"] = field(default_factory=list)
    """Every split group (single valves included; ``SplitGroup.is_split`` tells a split),
    built once and shared with the checks (``loopdocs.model.groups``)."""


def apply_acceptances(findings: list[Finding], config: ProjectConfig) -> list[Finding]:
    """Mark findings that engineering review accepted (rule and tag match); report
    acceptances that match nothing, so stale ones do not linger."""
    used = [False] * len(config.accept)
    result: list[Finding] = []
    for finding in findings:
        for i, entry in enumerate(config.accept):
            if entry.rule == finding.rule and entry.tag.upper() in finding.tags:
                finding = finding.accept(Acceptance(reason=entry.reason, by=entry.by))
                used[i] = True
                break
        result.append(finding)
    for entry, was_used in zip(config.accept, used):
        if not was_used:
            result.append(Finding(
                "config.unused-acceptance", Severity.INFO,
                f"accepted finding {entry.rule} on {entry.tag} ({entry.by}) matches no finding; remove it from loopdocs.toml",
                tags=(entry.tag.upper(),),
            ))
    return result


def check_project(path: Path, pending: PendingRead | None = None) -> Checked:
    """Read, convert and check: every finding, sorted by loop and severity. ``pending``:
    the read of PATH already started on a second thread (``loopdocs.read.background``)."""
    project, findings = load_project(path, pending)
    splits = groups_for(project)
    findings = findings + run_checks(project)
    return Checked(project, sorted_findings(apply_acceptances(findings, project.config)), splits)
