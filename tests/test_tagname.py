"""Tag grammar and ISA-5.1 letter meanings.

Source of the letter combinations: ANSI/ISA-5.1-2009 "Instrumentation Symbols and
Identification", table 4.1 (identification letters) and the typical letter
combinations table (from memory for the table numbers).
"""

import pytest

from loopdocs.model.tagname import TagKind, compile_tag_pattern, parse_tag, tag_kind

# tag, measured variable, functions, loop id, kind  -- ISA-5.1-2009 table 4.1 meanings
ISA_CASES = [
    ("TT-3105", "T", "T", "T-3105", TagKind.TRANSMITTER),        # temperature transmitter
    ("TIC-3105", "T", "IC", "T-3105", TagKind.CONTROLLER),       # temperature indicating controller
    ("TV-3105A", "T", "V", "T-3105", TagKind.FINAL_ELEMENT),     # temperature valve, suffix A
    ("TCV-9", "T", "CV", "T-9", TagKind.FINAL_ELEMENT),          # self-actuated control valve
    ("TE-3105", "T", "E", "T-3105", TagKind.ELEMENT),            # temperature element
    ("TW-3105", "T", "W", "T-3105", TagKind.ELEMENT),            # thermowell
    ("TY-3105", "T", "Y", "T-3105", TagKind.RELAY),              # relay / converter (I/P)
    ("PDT-207", "PD", "T", "PD-207", TagKind.TRANSMITTER),       # differential pressure transmitter (D = differential)
    ("PDI-1", "PD", "I", "PD-1", TagKind.INDICATOR),             # differential pressure indicator
    ("FFIC-12", "FF", "IC", "FF-12", TagKind.CONTROLLER),        # flow ratio indicating controller (F = ratio)
    ("FQI-2", "FQ", "I", "FQ-2", TagKind.INDICATOR),             # flow totalising indicator (Q = integrate)
    ("FE-1201", "F", "E", "F-1201", TagKind.ELEMENT),            # flow element (orifice)
    ("FO-7", "F", "O", "F-7", TagKind.ELEMENT),                  # restriction orifice
    ("FIT-8", "F", "IT", "F-8", TagKind.TRANSMITTER),            # indicating flow transmitter
    ("LSHH-2101", "L", "SHH", "L-2101", TagKind.SWITCH),         # level switch high-high
    ("LG-3", "L", "G", "L-3", TagKind.INDICATOR),                # level gauge (glass)
    ("LAH-4", "L", "AH", "L-4", TagKind.ALARM),                  # level alarm high
    ("HIC-5", "H", "IC", "H-5", TagKind.CONTROLLER),             # hand indicating controller
    ("HS-6", "H", "S", "H-6", TagKind.SWITCH),                   # hand switch
    ("HV-6", "H", "V", "H-6", TagKind.FINAL_ELEMENT),            # hand valve (remote operated)
    ("PSV-10", "P", "SV", "P-10", TagKind.FINAL_ELEMENT),        # pressure safety valve
    ("XV-7", "X", "V", "X-7", TagKind.FINAL_ELEMENT),            # on/off valve
    ("ZSO-44", "Z", "SO", "Z-44", TagKind.SWITCH),               # position switch (open)
    ("ZT-45", "Z", "T", "Z-45", TagKind.TRANSMITTER),            # position transmitter
    ("AIT-50", "A", "IT", "A-50", TagKind.TRANSMITTER),          # analyser transmitter
    ("TJR-60", "TJ", "R", "TJ-60", TagKind.INDICATOR),           # temperature scanning recorder (J = scan)
    ("SC-70", "S", "C", "S-70", TagKind.CONTROLLER),             # speed controller
    ("WK-80", "W", "K", "W-80", TagKind.CONTROLLER),             # weight control station
    ("XZ-90", "X", "Z", "X-90", TagKind.FINAL_ELEMENT),          # unclassified final element / actuator
]


@pytest.mark.parametrize("tag, variable, functions, loop_id, kind", ISA_CASES)
def test_isa_letters(tag, variable, functions, loop_id, kind):
    parts = parse_tag(tag)
    assert parts.variable == variable
    assert parts.functions == functions
    assert parts.loop_id == loop_id
    assert tag_kind(parts) is kind


@pytest.mark.parametrize(
    "tag, area, number, suffix",
    [
        ("41-TIC-3105", "41", "3105", ""),   # docs/design.md §2.4 examples: area prefix
        ("TIC3105", "", "3105", ""),         # no separator
        ("TV-3105A", "", "3105", "A"),       # suffix letter
        ("U1-TT-100", "U1", "100", ""),      # alphanumeric area
        ("FV-101-B", "", "101", "B"),        # separated suffix
        ("tv 3105b", "", "3105", "B"),       # lower case and a space
    ],
)
def test_grammar_parts(tag, area, number, suffix):
    parts = parse_tag(tag)
    assert (parts.area, parts.number, parts.suffix) == (area, number, suffix)


def test_area_prefix_is_part_of_the_loop_id():
    assert parse_tag("41-TV-3105A").loop_id == "41-T-3105"
    assert parse_tag("42-TV-3105A").loop_id != parse_tag("41-TV-3105A").loop_id


@pytest.mark.parametrize("bad", ["T-3105", "3105-TT", "TT-", "TT-3105 (spare)", "", "TTTTTTTT-1"])
def test_bad_tags_say_why(bad):
    with pytest.raises(ValueError, match="tag"):
        parse_tag(bad)


def test_variable_names_follow_isa_first_letters():
    # ISA-5.1-2009 table 4.1: P pressure, D as first-letter modifier = differential
    assert parse_tag("PDT-1").variable_name == "differential pressure"
    assert parse_tag("LT-1").variable_name == "level"
    assert parse_tag("FQI-1").variable_name == "integral, total flow"


def test_custom_pattern_needs_named_groups():
    pattern = compile_tag_pattern(r"(?P<letters>[A-Z]+)\.(?P<number>\d+)")
    assert parse_tag("TT.12", pattern).loop_id == "T-12"
    with pytest.raises(ValueError, match="number"):
        compile_tag_pattern(r"(?P<letters>[A-Z]+)")
    with pytest.raises(ValueError, match="regular expression"):
        compile_tag_pattern(r"(?P<letters>[A-Z+")


def test_position_switches_are_switches():
    # ISA-5.1: Z position, S switch; ZSO/ZSC open/closed limit switches (common practice) are
    # switches, not controllers, although C is also the controller letter
    from loopdocs.model.tagname import TagKind, parse_tag, tag_kind

    assert {t: tag_kind(parse_tag(t)) for t in ("ZSO-1201", "ZSC-1201", "ZSHH-1")} == dict.fromkeys(
        ("ZSO-1201", "ZSC-1201", "ZSHH-1"), TagKind.SWITCH)
    assert tag_kind(parse_tag("ZIC-1")) is TagKind.CONTROLLER
