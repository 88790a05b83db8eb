"""Generate the example project: Kettle Creek Brewery, an invented plant.

Run from the repository root: ``python project_example/make_example.py``. It writes
``project_example/index.xlsx`` with the default headers (the same writer as
``loopdocs init``). The plant, its tags and its numbers are invented for the demo.

The loops show every split arrangement loopdocs knows:

- T-3105 fermenter 5 jacket: glycol cooling closes over CO 0-48 %, hot water opens
  over 52-100 % (staged-opposed, split in the positioners, 4 % dead band);
- L-2101 hot liquor tank make-up: small valve then large valve (staged, split in the
  control system, boundary in proportion to Cv);
- P-4120 steam letdown to the LP header: three valves staged on one I/P signal
  (pneumatic split, 3-4, 4-7 and 7-15 psig positioners);
- T-5310 mash-in water blending: hot and cold water traded across the whole CO
  (opposed, positioner split);
- P-6201 bright beer tank top pressure: CO2 supply closes over 0-45 %, vent opens over
  55-100 % (staged-opposed, split in the control system);

plus ordinary transmitter, indicator and single-valve loops with every signal and
sensor kind.
"""

from __future__ import annotations

import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from loopdocs.sheets.index_template import write_index_workbook  # noqa: E402

# Shorthands for the columns every field device shares.
FIELD = {"location": "field", "platform": "device"}
DCS = {"location": "control room", "platform": "dcs"}
HART_TX = {**FIELD, "signal": "4-20 mA HART", "transfer": "linear", "accuracy_pct": 0.25,
           "device_volts": 10.5, "loop_volts": 24, "load_ohm": 250, "wires": "2-wire", "shield": "cabinet"}
VALVE = {**FIELD, "signal": "4-20 mA HART", "positioner_action": "direct", "shield": "cabinet"}
#: Instrument air of the brewhouse and of the utilities, by area.
AIR_BREWHOUSE = "IA ring main brewhouse"
AIR_UTILITIES = "IA header utilities"


def rows() -> list[dict]:
    r: list[dict] = []

    # --- T-3105 fermenter 5 jacket heat/cool: staged-opposed, positioner split -------------
    svc = "Fermenter FV-5 jacket temperature"
    r += [
        {"tag": "TE-3105", "service": svc, "pid": "PID-031", **FIELD, "signal": "RTD", "sensor": "Pt100",
         "range_low": -5, "range_high": 40, "units": "degC", "notes": "Thermowell in fermenter cone, 3-wire"},
        {"tag": "TT-3105", "service": svc, "pid": "PID-031", **HART_TX, "range_low": -5, "range_high": 40,
         "units": "degC", "sensor": "Pt100", "alarm_l": -2, "alarm_h": 30, "cores": "1+ 2- S",
         "io_address": "CAB2-R1-S02-CH01", "jb": "JB-31",
         "jb_terminals": "1-2", "cable": "C-3105-1", "cabinet": "CAB2", "cabinet_terminals": "X1:11-12"},
        {"tag": "TIC-3105", "service": svc, "pid": "PID-031", **DCS, "signal": "4-20 mA", "control_action": "reverse",
         "range_low": -5, "range_high": 40, "units": "degC", "loop_volts": 22},
        {"tag": "TV-3105A", "service": "Fermenter FV-5 jacket glycol cooling", "pid": "PID-031", **VALVE,
         "air_action": "ATC", "fail_position": "FO", "driven_by": "TIC-3105", "split_method": "positioner",
         "co_start_pct": 0, "co_end_pct": 48, "travel_start_pct": 100, "travel_end_pct": 0,
         "input_low": 4, "input_high": 11.68, "input_units": "mA", "effect": "lowers", "cv": 6.3,
         "valve_size": "DN25", "air_supply": AIR_BREWHOUSE,
         "characteristic": "equal-percentage", "rangeability": 50, "device_volts": 9.5,
         "io_address": "CAB2-R1-S04-CH03", "jb": "JB-31", "jb_terminals": "5-6", "cable": "C-3105-2", "cabinet": "CAB2", "cabinet_terminals": "X2:31-32"},
        {"tag": "TV-3105B", "service": "Fermenter FV-5 jacket hot water heating", "pid": "PID-031", **VALVE,
         "air_action": "ATO", "fail_position": "FC", "driven_by": "TIC-3105", "split_method": "positioner",
         "co_start_pct": 52, "co_end_pct": 100, "travel_start_pct": 0, "travel_end_pct": 100,
         "input_low": 12.32, "input_high": 20, "input_units": "mA", "effect": "raises", "cv": 4,
         "valve_size": "DN20", "air_supply": AIR_BREWHOUSE,
         "characteristic": "equal-percentage", "rangeability": 50, "device_volts": 9.5,
         "io_address": "CAB2-R1-S04-CH03", "jb": "JB-31", "jb_terminals": "7-8", "cable": "C-3105-3",
         "cabinet": "CAB2", "cabinet_terminals": "X2:31-32"},
    ]
    # --- T-3110 fermenter 5 cone temperature, Pt1000 indication -----------------------------
    r += [
        {"tag": "TT-3110", "service": "Fermenter FV-5 cone temperature", "pid": "PID-031", **HART_TX,
         "sensor": "Pt1000", "range_low": -10, "range_high": 30, "units": "degC", "io_address": "CAB2-R1-S02-CH02",
         "jb": "JB-31", "jb_terminals": "3-4", "cable": "C-3110-1", "cabinet": "CAB2", "cabinet_terminals": "X1:13-14"},
        {"tag": "TI-3110", "service": "Fermenter FV-5 cone temperature", "pid": "PID-031", **DCS,
         "signal": "4-20 mA", "range_low": -10, "range_high": 30, "units": "degC"},
    ]
    # --- L-2101 hot liquor tank make-up water: staged small/large, control-system split ------
    svc = "Hot liquor tank HLT-1 level"
    r += [
        {"tag": "LT-2101", "service": svc, "pid": "PID-021", **HART_TX, "range_low": 0, "range_high": 3200,
         "units": "mm", "device_type": "guided-wave radar", "alarm_l": 500, "alarm_h": 2900,
         "io_address": "CAB1-R1-S01-CH05", "jb": "JB-21", "jb_terminals": "1-2",
         "cable": "C-2101-1", "cabinet": "CAB1", "cabinet_terminals": "X1:21-22"},
        {"tag": "LIC-2101", "service": svc, "pid": "PID-021", **DCS, "signal": "4-20 mA",
         "control_action": "reverse", "range_low": 0, "range_high": 3200, "units": "mm"},
        {"tag": "LV-2101A", "service": "HLT-1 make-up water, small valve", "pid": "PID-021", **VALVE,
         "air_action": "ATO", "fail_position": "FC", "driven_by": "LIC-2101", "split_method": "dcs",
         "co_start_pct": 0, "co_end_pct": 25, "travel_start_pct": 0, "travel_end_pct": 100,
         "input_low": 4, "input_high": 20, "input_units": "mA", "effect": "raises", "cv": 10,
         "characteristic": "linear", "device_volts": 9.5, "loop_volts": 22, "io_address": "CAB1-R2-S06-CH01",
         "valve_size": "DN25", "air_supply": AIR_UTILITIES,
         "jb": "JB-21", "jb_terminals": "5-6", "cable": "C-2101-2", "cabinet": "CAB1", "cabinet_terminals": "X3:01-02"},
        {"tag": "LV-2101B", "service": "HLT-1 make-up water, large valve", "pid": "PID-021", **VALVE,
         "air_action": "ATO", "fail_position": "FC", "driven_by": "LIC-2101", "split_method": "dcs",
         "co_start_pct": 25, "co_end_pct": 100, "travel_start_pct": 0, "travel_end_pct": 100,
         "input_low": 4, "input_high": 20, "input_units": "mA", "effect": "raises", "cv": 30,
         "characteristic": "linear", "device_volts": 9.5, "loop_volts": 22, "io_address": "CAB1-R2-S06-CH02",
         "valve_size": "DN50", "actuator": "spring-return piston", "air_supply": AIR_UTILITIES,
         "jb": "JB-21", "jb_terminals": "7-8", "cable": "C-2101-3", "cabinet": "CAB1", "cabinet_terminals": "X3:03-04"},
        {"tag": "LSHH-2101", "service": "HLT-1 level high-high", "pid": "PID-021", **FIELD, "platform": "sis",
         "signal": "discrete", "device_type": "float", "set_point": 3000, "reset": 2950, "units": "mm",
         "interlock": "CE-021 closes LV-2101A/B", "io_address": "CAB3-R1-S01-CH01", "jb": "JB-21", "jb_terminals": "9-10",
         "cable": "C-2101-4", "cabinet": "CAB3", "cabinet_terminals": "X1:01-02"},
    ]
    # --- L-2105 grist hydrator level: local pneumatic controller, 20-100 kPa ------------------
    svc = "Grist hydrator level"
    r += [
        {"tag": "LIC-2105", "service": svc, "pid": "PID-022", "location": "local panel", "platform": "device",
         "signal": "20-100 kPa", "control_action": "direct", "range_low": 0, "range_high": 600, "units": "mm"},
        {"tag": "LV-2105", "service": "Grist hydrator outlet", "pid": "PID-022", **FIELD, "signal": "20-100 kPa",
         "air_action": "ATO", "fail_position": "FC", "positioner_action": "direct", "driven_by": "LIC-2105",
         "input_low": 20, "input_high": 100, "input_units": "kPa", "effect": "lowers", "cv": 12,
         "characteristic": "linear", "air_supply": AIR_BREWHOUSE},
    ]
    # --- P-4120 steam letdown: three valves staged on one I/P, pneumatic split ----------------
    svc = "LP steam header pressure"
    staged = [("A", 5, 0, 8.33, 3, 4), ("B", 15, 8.33, 33.33, 4, 7), ("C", 40, 33.33, 100, 7, 15)]
    r += [
        {"tag": "PT-4120", "service": svc, "pid": "PID-041", **HART_TX, "range_low": 0, "range_high": 4,
         "units": "bar", "device_type": "pressure", "alarm_h": 3.5, "io_address": "CAB1-R1-S01-CH07", "jb": "JB-41", "jb_terminals": "1-2",
         "cable": "C-4120-1", "cabinet": "CAB1", "cabinet_terminals": "X1:41-42"},
        {"tag": "PIC-4120", "service": svc, "pid": "PID-041", **DCS, "signal": "4-20 mA",
         "control_action": "reverse", "range_low": 0, "range_high": 4, "units": "bar",
         "loop_volts": 22},
        {"tag": "PY-4120", "service": "LP steam letdown I/P converter", "pid": "PID-041", **FIELD,
         "signal": "3-15 psig", "range_low": 4, "range_high": 20, "units": "mA", "device_volts": 9,
         "driven_by": "PIC-4120", "air_supply": AIR_UTILITIES, "io_address": "CAB1-R2-S07-CH01", "jb": "JB-41", "jb_terminals": "5-6", "cable": "C-4120-2",
         "cabinet": "CAB1", "cabinet_terminals": "X3:11-12"},
    ]
    for suffix, cv, co_start, co_end, p_low, p_high in staged:
        r.append({"tag": f"PV-4120{suffix}", "service": f"LP steam letdown valve {suffix} (Cv {cv})", "pid": "PID-041",
                  **FIELD, "signal": "3-15 psig", "air_action": "ATO", "fail_position": "FC",
                  "positioner_action": "direct", "driven_by": "PIC-4120", "split_method": "pneumatic",
                  "co_start_pct": co_start, "co_end_pct": co_end, "travel_start_pct": 0, "travel_end_pct": 100,
                  "input_low": p_low, "input_high": p_high, "input_units": "psig", "effect": "raises", "cv": cv,
                  "characteristic": "linear", "air_supply": AIR_UTILITIES})
    # --- T-5310 mash-in water blending: opposed over the whole CO, positioner split ----------
    svc = "Mash-in water temperature"
    r += [
        {"tag": "TE-5310", "service": svc, "pid": "PID-053", **FIELD, "signal": "TC", "sensor": "TC-T",
         "range_low": 0, "range_high": 100, "units": "degC"},
        {"tag": "TT-5310", "service": svc, "pid": "PID-053", **HART_TX, "sensor": "TC-T", "range_low": 0,
         "range_high": 100, "units": "degC", "io_address": "CAB2-R1-S02-CH05", "jb": "JB-53",
         "jb_terminals": "1-2", "cable": "C-5310-1", "cabinet": "CAB2", "cabinet_terminals": "X1:51-52"},
        {"tag": "TIC-5310", "service": svc, "pid": "PID-053", **DCS, "signal": "4-20 mA",
         "control_action": "reverse", "range_low": 0, "range_high": 100, "units": "degC",
         "loop_volts": 22},
        {"tag": "TV-5310A", "service": "Mash-in hot water", "pid": "PID-053", **VALVE, "air_action": "ATO",
         "fail_position": "FC", "driven_by": "TIC-5310", "split_method": "positioner", "co_start_pct": 0,
         "co_end_pct": 100, "travel_start_pct": 0, "travel_end_pct": 100, "input_low": 4, "input_high": 20,
         "input_units": "mA", "effect": "raises", "cv": 16, "characteristic": "linear", "device_volts": 9.5,
         "valve_size": "DN40", "air_supply": AIR_BREWHOUSE,
         "io_address": "CAB2-R2-S04-CH05", "jb": "JB-53", "jb_terminals": "5-6", "cable": "C-5310-2", "cabinet": "CAB2", "cabinet_terminals": "X3:51-52"},
        {"tag": "TV-5310B", "service": "Mash-in cold water", "pid": "PID-053", **VALVE, "air_action": "ATC",
         "fail_position": "FO", "driven_by": "TIC-5310", "split_method": "positioner", "co_start_pct": 0,
         "co_end_pct": 100, "travel_start_pct": 100, "travel_end_pct": 0, "input_low": 4, "input_high": 20,
         "input_units": "mA", "effect": "lowers", "cv": 16, "characteristic": "linear", "device_volts": 9.5,
         "valve_body": "butterfly", "valve_size": "DN50", "air_supply": AIR_BREWHOUSE,
         "io_address": "CAB2-R2-S04-CH05", "jb": "JB-53", "jb_terminals": "7-8", "cable": "C-5310-3", "cabinet": "CAB2", "cabinet_terminals": "X3:51-52"},
    ]
    # --- P-6201 bright beer tank top pressure: CO2 supply / vent, control-system split -------
    svc = "Bright beer tank BBT-2 top pressure"
    r += [
        {"tag": "PT-6201", "service": svc, "pid": "PID-062", **FIELD, "signal": "fieldbus", "range_low": 0,
         "range_high": 2.5, "units": "barg", "accuracy_pct": 0.1, "alarm_h": 2.0, "alarm_hh": 2.2,
         "interlock": "CE-062 opens vent PV-6201B", "io_address": "CAB2-FF1-SEG2",
         "jb": "JB-62", "cable": "C-FF1-2", "cabinet": "CAB2"},
        {"tag": "PIC-6201", "service": svc, "pid": "PID-062", **DCS, "signal": "fieldbus",
         "control_action": "direct", "range_low": 0, "range_high": 2.5, "units": "barg"},
        {"tag": "PV-6201A", "service": "BBT-2 CO2 supply", "pid": "PID-062", **VALVE, "air_action": "ATO",
         "fail_position": "FC", "driven_by": "PIC-6201", "split_method": "dcs", "co_start_pct": 0,
         "co_end_pct": 45, "travel_start_pct": 100, "travel_end_pct": 0, "input_low": 4, "input_high": 20,
         "input_units": "mA", "effect": "raises", "cv": 1.6, "characteristic": "equal-percentage",
         "rangeability": 30, "device_volts": 9.5, "loop_volts": 22, "io_address": "CAB2-R2-S08-CH01",
         "valve_body": "segmented ball", "valve_size": "DN15", "air_supply": AIR_BREWHOUSE,
         "jb": "JB-62", "jb_terminals": "1-2", "cable": "C-6201-1", "cabinet": "CAB2", "cabinet_terminals": "X3:61-62"},
        {"tag": "PV-6201B", "service": "BBT-2 vent to CO2 recovery", "pid": "PID-062", **VALVE, "air_action": "ATO",
         "fail_position": "FC", "driven_by": "PIC-6201", "split_method": "dcs", "co_start_pct": 55,
         "co_end_pct": 100, "travel_start_pct": 0, "travel_end_pct": 100, "input_low": 4, "input_high": 20,
         "input_units": "mA", "effect": "lowers", "cv": 2.5, "characteristic": "equal-percentage",
         "rangeability": 30, "device_volts": 9.5, "loop_volts": 22, "io_address": "CAB2-R2-S08-CH02",
         "valve_body": "ball", "valve_size": "DN15", "air_supply": AIR_BREWHOUSE,
         "jb": "JB-62", "jb_terminals": "3-4", "cable": "C-6201-2", "cabinet": "CAB2", "cabinet_terminals": "X3:63-64"},
    ]
    # --- F-1201 brewing water flow: orifice, square-root transmitter, single valve ------------
    svc = "Brewing water to mash tun"
    r += [
        {"tag": "FE-1201", "service": svc, "pid": "PID-012", **FIELD, "signal": "none", "device_type": "DP",
         "notes": "Orifice plate, flange taps, beta 0.6"},
        {"tag": "FT-1201", "service": svc, "pid": "PID-012", **HART_TX, "device_type": "DP", "transfer": "sqrt",
         "range_low": 0,
         "range_high": 250, "units": "mbar", "io_address": "CAB1-R1-S01-CH02", "jb": "JB-12",
         "jb_terminals": "1-2", "cable": "C-1201-1", "cabinet": "CAB1", "cabinet_terminals": "X1:03-04",
         "notes": "Differential pressure 0-250 mbar = 0-30 m3/h"},
        {"tag": "FIC-1201", "service": svc, "pid": "PID-012", **DCS, "signal": "4-20 mA",
         "control_action": "reverse", "range_low": 0, "range_high": 30, "units": "m3/h",
         "loop_volts": 22},
        {"tag": "FV-1201", "service": svc, "pid": "PID-012", **VALVE, "air_action": "ATO", "fail_position": "FC",
         "driven_by": "FIC-1201", "input_low": 4, "input_high": 20, "input_units": "mA", "effect": "raises",
         "cv": 25, "characteristic": "equal-percentage", "rangeability": 50, "device_volts": 9.5, "loop_volts": 22,
         "valve_size": "DN50", "air_supply": AIR_BREWHOUSE,
         "accessories": "solenoid valve, open/closed limit switches, air filter regulator",
         "interlock": "CE-012 closes FV-1201 on mash tun high level",
         "io_address": "CAB1-R2-S06-CH05", "jb": "JB-12", "jb_terminals": "5-6", "cable": "C-1201-2",
         "cabinet": "CAB1", "cabinet_terminals": "X3:21-22"},
    ]
    # --- T-7401 biogas flare and thermal oxidiser: noble-metal thermocouples -----------------
    for suffix, sensor, low, high, what in [
        ("A", "TC-R", 0, 1400, "thermal oxidiser chamber"),
        ("B", "TC-S", 0, 1400, "thermal oxidiser outlet"),
        ("C", "TC-B", 600, 1600, "biogas flare combustion zone"),
    ]:
        r.append({"tag": f"TT-7401{suffix}", "service": f"Biogas {what} temperature", "pid": "PID-074",
                  "location": "rack room", "platform": "device", "signal": "4-20 mA", "sensor": sensor,
                  "transfer": "linear", "range_low": low, "range_high": high, "units": "degC", "accuracy_pct": 0.5,
                  "device_volts": 8, "loop_volts": 24, "load_ohm": 250,
                  "io_address": f"CAB3-R1-S02-CH0{'ABC'.index(suffix) + 1}", "jb": "JB-74",
                  "cable": f"C-7401-{suffix}", "cabinet": "CAB3",
                  "notes": "Rail-mounted transmitter; compensating cable from the head to the rack room"})
    # --- T-7402 boiler house temperatures: base-metal thermocouples --------------------------
    for suffix, sensor, low, high, what in [
        ("A", "TC-K", 0, 600, "boiler flue gas"),
        ("B", "TC-N", 0, 1200, "boiler furnace"),
        ("C", "TC-J", 0, 400, "economiser outlet gas"),
    ]:
        r.append({"tag": f"TT-7402{suffix}", "service": f"Steam boiler B-1 {what} temperature", "pid": "PID-074",
                  **HART_TX, "sensor": sensor, "range_low": low, "range_high": high, "units": "degC",
                  "accuracy_pct": 0.5, "io_address": f"CAB3-R1-S03-CH0{'ABC'.index(suffix) + 1}", "jb": "JB-74",
                  "cable": f"C-7402-{suffix}", "cabinet": "CAB3"})
    # --- T-8801 glycol chiller: type T and type E ---------------------------------------------
    r += [
        {"tag": "TT-8801A", "service": "Glycol chiller supply temperature", "pid": "PID-088", **HART_TX,
         "sensor": "TC-T", "range_low": -30, "range_high": 20, "units": "degC", "io_address": "CAB2-R1-S03-CH01",
         "jb": "JB-88", "cable": "C-8801-A", "cabinet": "CAB2"},
        {"tag": "TT-8801B", "service": "Glycol chiller return temperature", "pid": "PID-088", **HART_TX,
         "sensor": "TC-E", "range_low": -30, "range_high": 20, "units": "degC", "io_address": "CAB2-R1-S03-CH02",
         "jb": "JB-88", "cable": "C-8801-B", "cabinet": "CAB2"},
    ]
    # --- A-9101 effluent pit pH: 4-wire analyser with its own supply -------------------------
    svc = "Effluent pit pH"
    r += [
        {"tag": "AT-9101", "service": svc, "pid": "PID-091", **FIELD, "signal": "4-20 mA", "device_type": "pH",
         "wires": "4-wire", "power_source": "230 VAC DB-9 circuit 4", "range_low": 2, "range_high": 12,
         "units": "pH", "accuracy_pct": 0.5, "alarm_l": 6, "alarm_h": 9.5, "shield": "cabinet", "cores": "1+ 2- S",
         "io_address": "CAB3-R1-S04-CH01", "jb": "JB-91", "jb_terminals": "1-2", "cable": "C-9101-1",
         "cabinet": "CAB3", "cabinet_terminals": "X1:91-92"},
        {"tag": "AI-9101", "service": svc, "pid": "PID-091", **DCS, "signal": "4-20 mA", "range_low": 2,
         "range_high": 12, "units": "pH"},
    ]
    # --- P-7410 biogas holder pressure: intrinsically safe loop in Zone 1, high-high switch ----
    svc = "Biogas holder pressure"
    r += [
        {"tag": "PT-7410", "service": svc, "pid": "PID-074", **HART_TX, "device_type": "pressure",
         "range_low": 0, "range_high": 50, "units": "mbar", "alarm_l": 5, "alarm_h": 40,
         "area_class": "Zone 1 IIA T3", "barrier": "IS isolator KB-7410", "cores": "1+ 2- S",
         "io_address": "CAB3-R1-S05-CH01", "jb": "JB-74", "jb_terminals": "11-12", "cable": "C-7410-1",
         "cabinet": "CAB3", "cabinet_terminals": "X2:11-12"},
        {"tag": "PI-7410", "service": svc, "pid": "PID-074", **DCS, "signal": "4-20 mA", "range_low": 0,
         "range_high": 50, "units": "mbar"},
        {"tag": "PSHH-7410", "service": "Biogas holder pressure high-high", "pid": "PID-074", **FIELD,
         "platform": "sis", "signal": "discrete", "device_type": "pressure", "set_point": 45, "reset": 42,
         "units": "mbar", "area_class": "Zone 1 IIA T3", "barrier": "IS isolator KB-7411",
         "interlock": "CE-074 opens flare valve", "io_address": "CAB3-R1-S01-CH04", "jb": "JB-74",
         "jb_terminals": "13-14", "cable": "C-7410-2", "cabinet": "CAB3", "cabinet_terminals": "X1:07-08"},
    ]
    return r


CONFIG = """\
# Kettle Creek Brewery (invented plant for the loopdocs demo)

[index]
file = "index.xlsx"
sheet = "Index"

[title_block]
project = "Kettle Creek Brewery - brewhouse and utilities revamp"
client = "Kettle Creek Brewing Co. (invented)"
unit = "Brewhouse and utilities"
drawing_number = "KCB-LS-{loop}"
revision = "A"
date = "2026-12-01"
drawn = "loopdocs"
checked = ""
approved = ""

[sheet]
size = "A3"
notes = [
    "Invented plant for the loopdocs demonstration; not a real installation.",
    "Cable and terminal numbers to the project cable schedule.",
]

[[sheet.revisions]]
rev = "A"
date = "2026-12-01"
description = "Issued for review"
by = "loopdocs"
"""


def main() -> None:
    write_index_workbook(HERE / "index.xlsx", rows())
    (HERE / "loopdocs.toml").write_text(CONFIG, encoding="utf-8")
    print(f"wrote {HERE / 'index.xlsx'} ({len(rows())} tags) and {HERE / 'loopdocs.toml'}")


if __name__ == "__main__":
    main()
