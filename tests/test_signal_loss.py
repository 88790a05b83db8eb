"""``valve.signal-loss`` judged from the signal the valve sees (docs/design.md §4.6).

Facts of the trade the checks rest on:
- a two-wire, loop-powered electronic positioner (4-20 mA) takes its power from the loop
  current: with the signal gone it cannot drive its output, the actuator vents and the
  spring takes the valve to its fail position whatever the positioner's action (common
  practice: a loop-powered positioner cannot drive its output without loop current);
- a pneumatic signal (I/P output or pneumatic controller) that drops to zero is below the
  live zero of 3-15 psig / 20-100 kPa (IEC 60382, ANSI/ISA-50.00.01): to a pneumatic
  positioner that is ``u = 0``, and a reverse-acting one then drives its valve full
  stroke away from the spring position (common practice);
- ATO fails closed, ATC fails open (spring return): a fact of the trade.
"""

from __future__ import annotations

import itertools

import pytest

from loopdocs.calc.travel import spring_fail_travel_pct, travel_on_signal_loss_pct

AIC = {"tag": "AIC-501", "service": "Neutralisation tank pH", "platform": "dcs", "signal": "4-20 mA",
       "control_action": "direct"}


def _valve(tag: str, **values) -> dict:
    row = {"tag": tag, "air_action": "ATO", "fail_position": "FC", "driven_by": "AIC-501"}
    row.update(values)
    return {k: v for k, v in row.items() if v is not None}


def ph_pair(signal: str | None, method: str | None, acid: tuple[float, float], caustic: tuple[float, float],
            units: str | None, relay: dict | None = None) -> list[dict]:
    """Acid valve opens over CO 50-100 % (direct positioner on the upper half of the signal),
    caustic valve closes over CO 0-50 % (reverse positioner on the lower half); both ATO/FC."""
    rows = [AIC] + ([relay] if relay else [])
    driver = relay["tag"] if relay else "AIC-501"
    rows.append(_valve("AV-501A", service="Acid dosing", signal=signal, split_method=method, driven_by=driver,
                       positioner_action="direct", co_start_pct=50, co_end_pct=100, travel_start_pct=0,
                       travel_end_pct=100, input_low=acid[0], input_high=acid[1], input_units=units, effect="lowers"))
    rows.append(_valve("AV-501B", service="Caustic dosing", signal=signal, split_method=method, driven_by=driver,
                       positioner_action="reverse", co_start_pct=0, co_end_pct=50, travel_start_pct=100,
                       travel_end_pct=0, input_low=caustic[0], input_high=caustic[1], input_units=units,
                       effect="raises"))
    return rows


def rules_of(result) -> list[str]:
    return sorted(f.rule for f in result.findings)


def test_electronic_reverse_positioner_is_no_false_alarm(index_files):
    # Positioner split on one 4-20 mA output: 12-20 mA direct (acid), 4-12 mA reverse
    # (caustic). I = 4 + 16*CO (IEC 60381-1), so 12 mA is CO 50 %. On loss of the loop
    # current both positioners lose their power and the springs close both valves (FC).
    result = index_files.check(ph_pair("4-20 mA", "positioner", (12, 20), (4, 12), "mA"))
    assert rules_of(result) == []  # a correct pair: no signal-loss warning, nothing else either


def test_pneumatic_reverse_positioner_is_flagged(index_files):
    # The same pair on a 3-15 psig signal: 9-15 psig direct, 3-9 psig reverse (9 psig is CO 50 %).
    # Air signal at zero: the reverse positioner opens the caustic valve fully, against FC.
    result = index_files.check(ph_pair("3-15 psig", "pneumatic", (9, 15), (3, 9), "psig"))
    found = [f for f in result.findings if f.rule == "valve.signal-loss"]
    assert [(f.severity.value, f.tags, index_files.where(f)) for f in found] == [
        ("warning", ("AV-501B",), index_files.cell("positioner_action", 2))]
    assert "goes open when its pneumatic signal falls to zero (below 3 psig)" in found[0].message
    assert "Fail Position says FC" in found[0].message


def test_positioner_split_behind_an_i_to_p_sees_air(index_files):
    # An I/P (AY-501, 4-20 mA in, 20-100 kPa out) feeds both positioners; the valves' own
    # Signal is left blank. The valve sees the pneumatic signal, so the reverse one is flagged.
    relay = {"tag": "AY-501", "signal": "20-100 kPa", "driven_by": "AIC-501"}
    result = index_files.check(ph_pair(None, "positioner", (60, 100), (20, 60), "kPa", relay))
    found = [f for f in result.findings if f.rule == "valve.signal-loss"]
    assert [f.tags for f in found] == [("AV-501B",)]
    assert "pneumatic signal from AY-501" in found[0].message
    assert "below 20 kPa" in found[0].message


def test_signal_not_known_is_not_verified_rather_than_guessed(index_files):
    # Signal and Input Units blank: where a lost signal takes a reverse positioner's valve
    # cannot be told (docs/design.md §2.3: a check never guesses silently).
    rows = [{"tag": "XV-502", "air_action": "ATO", "fail_position": "FC", "positioner_action": "reverse"}]
    result = index_files.check(rows)
    assert [f for f in result.findings if f.rule == "valve.signal-loss"] == []
    info = [f for f in result.findings if f.rule == "check.not-verified" and "XV-502" in f.tags]
    assert len(info) == 1 and "on loss of signal (Signal blank" in info[0].message
    assert index_files.where(info[0]) == index_files.cell("signal", 0)


@pytest.mark.parametrize("air, positioner, reversed_range",
                         list(itertools.product(("ATO", "ATC"), ("direct", "reverse"), (False, True))))
def test_electronic_positioner_always_goes_to_the_spring_position(air, positioner, reversed_range):
    # Loop-powered positioner: the spring decides, whatever the action or range (common practice).
    low, high = (20.0, 4.0) if reversed_range else (4.0, 20.0)
    travel = travel_on_signal_loss_pct(air, positioner, low, high, signal_kind="electronic")
    assert travel == spring_fail_travel_pct(air) == (0.0 if air == "ATO" else 100.0)


@pytest.mark.parametrize("air, positioner, expected", [
    ("ATO", "direct", 0.0), ("ATO", "reverse", 100.0), ("ATC", "direct", 100.0), ("ATC", "reverse", 0.0)])
def test_pneumatic_signal_at_zero_follows_the_positioner(air, positioner, expected):
    # u = 0: a direct positioner gives zero output (spring position), a reverse one full output.
    assert travel_on_signal_loss_pct(air, positioner, 3.0, 15.0, signal_kind="pneumatic") == expected


def test_unknown_signal_kind_is_refused():
    with pytest.raises(ValueError):
        travel_on_signal_loss_pct("ATO", "direct", signal_kind="hydraulic")
