"""Write a generated instrument index for benchmarking (an invented brewery plant).

``write_index(path, n_loops, seed=0)`` writes an ``.xlsx`` (or ``.csv``) in the default
headers of ``loopdocs.read.columns``: a title block, the header at row 5, then about 3.3
rows per loop: transmitter, controller and valve; some loops split over two or three
valves (heating and cooling, staged small and large valves) with Driven By, Split Method,
CO and travel columns, positioner input ranges and wiring; some indicating only.
About 2 % of the valves carry a deliberate mistake so that checks have work to do.
The same ``n_loops`` and ``seed`` always give the same file contents.

``write_index_variant`` writes the same plant in a second layout (columns shuffled, alias
headers, numbers stored as text) so that the benchmark also times the slower paths.

Run: ``python benchmarks/make_index.py OUT.xlsx N_LOOPS [SEED] [variant]``.
"""

from __future__ import annotations

import csv
import random
import sys
from pathlib import Path
from typing import Any

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from loopdocs.read.columns import COLUMNS  # noqa: E402

HEADERS = [column.header for column in COLUMNS]
KEYS = [column.key for column in COLUMNS]
HEADER_ROW = 5

AREAS = {
    10: ("Brewhouse", ["Mash tun", "Lauter tun", "Wort kettle", "Whirlpool", "Hot liquor tank", "Wort cooler"]),
    20: ("Fermentation", [f"Fermenter {n}" for n in range(1, 25)]),
    30: ("Cellar", [f"Bright beer tank {n}" for n in range(1, 13)] + ["Filter skid", "Yeast propagator"]),
    40: ("Packaging", ["Keg washer", "Bottle filler", "Tunnel pasteuriser", "Can filler"]),
    50: ("Utilities", ["Glycol chiller", "CIP supply", "CIP return", "Steam header", "Deaerated water", "CO2 recovery"]),
}

# measured variable letter -> (units, low, high choices, transmitter sensor, service words)
VARIABLES = {
    "T": ("degC", [(0, 100), (-10, 40), (0, 150), (-5, 30)], ["Pt100", "Pt100", "TC-K"], "temperature"),
    "P": ("barg", [(0, 4), (0, 10), (-1, 3), (0, 16)], [None], "pressure"),
    "F": ("m3/h", [(0, 20), (0, 50), (0, 120), (0, 8)], [None], "flow"),
    "L": ("%", [(0, 100)], [None], "level"),
}
VARIABLE_WEIGHTS = {"T": 40, "P": 20, "F": 20, "L": 20}


def _rows_for_loop(rng: random.Random, number: int, kind: str) -> list[dict[str, Any]]:
    """The index rows of one loop; ``kind`` is single, split2, split3 or indicate."""
    letter = rng.choices(list(VARIABLE_WEIGHTS), weights=list(VARIABLE_WEIGHTS.values()))[0]
    if kind == "split2":
        letter = rng.choice(["T", "P"])
    units, ranges, sensors, word = VARIABLES[letter]
    low, high = rng.choice(ranges)
    area = rng.choice(list(AREAS))
    area_name, units_of_plant = AREAS[area]
    unit = rng.choice(units_of_plant)
    pid = f"PID-{area:02d}{rng.randint(1, 9)}"
    cabinet = f"CAB{area // 10}"
    jb = f"JB-{area}{rng.randint(1, 8):02d}"
    loop = f"{letter}-{number}"
    channel = iter(range(1, 100))

    def wiring(io_kind: str) -> dict[str, Any]:
        # one channel per loop number and signal: addresses never collide across loops
        ch = next(channel)
        rack, slot = 1 + number % 4, 1 + (number // 4) % 16
        base = rng.randint(1, 90) * 2
        return {
            "io_address": f"{cabinet}-R{rack}-S{slot:02d}-{io_kind}{number:05d}-{ch:02d}",
            "jb": jb,
            "jb_terminals": f"{base}-{base + 1}",
            "cable": f"C-{number}-{io_kind}{ch}",
            "cabinet": cabinet,
            "cabinet_terminals": f"X{rack}:{base}-{base + 1}",
        }

    transmitter = {
        "tag": f"{letter}T-{number}",
        "loop": loop,
        "service": f"{unit} {word}",
        "pid": pid,
        "location": "field",
        "platform": "device",
        "signal": rng.choice(["4-20 mA HART", "4-20 mA"]),
        "range_low": low,
        "range_high": high,
        "units": units,
        "transfer": "sqrt" if letter == "F" and rng.random() < 0.3 else "linear",
        "sensor": rng.choice(sensors),
        "accuracy_pct": rng.choice([0.1, 0.25, 0.5]),
        "device_volts": rng.choice([10.5, 11.0, 12.0]),
        "loop_volts": 24,
        "load_ohm": 250,
        **wiring("AI"),
    }
    if kind == "indicate":
        indicator = {
            "tag": f"{letter}I-{number}",
            "loop": loop,
            "service": f"{unit} {word} indication",
            "pid": pid,
            "location": "control room",
            "platform": "dcs",
            "signal": "none",
            "range_low": low,
            "range_high": high,
            "units": units,
        }
        return [transmitter, indicator]

    controller_tag = f"{letter}IC-{number}"
    controller = {
        "tag": controller_tag,
        "loop": loop,
        "service": f"{unit} {word} control",
        "pid": pid,
        "location": "control room",
        "platform": "dcs",
        "signal": "none",
        "range_low": low,
        "range_high": high,
        "units": units,
        "control_action": "reverse",
    }
    rows = [transmitter, controller]

    def valve(suffix: str, service: str, cv: float, effect: str, air: str | None = None) -> dict[str, Any]:
        air = air or rng.choice(["ATO", "ATO", "ATC"])
        row = {
            "tag": f"{letter}V-{number}{suffix}",
            "loop": loop,
            "service": service,
            "pid": pid,
            "location": "field",
            "platform": "device",
            "signal": "4-20 mA HART",
            "air_action": air,
            "fail_position": "FC" if air == "ATO" else "FO",
            "positioner_action": "direct",
            "driven_by": controller_tag,
            "effect": effect,
            "cv": cv,
            "characteristic": rng.choice(["equal-percentage", "linear"]),
            "device_volts": 9.5,
            "loop_volts": 22,
            **wiring("AO"),
        }
        if row["characteristic"] == "equal-percentage":
            row["rangeability"] = 50
        if rng.random() < 0.02:  # a deliberate mistake: fail position against air action
            row["fail_position"] = "FO" if air == "ATO" else "FC"
            row["notes"] = "fail position to be confirmed by vendor"
        return row

    if kind == "single":
        rows.append(valve("", f"{unit} {word} control valve", rng.choice([4, 10, 25, 40]), "raises"))
        if letter in ("T", "L"):
            rows[1]["control_action"] = "reverse"
        return rows

    method = rng.choice(["dcs", "positioner", "positioner", "pneumatic"])
    if kind == "split2":
        # staged-opposed: cooling closes over 0-50 %, heating opens over 50-100 % (reverse acting)
        gap = rng.choice([0, 0, 2, 4])
        boundary = 50
        specs = [
            ("A", f"{unit} glycol supply" if letter == "T" else f"{unit} vent", 0, boundary - gap / 2, 100, 0, "lowers"),
            ("B", f"{unit} steam supply" if letter == "T" else f"{unit} CO2 supply", boundary + gap / 2, 100, 0, 100, "raises"),
        ]
        rows[1]["control_action"] = "reverse"
    else:
        # staged, all opening as CO rises, boundaries about in proportion to cumulative Cv
        cvs = sorted(rng.sample([4, 10, 16, 25, 40, 63], 3))
        total = sum(cvs)
        first = round(100 * cvs[0] / total)
        second = round(100 * (cvs[0] + cvs[1]) / total)
        specs = [
            ("A", f"{unit} {word} trim valve", 0, first, 0, 100, "raises"),
            ("B", f"{unit} {word} mid valve", first, second, 0, 100, "raises"),
            ("C", f"{unit} {word} main valve", second, 100, 0, 100, "raises"),
        ]
    shared_output = None
    if method == "pneumatic":
        # one I/P converter on the controller output feeds the valves' positioners
        converter = valve("", f"{unit} {word} I/P converter", 0, "raises")
        for key in ("air_action", "fail_position", "positioner_action", "effect", "cv", "characteristic",
                    "rangeability", "notes"):
            converter.pop(key, None)
        converter.update({"tag": f"{letter}Y-{number}", "signal": "3-15 psig", "range_low": 4,
                          "range_high": 20, "units": "mA", "device_volts": 9})
        rows.append(converter)
    for index, (suffix, service, co_start, co_end, t_start, t_end, effect) in enumerate(specs):
        # a valve that closes as CO rises is air-to-close (fails open), with a direct positioner
        air = "ATC" if t_end < t_start else "ATO"
        row = valve(suffix, service, cvs[index] if kind == "split3" else rng.choice([4, 10, 25]), effect, air)
        row.update(
            {"split_method": method, "co_start_pct": co_start, "co_end_pct": co_end,
             "travel_start_pct": t_start, "travel_end_pct": t_end}
        )
        if method == "positioner":  # positioners in series on the controller's one output
            shared_output = shared_output or row["io_address"]
            row["io_address"] = shared_output
        elif method == "pneumatic":
            row.pop("io_address")
        if method == "dcs":
            row.update({"input_low": 4, "input_high": 20, "input_units": "mA"})
        elif method == "positioner":
            row.update({"input_low": round(4 + 0.16 * co_start, 2), "input_high": round(4 + 0.16 * co_end, 2), "input_units": "mA"})
        else:
            row.update({"input_low": round(3 + 0.12 * co_start, 2), "input_high": round(3 + 0.12 * co_end, 2), "input_units": "psig"})
            row["signal"] = "3-15 psig"
        rows.append(row)
    return rows


def generate_rows(n_loops: int, seed: int = 0) -> list[list[Any]]:
    """The data rows (lists in ``HEADERS`` order) of a generated index of ``n_loops`` loops."""
    rng = random.Random(seed)
    kinds = rng.choices(["single", "split2", "split3", "indicate"], weights=[65, 25, 5, 5], k=n_loops)
    table: list[list[Any]] = []
    for index, kind in enumerate(kinds):
        for row in _rows_for_loop(rng, 1001 + index, kind):
            table.append([row.get(key) for key in KEYS])
    return table


def title_block(n_loops: int, seed: int) -> list[list[Any]]:
    return [
        ["Kettle Creek Brewery - instrument index"],
        [f"Generated for benchmarking: {n_loops} loops, seed {seed}"],
        ["Revision", "B1"],
        [],
    ]


def _write_rows(path: Path, rows: list[list[Any]], sheet_name: str) -> Path:
    """Write ``rows`` to ``path``: a .csv file, or an .xlsx workbook with one sheet."""
    if path.suffix.lower() == ".csv":
        with path.open("w", newline="", encoding="utf-8") as handle:
            writer = csv.writer(handle)
            for row in rows:
                writer.writerow(["" if v is None else v for v in row])
        return path
    from openpyxl import Workbook

    book = Workbook(write_only=True)
    sheet = book.create_sheet(sheet_name)
    for row in rows:
        sheet.append(row)
    book.save(path)
    return path


def write_index(path: Path, n_loops: int, seed: int = 0) -> Path:
    """Write the generated index to ``path`` (.xlsx or .csv) and return the path."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    rows = [*title_block(n_loops, seed), HEADERS, *generate_rows(n_loops, seed)]
    return _write_rows(path, rows, "Index")


def _as_text(value: Any) -> Any:
    """A number as a spreadsheet user types it into a text cell (``12`` -> ``"12"``)."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return value
    return f"{value:g}"


def variant_layout(seed: int) -> tuple[list[int], list[str]]:
    """The column order (indexes into ``HEADERS``) and header texts of the second layout:
    columns shuffled, and each column headed by one of its aliases where it has any."""
    rng = random.Random(10_000 + seed)
    order = list(range(len(COLUMNS)))
    rng.shuffle(order)
    headers = [rng.choice(COLUMNS[i].aliases) if COLUMNS[i].aliases else COLUMNS[i].header for i in order]
    return order, headers


def write_index_variant(path: Path, n_loops: int, seed: int = 0) -> Path:
    """The same plant as ``write_index`` in a second layout, as projects write their own
    indexes: the columns shuffled, alias headers (``LRV``, ``Tag No``, ...), every number
    stored as text, a two-row title block, and the header at row 3 of a sheet named
    ``Instruments``. Same ``n_loops`` and ``seed``, same file contents."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    order, headers = variant_layout(seed)
    rows: list[list[Any]] = [
        [f"Kettle Creek Brewery - instruments ({n_loops} loops, seed {seed}, second layout)"],
        [],
        headers,
    ]
    for row in generate_rows(n_loops, seed):
        rows.append([_as_text(row[i]) for i in order])
    return _write_rows(path, rows, "Instruments")


if __name__ == "__main__":
    out, loops = Path(sys.argv[1]), int(sys.argv[2])
    seed = int(sys.argv[3]) if len(sys.argv) > 3 else 0
    if len(sys.argv) > 4 and sys.argv[4] == "variant":
        write_index_variant(out, loops, seed)
    else:
        write_index(out, loops, seed)
    print(out)
