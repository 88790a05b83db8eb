"""Vocabulary spellings of the index columns (docs/design.md §2.2)."""

import pytest

from loopdocs.model.vocab import (
    VOCAB_COLUMNS,
    AirAction,
    Characteristic,
    FailPosition,
    Sensor,
    Signal,
    fold,
)


@pytest.mark.parametrize("text", ["ATO", "ato", "A.T.O.", "air to open", "Air-to-Open", " air  to open "])
def test_air_to_open_spellings(text):
    assert AirAction.parse(text) is AirAction.ATO


@pytest.mark.parametrize("text, member", [
    ("FC", FailPosition.FC), ("fail closed", FailPosition.FC), ("F.O.", FailPosition.FO),
    ("fail open", FailPosition.FO), ("fail last", FailPosition.FL), ("fail locked", FailPosition.FL),
    ("fail as is", FailPosition.FAI),
])
def test_fail_position_spellings(text, member):
    # ISA-5.1 fail-action abbreviations FC, FO, FL (common practice for FAI)
    assert FailPosition.parse(text) is member


@pytest.mark.parametrize("text, member", [
    ("4-20 mA", Signal.MA_4_20), ("4-20mA", Signal.MA_4_20), ("4 to 20 mA", Signal.MA_4_20),
    ("4-20 mA HART", Signal.MA_4_20_HART), ("HART", Signal.MA_4_20_HART),
    ("3-15 psig", Signal.PSIG_3_15), ("3-15 psi", Signal.PSIG_3_15),
    # IEC 60382: 20-100 kPa is the same signal as 0.2-1.0 bar
    ("20-100 kPa", Signal.KPA_20_100), ("0.2-1.0 bar", Signal.KPA_20_100),
    ("Foundation Fieldbus", Signal.FIELDBUS), ("discrete", Signal.DISCRETE),
    ("thermocouple", Signal.TC), ("RTD", Signal.RTD), ("none", Signal.NONE),
])
def test_signal_spellings(text, member):
    assert Signal.parse(text) is member


@pytest.mark.parametrize("letter", list("KJTENRSB"))
def test_every_thermocouple_type_is_accepted(letter):
    # IEC 60584-1 letter designations
    for text in (f"TC-{letter}", f"type {letter}", f"Type {letter} thermocouple".replace(" thermocouple", " tc")):
        assert Sensor.parse(text).thermocouple_type == letter


def test_equal_percentage_shorthands():
    for text in ("=%", "eq%", "equal percentage", "Equal-Percentage"):
        assert Characteristic.parse(text) is Characteristic.EQUAL_PERCENTAGE


def test_unknown_value_lists_the_accepted_ones():
    with pytest.raises(ValueError) as info:
        AirAction.parse("air to wobble")
    assert "ATO" in str(info.value) and "ATC" in str(info.value) and "air to wobble" in str(info.value)


def test_no_spelling_means_two_things_in_one_vocabulary():
    for vocab in VOCAB_COLUMNS.values():
        seen = {}
        spellings = vocab.spellings()
        for member in vocab:
            for text in (member.value, member.name, *spellings.get(member.value, ())):
                key = fold(text)
                assert seen.setdefault(key, member) is member, f"{vocab.__name__}: {text!r} is ambiguous"
