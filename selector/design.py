"""Design files: board conditions and switched-load channels, read, checked and written.

A design is TOML (or the same structure as a dict)::

    [conditions]
    ambient_min = -5          # °C
    ambient_max = 45          # °C
    ...

    [[channel]]
    name = "soil heater"
    supply = "24 V"           # numbers are in the field's unit; strings may carry a unit
    current = 8
    ...

    [settings]                # optional: engineering defaults (selector.models.Settings)
    vgs_derating = 0.7

Values are numbers in the field's unit (see :data:`CONDITION_FIELDS` and
:data:`CHANNEL_FIELDS`) or strings with a unit of the same dimension (``"24 V"``,
``"-5 °C"``, ``"2 kHz"``, ``"80 mH"``, ``"70 %"``). Inside, every value is an SI float
(temperatures in °C, temperature differences in K).

Validation collects every problem of the file and raises one
:class:`~selector.errors.DesignError` whose message lists them all, each naming the
channel and field; ``DesignError.problems`` holds them as ``(Location, message)`` pairs
for the page's table.

The optional ``[settings]`` table overrides fields of :class:`selector.models.Settings`.
:func:`load_design` checks it but returns only the :class:`~selector.models.Design`;
:func:`load_design_and_settings` returns both.
"""

from __future__ import annotations

import difflib
import json
import math
import tomllib
from collections.abc import Mapping
from dataclasses import fields, replace
from pathlib import Path
from typing import Any

import pandas as pd

from selector.errors import DesignError, Location, ProblemList, SelectorError
from selector.models import LOAD_KINDS, SIDES, Channel, Conditions, Design, Settings
from selector.units import to_si

__all__ = [
    "CHANNEL_FIELDS",
    "CONDITION_FIELDS",
    "SETTING_FIELDS",
    "design_from_table",
    "design_to_toml",
    "load_design",
    "load_design_and_settings",
]

#: Conditions fields: name -> (pint unit of a bare number, short description).
CONDITION_FIELDS: dict[str, tuple[str | None, str]] = {
    "ambient_min": ("degC", "°C, coldest air around the board"),
    "ambient_max": ("degC", "°C, hottest air around the board"),
    "junction_margin": ("K", "K kept below each part's tj_max"),
    "voltage_derating": ("", "apply at most this fraction of v_rating"),
    "airflow": ("m/s", "m/s over the heatsinks; 0 = natural convection"),
    "heatsink_derating": ("", "fraction added to every RθSA as a safety factor"),
    "max_parallel": (None, "most devices in parallel per channel"),
}

#: Channel fields: name -> (pint unit of a bare number or None for text/integers, description).
CHANNEL_FIELDS: dict[str, tuple[str | None, str]] = {
    "name": (None, "the channel's name, unique in the design"),
    "supply": ("V", "V, load supply"),
    "current": ("A", "A, on-state load current"),
    "peak_current": ("A", "A, start-up or inrush peak"),
    "peak_time": ("s", "s the peak lasts; 0 = a short pulse"),
    "on_time": ("s", "s on, then off_time s off, repeated; 0 = steady"),
    "off_time": ("s", "s off between on_time periods"),
    "load": (None, " | ".join(LOAD_KINDS)),
    "inductance": ("H", "H, for inductive and motor loads"),
    "duty": ("", "on-time fraction (0, 1]"),
    "pwm_frequency": ("Hz", "Hz; 0 = switched rarely"),
    "drive": ("V", "V, lowest gate-drive level the controller guarantees"),
    "side": (None, " | ".join(SIDES)),
    "quantity": (None, "identical copies of this channel"),
    "heatsink_group": (None, "channels naming the same group share one heatsink"),
}

_TEXT_FIELDS = ("name", "load", "side", "heatsink_group")
_INT_FIELDS = ("quantity", "max_parallel")

#: Settings fields: name -> pint unit of a bare number ("" = plain number).
SETTING_FIELDS: dict[str, str] = {
    "pin_resistance": "ohm",
    "gate_resistor_pin": "ohm",
    "driver_resistance": "ohm",
    "gate_resistor_driver": "ohm",
    "rg_int_default": "ohm",
    "rds_min_ratio": "",
    "parallel_switching_factor": "",
    "vgs_derating": "",
    "vth_tempco": "V/K",
    "avalanche_factor": "",
    "avalanche_acceptance": "",
    "diode_voltage_factor": "",
    "diode_current_derating": "",
    "overshoot_per_amp": "V/A",
    "igbt_kv": "",
    "igbt_ki": "",
    "igbt_tc": "1/K",
    "switching_loss_floor": "",
    "thermal_cap": "degC",
}
# Settings that may be zero or negative (a temperature coefficient, a cap in °C).
_SIGNED_SETTINGS = ("vth_tempco", "igbt_tc", "thermal_cap", "overshoot_per_amp")
# Settings that are fractions in (0, 1].
_FRACTION_SETTINGS = (
    "rds_min_ratio",
    "vgs_derating",
    "avalanche_acceptance",
    "diode_current_derating",
)

_TOP_LEVEL = ("conditions", "channel", "settings")


# ------------------------------------------------------------------------------ helpers
def _did_you_mean(key: str, valid: tuple[str, ...] | list[str]) -> str:
    close = difflib.get_close_matches(str(key).lower(), list(valid), n=1, cutoff=0.6)
    return f"; did you mean '{close[0]}'?" if close else ""


def _unit_label(unit: str | None) -> str:
    return {"degC": "°C", "ohm": "Ω", "": "a plain number"}.get(unit or "", unit or "")


def _convert(value: Any, unit: str, where: Location, problems: ProblemList):
    """One value to an SI float; a problem (and None) when it cannot be read."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return None
    try:
        out = to_si(value, unit)
    except SelectorError as exc:
        msg = exc.message.replace("this column needs", "this field needs")
        problems.add(where, msg)
        return None
    except Exception as exc:  # noqa: BLE001 - any pint failure is the user's value
        problems.add(where, f"{value!r} cannot be read as {_unit_label(unit)}: {exc}")
        return None
    if not math.isfinite(out):
        problems.add(where, f"{value!r} is not a finite number")
        return None
    return out


def _integer(value: Any, where: Location, problems: ProblemList) -> int | None:
    """A positive whole number (1, 2.0 or "3" are fine; 1.5, 0, -1, "two" are not)."""
    if isinstance(value, bool):
        problems.add(where, f"must be a positive whole number; got {value!r}")
        return None
    v: Any = value
    if isinstance(v, str):
        try:
            v = float(v.strip())
        except ValueError:
            problems.add(where, f"must be a positive whole number; got {value!r}")
            return None
    if not isinstance(v, int | float) or not math.isfinite(v) or v != int(v) or v < 1:
        problems.add(where, f"must be a positive whole number; got {value!r}")
        return None
    return int(v)


def _text(value: Any, where: Location, problems: ProblemList) -> str | None:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return None
    if not isinstance(value, str):
        problems.add(where, f"must be text; got {value!r}")
        return None
    return value.strip()


def _fmt(x: float) -> str:
    return f"{x:g}"


# ------------------------------------------------------------------------------ parsing
def _parse_conditions(raw: Any, problems: ProblemList) -> Conditions:
    if raw is None:
        return Conditions()
    if not isinstance(raw, Mapping):
        problems.add(Location(field="conditions"), "[conditions] must be a table")
        return Conditions()
    values: dict[str, Any] = {}
    for key, value in raw.items():
        where = Location(field=f"conditions.{key}")
        if key not in CONDITION_FIELDS:
            problems.add(
                where,
                f"unknown key '{key}' in [conditions]"
                + _did_you_mean(key, tuple(CONDITION_FIELDS)),
            )
            continue
        if key in _INT_FIELDS:
            v = _integer(value, where, problems)
        else:
            v = _convert(value, CONDITION_FIELDS[key][0] or "", where, problems)
        if v is not None:
            values[key] = v
    cond = replace(Conditions(), **values)
    _check_conditions(cond, problems)
    return cond


def _check_conditions(c: Conditions, problems: ProblemList) -> None:
    def bad(field: str, msg: str) -> None:
        problems.add(Location(field=f"conditions.{field}"), msg)

    if c.ambient_min > c.ambient_max:
        bad(
            "ambient_min",
            f"ambient_min {_fmt(c.ambient_min)} °C is above ambient_max "
            f"{_fmt(c.ambient_max)} °C",
        )
    if not -80.0 <= c.ambient_max <= 200.0:
        bad("ambient_max", f"{_fmt(c.ambient_max)} °C is outside −80…200 °C")
    if not -80.0 <= c.ambient_min <= 200.0:
        bad("ambient_min", f"{_fmt(c.ambient_min)} °C is outside −80…200 °C")
    if c.junction_margin < 0:
        bad("junction_margin", f"must be 0 K or more; got {_fmt(c.junction_margin)} K")
    if not 0 < c.voltage_derating <= 1:
        bad(
            "voltage_derating",
            f"must be a fraction in (0, 1]; got {_fmt(c.voltage_derating)}",
        )
    if c.airflow < 0:
        bad("airflow", f"must be 0 m/s or more; got {_fmt(c.airflow)} m/s")
    if c.heatsink_derating < 0:
        bad(
            "heatsink_derating",
            f"must be 0 or more (a fraction added to RθSA); got "
            f"{_fmt(c.heatsink_derating)}",
        )


def _parse_channel(
    raw: Any, index: int, problems: ProblemList, row: int | None = None
) -> Channel | None:
    """One channel from a mapping; None when it cannot be built (problems recorded)."""
    label = f"#{index + 1}"
    if not isinstance(raw, Mapping):
        problems.add(
            Location(row=row, channel=label), "each [[channel]] must be a table"
        )
        return None
    name_raw = raw.get("name")
    name = name_raw.strip() if isinstance(name_raw, str) else None
    ch_label = name if name else label

    def where(field: str) -> Location:
        return Location(row=row, channel=ch_label, field=field)

    if not name:
        if name_raw is None or (isinstance(name_raw, float) and math.isnan(name_raw)):
            problems.add(where("name"), "every channel needs a name")
        elif isinstance(name_raw, str):
            problems.add(where("name"), "the name is blank")
        else:
            problems.add(where("name"), f"the name must be text; got {name_raw!r}")
    values: dict[str, Any] = {}
    for key, value in raw.items():
        if key == "name":
            continue
        if key not in CHANNEL_FIELDS:
            problems.add(
                where(str(key)),
                f"unknown key '{key}'" + _did_you_mean(key, tuple(CHANNEL_FIELDS)),
            )
            continue
        if key in _TEXT_FIELDS:
            v = _text(value, where(key), problems)
        elif key in _INT_FIELDS:
            if value is None or (isinstance(value, float) and math.isnan(value)):
                continue
            v = _integer(value, where(key), problems)
        else:
            v = _convert(value, CHANNEL_FIELDS[key][0] or "", where(key), problems)
        if v is not None:
            values[key] = v
    given = set(values)
    for req in ("supply", "current"):
        if req not in raw:
            problems.add(where(req), f"missing: every channel needs '{req}'")
        values.setdefault(req, 0.0)  # placeholder; the problem is already recorded
    if "load" in values:
        values["load"] = values["load"].lower()
    if "side" in values:
        values["side"] = values["side"].lower()
    ch = Channel(name=name or label, **values)
    _check_channel(ch, given, where, problems)
    return ch


def _check_channel(ch: Channel, given: set[str], where, problems: ProblemList) -> None:
    def bad(field: str, msg: str) -> None:
        problems.add(where(field), msg)

    if "supply" in given and ch.supply <= 0:
        bad("supply", f"must be above 0 V; got {_fmt(ch.supply)} V")
    if "current" in given and ch.current <= 0:
        bad("current", f"must be above 0 A; got {_fmt(ch.current)} A")
    if ch.peak_current < 0:
        bad("peak_current", f"must be 0 A or more; got {_fmt(ch.peak_current)} A")
    elif 0 < ch.peak_current < ch.current:
        bad(
            "peak_current",
            f"{_fmt(ch.peak_current)} A is below the on-state current "
            f"{_fmt(ch.current)} A (leave it 0 when there is no peak)",
        )
    for f, unit in (
        ("peak_time", "s"),
        ("on_time", "s"),
        ("off_time", "s"),
        ("pwm_frequency", "Hz"),
        ("inductance", "H"),
    ):
        if getattr(ch, f) < 0:
            bad(f, f"must be 0 {unit} or more; got {_fmt(getattr(ch, f))} {unit}")
    if not 0 < ch.duty <= 1:
        bad("duty", f"must be in (0, 1]; got {_fmt(ch.duty)}")
    if ch.drive <= 0:
        bad("drive", f"must be above 0 V; got {_fmt(ch.drive)} V")
    if ch.load not in LOAD_KINDS:
        bad(
            "load",
            f"unknown load kind '{ch.load}'; valid kinds: {', '.join(LOAD_KINDS)}"
            + _did_you_mean(ch.load, LOAD_KINDS),
        )
    elif ch.needs_freewheel and ch.inductance <= 0:
        bad(
            "inductance",
            f"a {ch.load} load needs its inductance (H) for the turn-off energy "
            "and the freewheel diode; got none",
        )
    if ch.side not in SIDES:
        bad(
            "side",
            f"unknown side '{ch.side}'; valid sides: {', '.join(SIDES)}"
            + _did_you_mean(ch.side, SIDES),
        )


def _parse_settings(raw: Any, problems: ProblemList) -> Settings:
    if raw is None:
        return Settings()
    if not isinstance(raw, Mapping):
        problems.add(Location(field="settings"), "[settings] must be a table")
        return Settings()
    values: dict[str, float] = {}
    for key, value in raw.items():
        where = Location(field=f"settings.{key}")
        if key not in SETTING_FIELDS:
            problems.add(
                where,
                f"unknown key '{key}' in [settings]"
                + _did_you_mean(key, tuple(SETTING_FIELDS)),
            )
            continue
        v = _convert(value, SETTING_FIELDS[key], where, problems)
        if v is None:
            continue
        if key in _FRACTION_SETTINGS and not 0 < v <= 1:
            problems.add(where, f"must be a fraction in (0, 1]; got {_fmt(v)}")
            continue
        if key not in _SIGNED_SETTINGS and v <= 0:
            problems.add(where, f"must be above 0; got {_fmt(v)}")
            continue
        values[key] = v
    return replace(Settings(), **values)


def _is_path(text: str) -> bool:
    """A one-line string naming a file (TOML text always has '=' or '[')."""
    if "\n" in text:
        return False
    if text.strip().lower().endswith(".toml") or not any(c in text for c in "=["):
        return True
    try:
        return Path(text).is_file()
    except (OSError, ValueError):
        return False


def _read_source(source: Any) -> tuple[dict[str, Any], str]:
    """(raw mapping, source name for messages) from a path, TOML text or a dict."""
    if isinstance(source, Mapping):
        return dict(source), ""
    if isinstance(source, bytes):
        source = source.decode("utf-8")
    if isinstance(source, Path) or (isinstance(source, str) and _is_path(source)):
        path = Path(source)
        try:
            text = path.read_text(encoding="utf-8")
        except FileNotFoundError:
            raise DesignError(
                "design file not found", Location(file=str(path))
            ) from None
        except UnicodeDecodeError:
            raise DesignError(
                "the design file is not UTF-8 text (TOML)", Location(file=str(path))
            ) from None
        except OSError as exc:
            raise DesignError(
                f"cannot read the design file: {exc.strerror or exc}",
                Location(file=str(path)),
            ) from None
        return _parse_toml(text, str(path)), str(path)
    if isinstance(source, str):
        return _parse_toml(source, ""), ""
    raise DesignError(
        f"a design is a TOML file, TOML text or a dict; got {type(source).__name__}"
    )


def _parse_toml(text: str, name: str) -> dict[str, Any]:
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(
            f"not valid TOML: {exc}", Location(file=name or None)
        ) from None


def _raise(problems: ProblemList, source: str) -> None:
    n = len(problems.items)
    lines = []
    for loc, msg in problems.items:
        where = loc.describe()
        lines.append(f"  - {where}: {msg}" if where else f"  - {msg}")
    head = "1 problem in the design" if n == 1 else f"{n} problems in the design"
    raise DesignError(
        head + ":\n" + "\n".join(lines),
        Location(file=source or None),
        problems=problems.items,
    )


def _build(
    raw: Mapping[str, Any], source: str, problems: ProblemList
) -> tuple[Design, Settings]:
    for key in raw:
        if key not in _TOP_LEVEL:
            problems.add(
                Location(field=str(key)),
                f"unknown table or key '{key}' (a design has [conditions], "
                "[[channel]] and an optional [settings])"
                + _did_you_mean(key, _TOP_LEVEL),
            )
    conditions = _parse_conditions(raw.get("conditions"), problems)
    settings = _parse_settings(raw.get("settings"), problems)
    chans_raw = raw.get("channel")
    channels: list[Channel] = []
    if chans_raw is None or (isinstance(chans_raw, list) and not chans_raw):
        problems.add(Location(field="channel"), "the design has no [[channel]]")
    elif not isinstance(chans_raw, list):
        problems.add(
            Location(field="channel"), "channels are an array of tables: [[channel]]"
        )
    else:
        for i, c in enumerate(chans_raw):
            ch = _parse_channel(c, i, problems)
            if ch is not None:
                channels.append(ch)
    _check_names(channels, problems)
    return Design(conditions, tuple(channels), source), settings


def _check_names(channels: list[Channel], problems: ProblemList) -> None:
    seen: dict[str, int] = {}
    for ch in channels:
        seen[ch.name] = seen.get(ch.name, 0) + 1
    for name, n in seen.items():
        if n > 1:
            problems.add(
                Location(channel=name, field="name"),
                f"{n} channels are named '{name}'; names must be unique",
            )


# ------------------------------------------------------------------------------ public
def load_design_and_settings(source: Any) -> tuple[Design, Settings]:
    """Read a design and its optional ``[settings]`` table.

    Parameters
    ----------
    source : a path (``str`` without newlines or ``Path``), TOML text, bytes, or a dict
        with the same structure (``conditions``, ``channel`` list, optional ``settings``).

    Returns
    -------
    (Design, Settings) : the design (``source`` names the file) and the engineering
    settings with the file's overrides applied (defaults where not given).

    Raises
    ------
    DesignError
        One error listing every problem found (each naming channel and field).
    """
    raw, name = _read_source(source)
    problems = ProblemList()
    design, settings = _build(raw, name, problems)
    if problems:
        _raise(problems, name)
    return design, settings


def load_design(source: Any) -> Design:
    """Read and check a design (see :func:`load_design_and_settings`).

    The ``[settings]`` table, if any, is validated but not returned; use
    :func:`load_design_and_settings` to get it.
    """
    return load_design_and_settings(source)[0]


def _toml_value(v: Any) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    # JSON string escapes are valid TOML basic-string escapes; TOML also forbids DEL
    return json.dumps(str(v), ensure_ascii=False).replace("\x7f", "\\u007f")


def design_to_toml(design: Design, settings: Settings | None = None) -> str:
    """The design as TOML text that :func:`load_design` reads back to an equal Design.

    Values are written as SI numbers with their unit in a comment; ``settings`` (if
    given) are written as a ``[settings]`` table holding only the fields that differ from
    the defaults.
    """
    out = ["[conditions]"]
    c = design.conditions
    for f in fields(Conditions):
        v = getattr(c, f.name)
        out.append(f"{f.name} = {_toml_value(v)}  # {CONDITION_FIELDS[f.name][1]}")
    for ch in design.channels:
        out.append("")
        out.append("[[channel]]")
        for f in fields(Channel):
            v = getattr(ch, f.name)
            out.append(f"{f.name} = {_toml_value(v)}  # {CHANNEL_FIELDS[f.name][1]}")
    if settings is not None:
        default = Settings()
        diff = [
            f.name
            for f in fields(Settings)
            if getattr(settings, f.name) != getattr(default, f.name)
        ]
        if diff:
            out.append("")
            out.append("[settings]")
            for name in diff:
                out.append(f"{name} = {_toml_value(getattr(settings, name))}")
    return "\n".join(out) + "\n"


def _blank(v: Any) -> bool:
    if v is None:
        return True
    if isinstance(v, float) and math.isnan(v):
        return True
    if isinstance(v, str) and not v.strip():
        return True
    try:
        return bool(pd.isna(v))
    except (TypeError, ValueError):
        return False


def design_from_table(conditions: Conditions, channels: pd.DataFrame) -> Design:
    """A design from the page's editable channel table (one row per channel, SI values).

    Blank cells take the field's default; completely blank rows (a row just added in the
    editor) are skipped. Problems name the table row (1 = first channel row), the channel
    and the field, and are raised together as one :class:`DesignError`.
    """
    problems = ProblemList()
    _check_conditions(conditions, problems)
    chans: list[Channel] = []
    records = channels.to_dict(orient="records") if len(channels) else []
    for i, rec in enumerate(records):
        clean = {}
        for k, v in rec.items():
            if _blank(v):
                continue
            if hasattr(v, "item") and not isinstance(v, str):
                v = v.item()  # numpy scalar -> Python
            clean[str(k)] = v
        if not clean:
            continue
        ch = _parse_channel(clean, i, problems, row=i + 1)
        if ch is not None:
            chans.append(ch)
    if not chans and not problems:
        problems.add(Location(field="channel"), "the design has no channel")
    _check_names(chans, problems)
    if problems:
        _raise(problems, "")
    return Design(conditions, tuple(chans), "")
