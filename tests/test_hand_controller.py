"""A hand controller (ISA-5.1 first letter H: hand, the operator sets the output) has no
control action, so the control sense of its valve is not asked for; a PIC's is."""

from __future__ import annotations


def test_hand_controller_needs_no_control_action(index_files):
    rows = [
        {"tag": "HIC-106", "service": "Vent hand control", "platform": "dcs"},
        {"tag": "HV-106", "signal": "4-20 mA", "driven_by": "HIC-106", "air_action": "ATO", "fail_position": "FC",
         "effect": "lowers"},
        {"tag": "PIC-107", "service": "Vent pressure", "platform": "dcs"},
        {"tag": "PV-107", "signal": "4-20 mA", "driven_by": "PIC-107", "air_action": "ATO", "fail_position": "FC",
         "effect": "lowers"},
    ]
    checked = index_files.check(rows)
    about = {(f.rule, f.tags[0] if f.tags else None) for f in checked.findings}
    # common practice: control sense needs a Control Action; a hand station has none
    assert not any(tag in ("HIC-106", "HV-106") for _, tag in about)
    sense = [f for f in checked.findings if "Control Action blank" in f.message]
    assert [f.location.row for f in sense] == [4]  # the PIC-107 row is still asked
