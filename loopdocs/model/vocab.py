"""Enumerated vocabularies of the index, and the common spellings each accepts.

Every enumerated column of the index (docs/design.md §2.2) has one ``Vocab`` enum here. Cells are
folded before lookup (case, dots, hyphens, underscores, slashes and runs of spaces do
not matter: ``"A.T.O."``, ``"air-to-open"`` and ``"Air to open"`` all read as ATO).
A value that is not recognised is rejected with the list of accepted values; it is never
guessed.

>>> AirAction.parse("air to open")
<AirAction.ATO: 'ATO'>
>>> FailPosition.parse("Fail Closed")
<FailPosition.FC: 'FC'>
>>> Sensor.parse("type k").value
'TC-K'
"""

from __future__ import annotations

import re
from enum import Enum
from functools import cache, lru_cache


@lru_cache(maxsize=4096)
def fold(text: str) -> str:
    """Fold a cell for vocabulary lookup (cached: an index repeats a few spellings).

    >>> fold(" A.T.O. ")
    'ato'
    >>> fold("4-20mA/HART")
    '4 20ma hart'
    """
    text = str(text).lower().replace(".", "")
    text = re.sub(r"[-_/,()]+", " ", text)
    return " ".join(text.split())


class Vocab(str, Enum):
    """Base of the index vocabularies: ``parse`` accepts the spellings in ``_spellings``."""

    @classmethod
    def spellings(cls) -> dict[str, tuple[str, ...]]:
        """Member value -> other accepted spellings (besides the value itself)."""
        return {}

    @classmethod
    def column_title(cls) -> str:
        return re.sub(r"(?<!^)(?=[A-Z])", " ", cls.__name__)

    @classmethod
    @cache
    def _lookup(cls) -> dict[str, "Vocab"]:
        table: dict[str, Vocab] = {}
        extra = cls.spellings()
        for member in cls:
            for text in (member.value, member.name, *extra.get(member.value, ())):
                table[fold(text)] = member
                table[fold(text).replace(" ", "")] = member
        return table

    @classmethod
    def parse(cls, text: str) -> "Vocab":
        """The member a cell means; ``ValueError`` listing the accepted values otherwise."""
        key = fold(text)
        member = cls._lookup().get(key) or cls._lookup().get(key.replace(" ", ""))
        if member is None:
            accepted = ", ".join(m.value for m in cls)
            raise ValueError(f"{str(text).strip()!r} is not a known {cls.column_title()}; use one of: {accepted}")
        return member

    def __str__(self) -> str:
        return self.value


class AirAction(Vocab):
    """Actuator action on increasing air: ATO opens the valve, ATC closes it."""

    ATO = "ATO"
    ATC = "ATC"

    @classmethod
    def spellings(cls):
        return {
            "ATO": ("air to open", "air open", "air opens", "fail closed actuator", "spring close", "spring to close"),
            "ATC": ("air to close", "air close", "air closes", "spring open", "spring to open"),
        }


class FailPosition(Vocab):
    """Position on loss of motive power or signal (ISA-5.1 FC, FO, FL; FAI: fail as is)."""

    FC = "FC"
    FO = "FO"
    FL = "FL"
    FAI = "FAI"

    @classmethod
    def spellings(cls):
        return {
            "FC": ("fail closed", "fail close", "fails closed", "fail shut", "closed"),
            "FO": ("fail open", "fail opened", "fails open", "open"),
            "FL": ("fail last", "fail locked", "fail lock", "fail in place", "fail last position", "lock in place"),
            "FAI": ("fail as is", "fail asis", "as is", "fail in position"),
        }


class PositionerAction(Vocab):
    DIRECT = "direct"
    REVERSE = "reverse"

    @classmethod
    def spellings(cls):
        return {"direct": ("dir", "direct acting", "da", "inc inc"), "reverse": ("rev", "reverse acting", "ra", "inc dec")}


class ControlAction(Vocab):
    """Controller action: direct = output rises when the measurement rises."""

    DIRECT = "direct"
    REVERSE = "reverse"

    @classmethod
    def spellings(cls):
        return {
            "direct": ("dir", "direct acting", "da", "inc inc", "increase increase"),
            "reverse": ("rev", "reverse acting", "ra", "inc dec", "increase decrease"),
        }


class Signal(Vocab):
    MA_4_20 = "4-20 mA"
    MA_4_20_HART = "4-20 mA HART"
    PSIG_3_15 = "3-15 psig"
    KPA_20_100 = "20-100 kPa"
    FIELDBUS = "fieldbus"
    DISCRETE = "discrete"
    TC = "TC"
    RTD = "RTD"
    NONE = "none"

    @classmethod
    def spellings(cls):
        return {
            "4-20 mA": ("4 20", "4 to 20 mA", "4 20ma", "4..20 mA", "analog", "analogue", "ai", "ao", "4 20 ma dc"),
            "4-20 mA HART": ("hart", "4 20 ma hart", "4 20 hart", "4 20 mA + hart", "4 to 20 mA hart", "smart"),
            "3-15 psig": ("3 15 psi", "3 15", "3 to 15 psig", "3 to 15 psi", "pneumatic"),
            # 0.2-1.0 bar is the same IEC 60382 signal written in bar.
            "20-100 kPa": ("20 100 kpa g", "20 to 100 kPa", "20 100 kpag", "0.2 1.0 bar", "0.2 1 bar", "0.2 to 1.0 bar", "0.2 1.0 barg"),
            "fieldbus": ("ff", "foundation fieldbus", "ff h1", "profibus pa", "profibus", "bus", "network"),
            "discrete": ("digital", "on off", "di", "do", "24 vdc", "24vdc", "binary", "contact"),
            "TC": ("thermocouple", "t c", "mv"),
            "RTD": ("resistance", "ohm", "ohms", "rtd 3 wire", "rtd 4 wire", "3 wire rtd", "4 wire rtd"),
            "none": ("n a", "na", "-", "no signal", "local", "mechanical"),
        }

    @property
    def is_analog_ma(self) -> bool:
        return self in (Signal.MA_4_20, Signal.MA_4_20_HART)

    @property
    def is_pneumatic(self) -> bool:
        return self in (Signal.PSIG_3_15, Signal.KPA_20_100)


class Platform(Vocab):
    DEVICE = "device"
    DCS = "dcs"
    PLC = "plc"
    SIS = "sis"
    COMPUTER = "computer"

    @classmethod
    def spellings(cls):
        return {
            "device": ("field device", "instrument", "local", "standalone", "field"),
            "dcs": ("distributed control system", "control system", "bpcs"),
            "plc": ("programmable logic controller", "programmable controller"),
            "sis": ("safety system", "safety instrumented system", "esd", "sil"),
            "computer": ("pc", "scada", "host computer", "historian", "supervisory computer"),
        }


class Location(Vocab):
    FIELD = "field"
    LOCAL_PANEL = "local panel"
    CONTROL_ROOM = "control room"
    RACK_ROOM = "rack room"

    @classmethod
    def spellings(cls):
        return {
            "field": ("in field", "plant", "field mounted", "in line", "inline", "pipe"),
            "local panel": ("local", "lp", "local control panel", "lcp", "field panel", "panel"),
            "control room": ("cr", "ccr", "main panel", "central control room", "console", "operator console"),
            "rack room": ("rer", "equipment room", "auxiliary room", "behind panel", "marshalling room", "cabinet room"),
        }


class Transfer(Vocab):
    LINEAR = "linear"
    SQRT = "sqrt"

    @classmethod
    def spellings(cls):
        return {"linear": ("lin", "proportional"), "sqrt": ("square root", "sq rt", "root", "square root extraction", "√")}


class Sensor(Vocab):
    PT100 = "Pt100"
    PT1000 = "Pt1000"
    TC_K = "TC-K"
    TC_J = "TC-J"
    TC_T = "TC-T"
    TC_E = "TC-E"
    TC_N = "TC-N"
    TC_R = "TC-R"
    TC_S = "TC-S"
    TC_B = "TC-B"

    @classmethod
    def spellings(cls):
        table = {
            "Pt100": ("pt 100", "rtd pt100", "pt100 rtd", "pt100 385", "100 ohm platinum"),
            "Pt1000": ("pt 1000", "rtd pt1000", "pt1000 rtd", "1000 ohm platinum"),
        }
        for letter in "KJTENRSB":
            table[f"TC-{letter}"] = (
                f"type {letter}", f"{letter} type", f"tc {letter}", f"tc type {letter}",
                f"thermocouple {letter}", f"thermocouple type {letter}", f"type {letter} tc",
                letter,
            )
        return table

    @property
    def is_rtd(self) -> bool:
        return self in (Sensor.PT100, Sensor.PT1000)

    @property
    def thermocouple_type(self) -> str | None:
        """``'K'`` for ``TC-K``; ``None`` for an RTD."""
        return None if self.is_rtd else self.value[-1]


class SplitMethod(Vocab):
    DCS = "dcs"
    POSITIONER = "positioner"
    PNEUMATIC = "pneumatic"

    @classmethod
    def spellings(cls):
        return {
            "dcs": ("control system", "software", "system", "dcs scaling", "separate outputs", "plc"),
            "positioner": ("positioner calibration", "split positioner", "positioners", "electronic positioner", "smart positioner"),
            "pneumatic": ("spring range", "pneumatic positioner", "i p", "air", "pneumatic split"),
        }


class Effect(Vocab):
    """What opening the element does to the controlled variable."""

    RAISES = "raises"
    LOWERS = "lowers"

    @classmethod
    def spellings(cls):
        return {
            "raises": ("raise", "increase", "increases", "up", "+", "heats", "fills"),
            "lowers": ("lower", "decrease", "decreases", "down", "reduces", "cools", "drains"),
        }

    @property
    def sign(self) -> int:
        """+1 when opening raises the controlled variable, -1 when it lowers it."""
        return 1 if self is Effect.RAISES else -1


class Characteristic(Vocab):
    LINEAR = "linear"
    EQUAL_PERCENTAGE = "equal-percentage"
    QUICK_OPENING = "quick-opening"

    @classmethod
    def spellings(cls):
        return {
            "linear": ("lin", "l"),
            "equal-percentage": ("equal percent", "=%", "eq%", "eq pct", "equal %", "eqp", "ep", "%"),
            "quick-opening": ("quick open", "qo", "quick opening", "on off"),
        }


class DeviceType(Vocab):
    """What a measuring device is: its measuring principle, for its symbol on the diagram."""

    DP = "DP"
    MAGNETIC = "magnetic"
    VORTEX = "vortex"
    CORIOLIS = "Coriolis"
    ULTRASONIC = "ultrasonic"
    THERMAL_MASS = "thermal mass"
    VARIABLE_AREA = "variable area"
    TURBINE = "turbine"
    POSITIVE_DISPLACEMENT = "positive displacement"
    RADAR = "radar"
    GUIDED_WAVE_RADAR = "guided-wave radar"
    DISPLACER = "displacer"
    HYDROSTATIC = "hydrostatic"
    CAPACITANCE = "capacitance"
    FLOAT = "float"
    PRESSURE = "pressure"
    THERMOWELL = "thermowell"
    PH = "pH"
    CONDUCTIVITY = "conductivity"
    OXYGEN = "oxygen"
    ANALYSER = "analyser"

    @classmethod
    def spellings(cls):
        return {
            "DP": ("differential pressure", "d p", "orifice", "orifice plate", "venturi", "dp cell", "dp flow"),
            "magnetic": ("mag", "magflow", "magmeter", "electromagnetic", "em"),
            "vortex": ("vortex shedding",),
            "Coriolis": ("coriolis mass", "mass flow meter", "cor"),
            "ultrasonic": ("us", "transit time", "ultrasound", "doppler"),
            "thermal mass": ("thermal", "thermal dispersion"),
            "variable area": ("rotameter", "va"),
            "turbine": ("turbine meter",),
            "positive displacement": ("pd", "pd meter", "oval gear"),
            "radar": ("non contact radar", "free space radar"),
            "guided-wave radar": ("gwr", "guided wave", "guided radar", "tdr"),
            "displacer": ("torque tube",),
            "hydrostatic": ("dp level", "bubbler", "head"),
            "capacitance": ("capacitive", "rf"),
            "float": ("float switch", "magnetic float"),
            "pressure": ("gauge pressure", "absolute pressure", "strain gauge", "piezo"),
            "thermowell": ("temperature", "temperature with thermowell", "well", "tw"),
            "pH": ("ph", "ph analyser", "ph analyzer", "orp"),
            "conductivity": ("cond", "conductivity analyser", "conductivity analyzer"),
            "oxygen": ("o2", "dissolved oxygen", "do", "oxygen analyser", "oxygen analyzer"),
            "analyser": ("analyzer", "gas analyser", "gas analyzer", "analyser other"),
        }


class ValveBody(Vocab):
    GLOBE = "globe"
    ANGLE = "angle"
    BUTTERFLY = "butterfly"
    BALL = "ball"
    SEGMENTED_BALL = "segmented ball"
    ECCENTRIC_PLUG = "eccentric plug"
    DIAPHRAGM = "diaphragm"
    THREE_WAY = "three-way"

    @classmethod
    def spellings(cls):
        return {
            "globe": ("globe valve", "cage", "single seat", "double seat"),
            "angle": ("angle valve", "angle body"),
            "butterfly": ("bfv", "butterfly valve", "high performance butterfly", "hpbv", "triple offset"),
            "ball": ("ball valve", "full bore ball", "trunnion ball"),
            "segmented ball": ("v ball", "vee ball", "v port ball", "segment ball"),
            "eccentric plug": ("rotary plug", "eccentric rotary plug", "camflex"),
            "diaphragm": ("diaphragm valve", "weir", "saunders"),
            "three-way": ("3 way", "three way", "3 way valve", "diverting", "mixing"),
        }


class Actuator(Vocab):
    SPRING_DIAPHRAGM = "spring-diaphragm"
    SPRING_PISTON = "spring-return piston"
    DOUBLE_ACTING_PISTON = "double-acting piston"
    ELECTRIC = "electric"
    HYDRAULIC = "hydraulic"

    @classmethod
    def spellings(cls):
        return {
            "spring-diaphragm": ("diaphragm", "spring diaphragm", "pneumatic diaphragm", "spring and diaphragm"),
            "spring-return piston": ("spring return", "piston spring return", "single acting piston", "sr piston", "spring piston"),
            "double-acting piston": ("double acting", "da piston", "piston double acting", "piston"),
            "electric": ("motor", "electric motor", "mov", "electrical"),
            "hydraulic": ("electro hydraulic", "hyd"),
        }

    @property
    def is_pneumatic(self) -> bool:
        return self in (Actuator.SPRING_DIAPHRAGM, Actuator.SPRING_PISTON, Actuator.DOUBLE_ACTING_PISTON)


class Accessory(Vocab):
    """A valve accessory; the Accessories cell lists several (``parse_list``)."""

    SOLENOID = "solenoid valve"
    LIMIT_OPEN = "open limit switch"
    LIMIT_CLOSED = "closed limit switch"
    BOOSTER = "volume booster"
    LOCK_UP = "lock-up"
    FILTER_REGULATOR = "air filter regulator"
    POSITION_TRANSMITTER = "position transmitter"

    @classmethod
    def spellings(cls):
        return {
            "solenoid valve": ("solenoid", "sov", "sv", "trip solenoid", "solenoid operated valve"),
            "open limit switch": ("open limit", "zso", "limit switch open", "open position switch"),
            "closed limit switch": ("closed limit", "close limit", "zsc", "limit switch closed", "closed position switch"),
            "volume booster": ("booster",),
            "lock-up": ("lock up", "lockup", "lock up valve", "air lock"),
            "air filter regulator": ("afr", "filter regulator", "air set", "airset", "regulator"),
            "position transmitter": ("zt", "position feedback", "feedback transmitter"),
        }

    @classmethod
    def parse_list(cls, text: str) -> tuple["Accessory", ...]:
        """A list cell: items separated by ``,``, ``;``, ``+`` or ``and``; ``limit switches``
        (or ``open/closed limit switches``) means both. ValueError names the item not known.

        >>> [a.value for a in Accessory.parse_list("SOV, open/closed limit switches")]
        ['solenoid valve', 'open limit switch', 'closed limit switch']
        """
        items: list[Accessory] = []
        for part in re.split(r"[,;+]|\band\b", str(text)):
            if not part.strip():
                continue
            folded = fold(part)
            if folded in ("limit switches", "open closed limit switches", "open close limit switches", "zso zsc",
                          "zsc zso", "both limit switches"):
                found: tuple[Accessory, ...] = (Accessory.LIMIT_OPEN, Accessory.LIMIT_CLOSED)
            else:
                found = (cls.parse(part),)  # type: ignore[assignment]
            items += [a for a in found if a not in items]
        return tuple(items)


class Wires(Vocab):
    TWO = "2-wire"
    THREE = "3-wire"
    FOUR = "4-wire"

    @classmethod
    def spellings(cls):
        return {
            "2-wire": ("2", "two wire", "2w", "loop powered", "2 wire"),
            "3-wire": ("3", "three wire", "3w"),
            "4-wire": ("4", "four wire", "4w", "externally powered", "mains powered", "separately powered"),
        }


class Shield(Vocab):
    """Where a cable screen is earthed."""

    CABINET = "cabinet"
    FIELD = "field"
    BOTH = "both"
    NONE = "none"

    @classmethod
    def spellings(cls):
        return {
            "cabinet": ("panel", "control room", "cabinet end", "system end", "marshalling"),
            "field": ("field end", "instrument end", "device end"),
            "both": ("both ends", "cabinet and field", "field and cabinet"),
            "none": ("no", "n a", "unscreened", "not earthed", "floating"),
        }


VOCAB_COLUMNS: dict[str, type[Vocab]] = {
    "location": Location,
    "platform": Platform,
    "signal": Signal,
    "transfer": Transfer,
    "sensor": Sensor,
    "control_action": ControlAction,
    "air_action": AirAction,
    "fail_position": FailPosition,
    "positioner_action": PositionerAction,
    "split_method": SplitMethod,
    "effect": Effect,
    "characteristic": Characteristic,
    "device_type": DeviceType,
    "valve_body": ValveBody,
    "actuator": Actuator,
    "wires": Wires,
    "shield": Shield,
}
"""Index column key -> the vocabulary its cells must come from."""

LIST_VOCAB_COLUMNS: dict[str, type[Accessory]] = {"accessories": Accessory}
"""Index column key -> the vocabulary of each item of a list cell (``parse_list``)."""
