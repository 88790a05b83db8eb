"""The forward pipeline as one call per stage, shared by every command:
read -> model -> checks (DESIGN §7)."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from loopdocs.config import load_config, locate
from loopdocs.errors import InputError
from loopdocs.findings import Acceptance, Finding, Severity, sorted_findings
from loopdocs.model.records import Project, ProjectConfig
from loopdocs.model.tagname import TagPatternError

if TYPE_CHECKING:
    from loopdocs.model.groups import SplitGroup


@dataclass(frozen=True)
class Checked:
    project: Project
    findings: list[Finding]
    splits: list["SplitGroup"] = field(default_factory=list)
    """Every split group (single valves included; ``SplitGroup.is_split`` tells a split),
    built once and shared with the checks (``loopdocs.model.groups``)."""


def load_project(path: Path) -> tuple[Project, list[Finding]]:
    """Read the index at PATH (file or project folder) into records.

    Returns the project and the findings met while reading and converting it.
    Raises ``InputError`` when the input cannot be read at all.
    """
    from loopdocs.model.build import build_project
    from loopdocs.read import read_index

    paths = locate(Path(path))
    config = load_config(paths.config_file) if paths.config_file else ProjectConfig()
    try:
        table = read_index(paths.index, sheet=config.index.sheet, column_map=config.columns)
    except InputError:
        raise
    except Exception as exc:  # last line of defence: one line, never a traceback
        raise InputError(f"{paths.index}: could not be read ({type(exc).__name__}: {exc})") from None
    try:
        return build_project(table, config)
    except TagPatternError as exc:
        raise InputError(f"{paths.config_file}: [index] {exc}") from None


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


def check_project(path: Path) -> Checked:
    """Read, convert and check: every finding, sorted by loop and severity."""
    from loopdocs.checks import run_checks
    from loopdocs.model.groups import groups_for

    project, findings = load_project(path)
    splits = groups_for(project)
    findings = findings + run_checks(project)
    return Checked(project, sorted_findings(apply_acceptances(findings, project.config)), splits)
