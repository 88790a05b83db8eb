"""Write docs/index-format.md from the column table and the vocabularies, so the page
cannot drift from the code. Run from the repository root:
``python docs/make_index_format.py``; ``tests/test_docs.py`` checks it is current."""

from __future__ import annotations

import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from loopdocs.model.vocab import LIST_VOCAB_COLUMNS, VOCAB_COLUMNS  # noqa: E402
from loopdocs.read.columns import COLUMNS  # noqa: E402

WHEN_BLANK = {
    "tag": "The row is skipped with a warning (`index.no-tag`).",
    "loop": "Derived from the tag: area prefix, measured variable and number (`TV-3105A` -> `T-3105`).",
    "service": "Sheets show no service; the loop takes the controller's service.",
    "pid": "Not shown.",
    "location": "The diagram places the device by its kind (field for transmitters and valves).",
    "platform": "Controllers are drawn as control-system functions.",
    "signal": "Lines are drawn as electrical; calibration assumes 4-20 mA where a range is given.",
    "range_low": "No calibration table for the tag.",
    "range_high": "No calibration table for the tag.",
    "units": "A range without units is an error (`range.no-units`).",
    "transfer": "Linear (with DP Low/High given and a range in flow units: refused until Transfer says whether the transmitter extracts the root).",
    "dp_low": "With Transfer sqrt and a range in flow units, the table gives the % of DP span to apply instead of the DP.",
    "dp_high": "As DP Low.",
    "dp_units": "As DP Low; DP Low/High without DP Units is an error (`flow.dp-range`).",
    "flow_cutoff_pct": "No cut-off: every flow point expects the output linear in flow.",
    "sensor": "Temperature transmitters get a 4-20 mA table only (no ohm or mV to simulate).",
    "accuracy_pct": "No tolerance band is printed; the technician's sheet says so.",
    "control_action": "Control sense cannot be verified (one info finding).",
    "air_action": "Air and fail action cannot be cross-checked (one info finding).",
    "fail_position": "Fail position cannot be cross-checked (one info finding).",
    "positioner_action": "Direct.",
    "driven_by": "The element is not part of a split group.",
    "split_method": "pneumatic when the element or its I/P has a pneumatic signal; else the method the rest of the group states; else dcs when every element has its own IO Address, else positioner (the finding says which was assumed).",
    "co_start_pct": "0 %.",
    "co_end_pct": "100 %.",
    "travel_start_pct": "dcs splits and single valves: 0 %; positioner and pneumatic splits: taken from the settings (one info finding).",
    "travel_end_pct": "dcs splits and single valves: 100 %; positioner and pneumatic splits: taken from the settings (one info finding).",
    "input_low": "Positioner and pneumatic splits cannot be verified (one info finding); dcs splits assume the full signal span.",
    "input_high": "As Input Low.",
    "input_units": "The unit of the element's signal span: mA for positioner splits, the I/P's pneumatic unit (psig, kPa) for pneumatic splits.",
    "effect": "Control sense cannot be verified (one info finding).",
    "cv": "No capacity split or combined capacity curve.",
    "characteristic": "Linear for the capacity calculation (said in the finding).",
    "rangeability": "50 for equal-percentage trim (said in the finding).",
    "device_volts": "Loop load cannot be verified.",
    "loop_volts": "Loop load cannot be verified.",
    "load_ohm": "0 ohm in the transmitter loop-load check.",
    "io_address": "Not shown; no shared-channel check.",
    "jb": "The junction-box band is left out of the diagram.",
    "jb_terminals": "Not shown.",
    "cable": "Not shown.",
    "cabinet": "The cabinet band is left out of the diagram.",
    "cabinet_terminals": "Not shown.",
    "device_type": "The symbol follows the tag letters and Sensor (a DP element for flow, a thermowell for temperature).",
    "valve_body": "Drawn as a globe body.",
    "actuator": "Drawn as a spring-diaphragm actuator; a pneumatic actuator is assumed for the air-supply check only when Air Action is given.",
    "valve_size": "Not shown.",
    "accessories": "None drawn.",
    "wires": "2-wire (loop powered) for 4-20 mA transmitters; no power-source check.",
    "power_source": "Not shown; a 4-wire device without it is reported (`supply.power`).",
    "air_supply": "Not shown; a pneumatic valve or I/P without it is reported (`supply.air`).",
    "barrier": "None drawn; a device in a classified area without it is reported (`area.protection`).",
    "area_class": "Not shown; no protection check.",
    "cores": "Not shown.",
    "shield": "Not shown.",
    "set_point": "Switches: no set-point test; controllers: not shown.",
    "reset": "Switches: no reset or dead-band check.",
    "alarm_ll": "No alarm of that kind.",
    "alarm_l": "No alarm of that kind.",
    "alarm_h": "No alarm of that kind.",
    "alarm_hh": "No alarm of that kind.",
    "interlock": "Not shown.",
    "data_sheet": "Not shown.",
    "hookup": "Not shown.",
    "notes": "Not shown.",
}


def render() -> str:
    lines = [
        "# The instrument index",
        "",
        "One row per tag. loopdocs finds the header row by itself (the first row within the",
        "first 20 that has a `Tag` column) and matches headers case-, space- and",
        "punctuation-insensitively, with the aliases below. Headers of your own can be mapped in",
        "`loopdocs.toml` under `[columns]`. Columns loopdocs does not know are kept with the",
        "record, never dropped. Every column except Tag may be absent or blank; a check that",
        "needs a missing value says it could not be verified, it never guesses.",
        "",
        "Vocabulary cells accept the listed values and common spellings (case, dots, hyphens",
        "and spaces do not matter: `ATO`, `A.T.O.` and `air to open` are the same). Anything",
        "else is reported (`index.vocabulary`) with the cell to fix. Numeric cells accept",
        "numbers and numbers stored as text (`12.5`, `48 %`); other text is reported",
        "(`index.not-a-number`).",
        "",
        "This page is generated by `docs/make_index_format.py`.",
        "",
        "| Header | Meaning | Also accepted as header | Values | When absent or blank |",
        "|---|---|---|---|---|",
    ]
    for column in COLUMNS:
        vocab = VOCAB_COLUMNS.get(column.key) or LIST_VOCAB_COLUMNS.get(column.key)
        if vocab is not None:
            values = ", ".join(f"`{m.value}`" for m in vocab)
            if column.key in LIST_VOCAB_COLUMNS:
                values = "a list separated by `,` `;` `+` or `and`, of: " + values
            spellings = vocab.spellings()
            others = sorted({s for m in vocab for s in spellings.get(m.value, ())})
            if others:
                values += "<br>also: " + ", ".join(f"`{s}`" for s in others)
        elif column.numeric:
            values = "number"
        else:
            values = "text"
        aliases = ", ".join(f"`{a}`" for a in column.aliases)
        header = column.header.replace("|", "\\|")
        lines.append(f"| **{header}** | {column.meaning} | {aliases} | {values} | {WHEN_BLANK[column.key]} |")
    lines += [
        "",
        "## Square-root flow transmitters",
        "",
        "A differential-pressure flow transmitter that extracts the square root (Transfer",
        "`sqrt`) gives an output linear in flow, while the technician applies differential",
        "pressure: DP / DP span = (flow / flow span)^2, so 50 % flow is 25 % DP and 12 mA.",
        "Write its range either way:",
        "",
        "- Range in pressure units (`0` to `25` `kPa`): the range is the DP range. The table",
        "  gives the DP to apply at 0, 1, 25, 50, 75 and 100 % of DP and the output there.",
        "- Range in flow units (`0` to `120` `m3/h`, `kg/h`, `t/h`, `Nm3/h`, `gpm`): the range is",
        "  the flow range. Give the transmitter's calibrated DP range in DP Low, DP High and DP",
        "  Units; the table then gives, at 0, 10, 25, 50, 75 and 100 % of flow, the flow, the DP",
        "  to apply and the output. Without a DP range it gives the % of DP span to apply.",
        "",
        "Both ranges start at zero (zero flow, zero DP). Low Flow Cutoff % (of flow) makes the",
        "points below the cut-off expect zero flow. `sqrt` with units that are neither flow nor",
        "pressure is an error (`flow.sqrt-units`). A DP range with Transfer `linear` and a range",
        "in flow units is a transmitter linear in DP with the root taken in the control system:",
        "the table is in DP with the flow beside each point.",
        "",
        "## Tags",
        "",
        "Default grammar: optional area prefix, function letters, optional separator, loop",
        "number, optional suffix letters: `41-TIC-3105`, `TIC3105`, `TV-3105A`. The first",
        "letter, with a first-letter modifier `D`, `F`, `J` or `Q` where one follows (`PDT`,",
        "`FFIC`, `FQI`), is the measured variable; the loop is the area prefix, the measured",
        "variable and the number. What a tag is (transmitter, controller, final element,",
        "relay/converter, switch, element, indicator, alarm) follows from its succeeding",
        "letters per the ISA-5.1 identification table. A project may set its own grammar as",
        "a regular expression with the named groups `letters` and `number` (and optionally",
        "`area` and `suffix`) in `loopdocs.toml`, `[index] tag_pattern`.",
        "",
    ]
    return "\n".join(lines)


def main() -> None:
    (HERE / "index-format.md").write_text(render(), encoding="utf-8")


if __name__ == "__main__":
    main()
