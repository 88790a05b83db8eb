"""Writing index workbooks: the starter project of ``loopdocs init`` and any index whose
rows are given (the example project's generator uses the same writer).

The workbook has the default headers of ``loopdocs.read.columns``, a note on each header
cell (meaning and accepted values), a drop-down list on every vocabulary column, a frozen
header row and column widths that fit the headers.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any, Iterable, Mapping

from loopdocs.core.errors import InputError
from loopdocs.core.files import atomic_write
from loopdocs.read.columns import COLUMNS

INDEX_SHEET = "Index"

STARTER_CONFIG = """\
# loopdocs project configuration. Every table is optional.

[index]
# file = "index.xlsx"        # default: the only .xlsx/.xlsm/.csv in this folder
# sheet = "Index"            # default: the first sheet with a Tag header in its first 20 rows
# tag_pattern = '(?:(?P<area>[0-9A-Z]*[0-9][0-9A-Z]*)[-_ ])?(?P<letters>[A-Z]{1,6})[-_ ]?(?P<number>[0-9]{1,6})(?:[-_]?(?P<suffix>[A-Z]{1,3}))?'

[columns]
# Headers of your own, mapped to loopdocs columns (see docs/index-format.md):
# "Ctrl Output From %" = "CO Start %"

[title_block]
project = "New project"
client = ""
unit = ""
drawing_number = "LS-{loop}"   # {loop} is replaced by the loop id
revision = "A"

[sheet]
size = "A3"                    # paper, landscape: "A3" (default), "A4" or "11x17"
# author = "A. Engineer"       # PDF author; default: drawn above
# notes = ["All cable numbers to the cable schedule."]   # printed on every loop sheet
#
# Revision table of every sheet, oldest first (default: one row from [title_block]); once
# the package is issued with `loopdocs build --issue`, each sheet shows its own loop's
# revisions from loopdocs-revisions.toml instead:
# [[sheet.revisions]]
# rev = "A"
# date = "2026-12-01"
# description = "Issued for review"
# by = "AE"
# checked = "BC"
# approved = "CD"
#
# A sheet with an unaccepted error finding is marked NOT FOR CONSTRUCTION. To issue it
# anyway, name the loop and give the reason; the reason is printed on the sheet:
# [sheet.release_with_errors]
# "T-101" = "gap is the intended dead band, see memo M-12"

# Revision sequence of `loopdocs build --issue` (these are the defaults): letters until the
# first issue whose purpose names construction, then numbers.
# [revisions]
# before_construction = "A"        # first revision before construction: A, B, C...
# for_construction = "0"           # first revision issued for construction: 0, 1, 2...
# construction_words = ["construction"]
# changes_listed = 3               # change lines per revision entry, then "and N more"

# Findings accepted on purpose by engineering review stay on the sheet as accepted
# deviations but do not fail the check:
# [[accept]]
# rule = "split.capacity"
# tag = "LV-101B"
# reason = "small valve given half the range for fine control"
# by = "A. Engineer"
"""


def _vocabularies() -> dict[str, list[str]]:
    from loopdocs.model.vocab import VOCAB_COLUMNS

    return {key: [member.value for member in vocab] for key, vocab in VOCAB_COLUMNS.items()}


def _header_note(key: str, meaning: str, accepted: list[str] | None) -> str:
    text = meaning
    if accepted:
        text += "\nAccepted: " + ", ".join(accepted)
    return text


def write_index_workbook(path: Path, rows: Iterable[Mapping[str, Any]] = (), spare_rows: int = 200) -> None:
    """Write an index workbook with the default headers and ``rows`` (dicts by column key).

    Drop-downs cover the written rows plus ``spare_rows`` more.
    """
    from openpyxl import Workbook
    from openpyxl.comments import Comment
    from openpyxl.styles import Alignment, Font, PatternFill
    from openpyxl.utils import get_column_letter
    from openpyxl.worksheet.datavalidation import DataValidation

    vocabularies = _vocabularies()
    workbook = Workbook()
    sheet = workbook.active
    sheet.title = INDEX_SHEET
    header_font = Font(bold=True)
    header_fill = PatternFill("solid", fgColor="DDDDDD")
    for col, column in enumerate(COLUMNS, start=1):
        cell = sheet.cell(row=1, column=col, value=column.header)
        cell.font = header_font
        cell.fill = header_fill
        cell.alignment = Alignment(wrap_text=True, vertical="top")
        note = Comment(_header_note(column.key, column.meaning, vocabularies.get(column.key)), "loopdocs")
        note.width, note.height = 300, 120
        cell.comment = note
        sheet.column_dimensions[get_column_letter(col)].width = max(10, min(28, len(column.header) + 4))
    count = 0
    for count, row in enumerate(rows, start=1):
        for col, column in enumerate(COLUMNS, start=1):
            value = row.get(column.key)
            if value is not None and value != "":
                sheet.cell(row=count + 1, column=col, value=value)
    last_row = count + 1 + spare_rows
    for col, column in enumerate(COLUMNS, start=1):
        letter = get_column_letter(col)
        if column.key in vocabularies:
            validation = DataValidation(
                type="list", formula1='"' + ",".join(vocabularies[column.key]) + '"',
                allow_blank=True, showErrorMessage=True,
                errorTitle=column.header, error="Pick a value from the list (see the header note).",
            )
            validation.add(f"{letter}2:{letter}{last_row}")
            sheet.add_data_validation(validation)
        elif column.numeric:
            validation = DataValidation(
                type="decimal", operator="between", formula1="-1E+12", formula2="1E+12",
                allow_blank=True, showErrorMessage=True, errorTitle=column.header, error="A number is expected.",
            )
            validation.add(f"{letter}2:{letter}{last_row}")
            sheet.add_data_validation(validation)
    sheet.freeze_panes = "B2"
    sheet.auto_filter.ref = f"A1:{get_column_letter(len(COLUMNS))}{max(2, count + 1)}"
    atomic_write(path, lambda tmp: workbook.save(tmp))


def write_starter(directory: Path) -> list[Path]:
    """Create ``directory`` with ``index.xlsx`` and ``loopdocs.toml``; refuse to overwrite."""
    directory = Path(directory)
    index = directory / "index.xlsx"
    config = directory / "loopdocs.toml"
    existing = [p for p in (index, config) if p.exists()]
    if existing:
        raise InputError(f"{existing[0]} already exists; loopdocs init does not overwrite files")
    directory.mkdir(parents=True, exist_ok=True)
    write_index_workbook(index)
    atomic_write(config, lambda tmp: tmp.write_text(STARTER_CONFIG, encoding="utf-8"))
    return [index, config]
