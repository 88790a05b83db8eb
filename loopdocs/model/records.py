"""Validated records: a tag (one index row), a loop (the tags that share a loop id) and
the project (all loops, with where each value came from).

Records hold clean values only: enumerations are ``Vocab`` members, numbers are floats,
blanks are ``None``. Converting a row into a record and reporting what could not be
converted is ``loopdocs.model.from_rows``; checks read records, never the spreadsheet.
"""

from __future__ import annotations

from typing import Any

from pydantic import BaseModel, ConfigDict, Field

from loopdocs.core.findings import Location
from loopdocs.model.tagname import TagKind, TagParts
from loopdocs.model.vocab import (
    Accessory,
    Actuator,
    AirAction,
    Characteristic,
    ControlAction,
    DeviceType,
    Effect,
    FailPosition,
    Location as MountLocation,
    Platform,
    PositionerAction,
    Sensor,
    Shield,
    Signal,
    SplitMethod,
    Transfer,
    ValveBody,
    Wires,
)
from loopdocs.read.project_file import ProjectConfig


class Tag(BaseModel):
    """One instrument, valve or function: one row of the index."""

    model_config = ConfigDict(frozen=True, arbitrary_types_allowed=True)

    tag: str
    parts: TagParts
    kind: TagKind
    loop: str
    loop_given: str | None = None
    """The Loop cell as written (``None`` when blank and derived from the tag)."""
    row: int
    """Spreadsheet row the tag was read from (1-based)."""

    service: str | None = None
    pid: str | None = None
    location: MountLocation | None = None
    platform: Platform | None = None
    signal: Signal | None = None
    range_low: float | None = None
    range_high: float | None = None
    units: str | None = None
    transfer: Transfer | None = None
    dp_low: float | None = None
    dp_high: float | None = None
    dp_units: str | None = None
    flow_cutoff_pct: float | None = None
    sensor: Sensor | None = None
    accuracy_pct: float | None = None
    control_action: ControlAction | None = None
    air_action: AirAction | None = None
    fail_position: FailPosition | None = None
    positioner_action: PositionerAction | None = None
    driven_by: str | None = None
    split_method: SplitMethod | None = None
    co_start_pct: float | None = None
    co_end_pct: float | None = None
    travel_start_pct: float | None = None
    travel_end_pct: float | None = None
    input_low: float | None = None
    input_high: float | None = None
    input_units: str | None = None
    effect: Effect | None = None
    cv: float | None = None
    characteristic: Characteristic | None = None
    rangeability: float | None = None
    device_volts: float | None = None
    loop_volts: float | None = None
    load_ohm: float | None = None
    io_address: str | None = None
    jb: str | None = None
    jb_terminals: str | None = None
    cable: str | None = None
    cabinet: str | None = None
    cabinet_terminals: str | None = None
    device_type: DeviceType | None = None
    valve_body: ValveBody | None = None
    actuator: Actuator | None = None
    valve_size: str | None = None
    accessories: tuple[Accessory, ...] = ()
    wires: Wires | None = None
    power_source: str | None = None
    air_supply: str | None = None
    barrier: str | None = None
    area_class: str | None = None
    cores: str | None = None
    shield: Shield | None = None
    set_point: float | None = None
    reset: float | None = None
    alarm_ll: float | None = None
    alarm_l: float | None = None
    alarm_h: float | None = None
    alarm_hh: float | None = None
    interlock: str | None = None
    data_sheet: str | None = None
    hookup: str | None = None
    notes: str | None = None
    extra: dict[str, Any] = Field(default_factory=dict)
    """Columns the template does not know, kept as read (header -> value)."""

    @property
    def is_final_element(self) -> bool:
        return self.kind is TagKind.FINAL_ELEMENT

    @property
    def is_controller(self) -> bool:
        return self.kind is TagKind.CONTROLLER

    @property
    def has_range(self) -> bool:
        return self.range_low is not None and self.range_high is not None

    @property
    def has_dp_range(self) -> bool:
        """Any of DP Low, DP High, DP Units given (``checks.flow`` reports an incomplete one)."""
        return self.dp_low is not None or self.dp_high is not None or bool(self.dp_units)


#: Every field of a ``Tag`` at its default (``None``; no accessories), in declaration order.
_TAG_BLANK: dict[str, Any] = {name: (() if name == "accessories" else None) for name in Tag.model_fields}
TAG_FIELDS = frozenset(_TAG_BLANK)


def tag_from_converted(values: dict[str, Any], given: set[str]) -> Tag:
    """The ``Tag`` that ``Tag(**values)`` validates, made without validating again: for
    values that already have the types the record holds (vocabulary members, floats,
    stripped text, tuples, a fresh ``extra`` dict), as ``model.from_rows`` converts them.
    Same fields in the same order, same set of given names (``given``, the keys of
    ``values``: records of one shape may share it, they are frozen), about a third of the
    time of validation. Every key must be a field (``TAG_FIELDS``) and tag, parts, kind,
    loop and row must be given."""
    data = _TAG_BLANK.copy()
    data.update(values)
    record = Tag.__new__(Tag)
    _set_attribute(record, "__dict__", data)
    _set_attribute(record, "__pydantic_fields_set__", given)
    _set_attribute(record, "__pydantic_extra__", None)
    _set_attribute(record, "__pydantic_private__", None)
    return record


_set_attribute = object.__setattr__


class Loop(BaseModel):
    """The tags that share one loop id, in index order."""

    model_config = ConfigDict(frozen=True)

    id: str
    tags: tuple[str, ...]
    service: str | None = None
    """The controller's service if there is one, else the first tag's that has one."""


def loop_from_converted(loop_id: str, tags: tuple[str, ...], service: str | None) -> Loop:
    """``Loop(id=loop_id, tags=tags, service=service)`` made without validating again
    (the id and service are texts and ``tags`` a tuple of texts, as ``model.from_rows``
    gives them); the same record, as :func:`tag_from_converted` does for a tag."""
    record = Loop.__new__(Loop)
    _set_attribute(record, "__dict__", {"id": loop_id, "tags": tags, "service": service})
    _set_attribute(record, "__pydantic_fields_set__", {"id", "tags", "service"})
    _set_attribute(record, "__pydantic_extra__", None)
    _set_attribute(record, "__pydantic_private__", None)
    return record


class Project(BaseModel):
    """Everything read from one index: tags by name, loops by id, and cell origins."""

    model_config = ConfigDict(frozen=True, arbitrary_types_allowed=True)

    index_path: str
    sheet: str
    columns: dict[str, str]
    """Column key -> column letter in the index (for locating findings)."""
    extra_columns: dict[str, str] = Field(default_factory=dict)
    tags: dict[str, Tag]
    loops: dict[str, Loop]
    config: ProjectConfig = Field(default_factory=ProjectConfig)

    def cell(self, tag: Tag | None, key: str) -> Location | None:
        """The index cell that holds ``key`` for ``tag`` (``None`` if the column is absent).

        When the column is absent the Tag cell of the row is returned instead, so a
        finding still points at the right row.
        """
        if tag is None:
            return None
        column = self.columns.get(key) or self.columns.get("tag")
        return Location(self.sheet, tag.row, column) if column else None

    def tags_of(self, loop_id: str) -> list[Tag]:
        return [self.tags[name] for name in self.loops[loop_id].tags]
