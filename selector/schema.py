"""The inventory column table: one read-only, declarative schema per inventory table.

Each table (``switches``, ``heatsinks``, ``interfaces``, ``diodes``, ``drivers``) lists its
columns with

* ``name``: the internal column name (the inventory contract of the design overview);
* ``aliases``: other header spellings accepted (matched after :func:`fold_header`);
* ``unit``: the unit a bare number is read in when the header carries none (a pint string);
* ``si_unit``: the unit the value is stored in (SI; °C for temperatures, K for temperature
  differences);
* ``dtype``: ``float``, ``int``, ``str``, ``bool`` or ``list``;
* ``required``: ``True`` (always), a tuple of kinds it is required for, or ``False``;
* ``default`` and ``default_reason``: what a blank cell becomes (listed as assumed);
  a default may also be a *rule* (see :class:`DefaultRule`) that depends on other columns;
* ``plausible``: ``(low, high)`` in ``si_unit``; outside gives a warning, not a rejection;
* ``sign``: ``"positive"`` (> 0) or ``"nonnegative"`` (>= 0), else no sign rule;
* ``magnitude``: take the absolute value (P-channel ratings are often written negative);
* ``description``: one line with the unit, used for the template's header comments.

Pattern columns (``rds_on@VGS``, ``rth_sa@AIRFLOW``) carry a parameter in the header; they
are described by :class:`PatternSpec`.

Nothing here reads files; :mod:`selector.inventory` applies the table.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

import numpy as np
import pandas as pd

__all__ = [
    "BIPOLAR_KIND_WORDS",
    "ColumnSpec",
    "DefaultRule",
    "PatternSpec",
    "RTH_JA_BY_PACKAGE",
    "TABLES",
    "TABLE_ORDER",
    "TableSchema",
    "describe_column",
    "fold_header",
    "normalise_bool",
    "normalise_driver_kind",
    "normalise_package",
    "normalise_switch_kind",
    "normalise_tab",
    "table_for_name",
]

# --------------------------------------------------------------------------- folding


_FOLD_RE = re.compile(r"[\s\-_()]+")


def fold_header(text: str) -> str:
    """Fold a header for matching: lower case, without spaces, dashes, underscores, parens.

    >>> fold_header(" Rds(on) @ 4.5 V ")
    'rdson@4.5v'
    >>> fold_header("RTH_JC")
    'rthjc'
    """
    return _FOLD_RE.sub("", str(text).strip().lower().replace("θ", "th"))


# --------------------------------------------------------------------------- specs


@dataclass(frozen=True)
class DefaultRule:
    """A default that depends on other columns of the same row.

    ``compute(frame)`` receives the table's DataFrame (SI values, normalised text) and
    returns a Series aligned with it: the default per row, or NaN/None where no default
    applies. ``reason(value)`` gives the reason text for one filled value.
    ``reads`` names every column ``compute`` looks at (None: not declared); a rule that
    reads only ``kind``/``package`` can then be computed once per distinct pair.
    """

    compute: Callable[[pd.DataFrame], pd.Series]
    reason: Callable[[Any, pd.Series], str]
    summary: str  # one line for the template and the docs
    reads: tuple[str, ...] | None = None


@dataclass(frozen=True)
class ColumnSpec:
    """One inventory column (see the module docstring for the fields)."""

    name: str
    dtype: str = "float"
    unit: str | None = None
    si_unit: str | None = None
    aliases: tuple[str, ...] = ()
    required: bool | tuple[str, ...] = False
    default: Any = None
    default_reason: str | None = None
    plausible: tuple[float | None, float | None] | None = None
    sign: str | None = None
    magnitude: bool = False
    description: str = ""

    @property
    def is_quantity(self) -> bool:
        """True for numeric columns that go through unit conversion."""
        return self.dtype in ("float", "int")

    def required_for(self, kind: str | None) -> bool:
        """Whether a row of this kind must give this column."""
        if self.required is True:
            return True
        if not self.required:
            return False
        return kind in self.required


@dataclass(frozen=True)
class PatternSpec:
    """A family of columns with a parameter in the header, e.g. ``rds_on@4.5V``.

    ``prefixes`` are folded header stems (before the ``@``); the parameter after ``@`` is a
    quantity in ``param_unit`` (bare numbers) converted to ``param_si``. ``required`` is a
    tuple of kinds that need at least one such value.
    """

    name: str
    prefixes: tuple[str, ...]
    param: str
    param_unit: str
    param_si: str
    unit: str
    si_unit: str
    required: tuple[str, ...] = ()
    plausible: tuple[float | None, float | None] | None = None
    param_plausible: tuple[float | None, float | None] | None = None
    description: str = ""
    example: str = ""


@dataclass(frozen=True)
class TableSchema:
    """The columns of one inventory table.

    ``one_of`` lists alternative groups of columns of which at least one group must be
    complete on every row (heatsinks: ``rth_sa``, or the fin geometry).
    """

    name: str
    aliases: tuple[str, ...]
    columns: tuple[ColumnSpec, ...]
    patterns: tuple[PatternSpec, ...] = ()
    one_of: tuple[tuple[str, ...], ...] = ()
    one_of_reason: str = ""
    kind_column: str | None = None
    kinds: tuple[str, ...] = ()
    required_table: bool = False
    description: str = ""
    column_map: Mapping[str, ColumnSpec] = field(init=False, repr=False, compare=False)
    alias_map: Mapping[str, str] = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        cmap = {c.name: c for c in self.columns}
        amap: dict[str, str] = {}
        for c in self.columns:
            for a in (c.name, *c.aliases):
                key = fold_header(a)
                if key in amap and amap[key] != c.name:  # pragma: no cover - schema bug
                    raise ValueError(f"alias {a!r} used twice in table {self.name}")
                amap[key] = c.name
        object.__setattr__(self, "column_map", MappingProxyType(cmap))
        object.__setattr__(self, "alias_map", MappingProxyType(amap))

    @property
    def column_names(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.columns)

    def always_required(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.columns if c.required is True)


# --------------------------------------------------------------------------- value vocab

#: Switch kinds the tool works with.
SWITCH_KINDS = ("nmos", "pmos", "igbt")
#: Gate-driver kinds.
DRIVER_KINDS = ("low_side", "high_side", "isolated")
#: What a mounting tab may be tied to.
TABS = ("drain", "collector", "source", "isolated")

#: Folded words that mean a bipolar transistor (rejected as out of scope).
BIPOLAR_KIND_WORDS = (
    "bjt",
    "npn",
    "pnp",
    "bipolar",
    "darlington",
    "npntransistor",
    "pnptransistor",
    "bipolartransistor",
    "npndarlington",
    "pnpdarlington",
    "darlingtontransistor",
)

_NMOS_RE = re.compile(
    r"^(?:n|nch|nchannel|nkanal)(?:e?mos|mosfet|fet|enhancement|mosfetenhancement)?$"
    r"|^(?:mosfet|mos|fet)(?:n|nch|nchannel)$|^nmos(?:fet)?$|^nfet$"
)
_PMOS_RE = re.compile(
    r"^(?:p|pch|pchannel|pkanal)(?:e?mos|mosfet|fet|enhancement|mosfetenhancement)?$"
    r"|^(?:mosfet|mos|fet)(?:p|pch|pchannel)$|^pmos(?:fet)?$|^pfet$"
)
_IGBT_RE = re.compile(r"^(?:n|nch|nchannel)?igbt(?:n|nch|nchannel|transistor)?$")
_KIND_FOLD_RE = re.compile(r"[\s\-_/.,()]+")


def normalise_switch_kind(text: Any) -> tuple[str | None, str | None]:
    """Map a switch-kind spelling to ``nmos``/``pmos``/``igbt``.

    Returns ``(kind, None)`` or ``(None, reason)``. Bipolar transistors are recognised and
    refused as out of scope.

    >>> normalise_switch_kind("N-ch MOSFET")
    ('nmos', None)
    >>> normalise_switch_kind("NPN")[0] is None
    True
    """
    if text is None or (isinstance(text, float) and np.isnan(text)):
        return None, "missing kind"
    raw = str(text).strip()
    f = _KIND_FOLD_RE.sub("", raw.lower())
    if not f:
        return None, "missing kind"
    if _NMOS_RE.match(f):
        return "nmos", None
    if _PMOS_RE.match(f):
        return "pmos", None
    if _IGBT_RE.match(f):
        return "igbt", None
    if (
        f in BIPOLAR_KIND_WORDS
        or "darlington" in f
        or re.search(r"(^|[^a-z])(npn|pnp|bjt)", raw.lower())
    ):
        return None, (
            f"bipolar transistor kind '{raw}' is out of scope: this tool selects MOSFETs "
            "and IGBTs only (use nmos, pmos or igbt)"
        )
    if f in ("mosfet", "mos", "fet"):
        return None, f"kind '{raw}' does not say N- or P-channel (use nmos or pmos)"
    return None, f"unknown kind '{raw}' (use nmos, pmos or igbt)"


def normalise_driver_kind(text: Any) -> tuple[str | None, str | None]:
    """Map a driver-kind spelling to ``low_side``/``high_side``/``isolated``.

    >>> normalise_driver_kind("High-side")
    ('high_side', None)
    """
    if text is None or (isinstance(text, float) and np.isnan(text)):
        return None, "missing kind"
    raw = str(text).strip()
    f = _KIND_FOLD_RE.sub("", raw.lower())
    if f in ("lowside", "low", "ls", "lowsidedriver", "lowsidegatedriver"):
        return "low_side", None
    if f in (
        "highside",
        "high",
        "hs",
        "highsidedriver",
        "highsidegatedriver",
        "bootstrap",
        "bootstrapped",
    ):
        return "high_side", None
    if f in (
        "isolated",
        "iso",
        "galvanic",
        "isolateddriver",
        "isolatedgatedriver",
        "galvanicallyisolated",
    ):
        return "isolated", None
    return None, f"unknown driver kind '{raw}' (use low_side, high_side or isolated)"


_PACKAGE_FOLD_RE = re.compile(r"[\s\-_/.]+")
_PACKAGES: tuple[tuple[re.Pattern[str], str], ...] = (
    (re.compile(r"^TO220(?:F|FP|FULLPAK|FULLPACK|ISO|IS)$"), "TO-220F"),
    (re.compile(r"^TO220(?:AB|3|3L)?$"), "TO-220"),
    (re.compile(r"^TO247(?:AC|AD|3|3L|4|4L)?$"), "TO-247"),
    (re.compile(r"^TO3P(?:N|3)?$"), "TO-3P"),
    (re.compile(r"^(?:D2PAK|D²PAK|DDPAK|TO263(?:AB|3)?|D2PAK(?:3|2))$"), "D2PAK"),
    (re.compile(r"^(?:DPAK|TO252(?:AA|3)?|DPAK3)$"), "DPAK"),
    (re.compile(r"^(?:SO8|SOIC8|SOP8|SO8FL|SOIC)$"), "SO-8"),
    (re.compile(r"^(?:TO92)$"), "TO-92"),
    (re.compile(r"^(?:SOT23(?:3)?)$"), "SOT-23"),
    (re.compile(r"^(?:SOT223)$"), "SOT-223"),
    (re.compile(r"^(?:IPAK|TO251)$"), "IPAK"),
    (re.compile(r"^(?:DO41)$"), "DO-41"),
    (re.compile(r"^(?:DO201(?:AD)?)$"), "DO-201"),
    (re.compile(r"^(?:SMA|DO214AC)$"), "SMA"),
    (re.compile(r"^(?:SMB|DO214AA)$"), "SMB"),
    (re.compile(r"^(?:SMC|DO214AB)$"), "SMC"),
)

#: Packages the schema knows (normalised names).
KNOWN_PACKAGES = tuple(dict.fromkeys(p for _, p in _PACKAGES))


def normalise_package(text: Any) -> str | None:
    """Normalise a package name (``TO220`` → ``TO-220``, ``TO-263`` → ``D2PAK``, ...).

    Unknown packages are returned as written (stripped); blank gives ``None``.

    >>> normalise_package("to220"), normalise_package("D²PAK"), normalise_package("SOIC-8")
    ('TO-220', 'D2PAK', 'SO-8')
    """
    if text is None or (isinstance(text, float) and np.isnan(text)):
        return None
    raw = str(text).strip()
    if not raw:
        return None
    f = _PACKAGE_FOLD_RE.sub("", raw.upper()).replace("²", "2")
    for pattern, name in _PACKAGES:
        if pattern.match(f):
            return name
    return raw


def normalise_tab(text: Any, kind: str | None = None) -> tuple[str | None, str | None]:
    """Map a tab spelling to drain/collector/source/isolated (drain↔collector by kind).

    >>> normalise_tab("D", "nmos"), normalise_tab("drain", "igbt")
    (('drain', None), ('collector', None))
    """
    if text is None or (isinstance(text, float) and np.isnan(text)):
        return None, None
    raw = str(text).strip()
    f = _KIND_FOLD_RE.sub("", raw.lower())
    if not f:
        return None, None
    if f in ("drain", "d", "collector", "c"):
        out = "collector" if kind == "igbt" else "drain"
    elif f in ("source", "s", "emitter", "e"):
        out = "source"
    elif f in (
        "isolated",
        "iso",
        "insulated",
        "none",
        "no",
        "notab",
        "isolatedtab",
        "floating",
        "nc",
        "fullpak",
        "fullpack",
    ):
        out = "isolated"
    else:
        return (
            None,
            f"unknown tab connection '{raw}' (use drain, collector, source or isolated)",
        )
    return out, None


_TRUE_WORDS = frozenset(
    {
        "yes",
        "y",
        "true",
        "t",
        "1",
        "1.0",
        "x",
        "ja",
        "oui",
        "si",
        "insulating",
        "insulated",
        "isolating",
    }
)
_FALSE_WORDS = frozenset(
    {"no", "n", "false", "f", "0", "0.0", "nein", "non", "conductive", "notinsulating"}
)


def normalise_bool(value: Any) -> tuple[bool | None, str | None]:
    """Read yes/no, true/false, 1/0, x (ticked) as a bool.

    >>> normalise_bool("Yes"), normalise_bool(0)
    ((True, None), (False, None))
    """
    if value is None or (isinstance(value, float) and np.isnan(value)):
        return None, None
    if isinstance(value, bool | np.bool_):
        return bool(value), None
    f = _KIND_FOLD_RE.sub("", str(value).strip().lower())
    if not f:
        return None, None
    if f in _TRUE_WORDS:
        return True, None
    if f in _FALSE_WORDS:
        return False, None
    return None, f"'{value}' is not yes or no"


# --------------------------------------------------------------------------- rule defaults

#: Junction-to-ambient thermal resistance [K/W] per package, device alone in still air
#: (through-hole upright; SMD on about 1 in² (6.45 cm²) of 2 oz copper).
#: TO-220 62, TO-247 40, D2PAK 40: physics.md §5.1 (from memory there, [c]).
#: DPAK 50 and SO-8 80: from memory (typical datasheet values on 1 in² copper, steady
#: state); TO-3P 40 as TO-247, TO-220F 65 and IPAK 100 from memory.
RTH_JA_BY_PACKAGE: Mapping[str, float] = MappingProxyType(
    {
        "TO-220": 62.0,
        "TO-220F": 65.0,
        "TO-247": 40.0,
        "TO-3P": 40.0,
        "D2PAK": 40.0,
        "DPAK": 50.0,
        "SO-8": 80.0,
        "IPAK": 100.0,
    }
)

#: Packages whose tab (or exposed pad) is the drain (MOSFET) or collector (IGBT):
#: physics.md §7.3 for TO-220, TO-247, D2PAK; DPAK, IPAK, TO-3P and the SO-8 drain pins by
#: the same common practice. TO-220F (fully moulded) has an isolated tab (common practice).
_TAB_DRAIN_PACKAGES = ("TO-220", "TO-247", "TO-3P", "D2PAK", "DPAK", "IPAK", "SO-8")
_TAB_ISOLATED_PACKAGES = ("TO-220F",)


def _col(df: pd.DataFrame, name: str, blank: Any) -> pd.Series:
    """``df[name]``, or a column of ``blank`` (None: object, NaN: float) without it."""
    if name in df:
        return df[name]
    if blank is None:
        return pd.Series(None, index=df.index, dtype=object)
    return pd.Series(np.nan, index=df.index)


def _in(s: pd.Series, values: tuple[str, ...]) -> np.ndarray:
    """``s.isin(values)`` as a bool array; a categorical is tested on its categories."""
    if isinstance(s.dtype, pd.CategoricalDtype):
        lut = np.append(np.asarray(s.cat.categories.isin(values), dtype=bool), False)
        return lut[s.cat.codes.to_numpy()]
    return s.isin(values).to_numpy(dtype=bool)


def _default_tab(df: pd.DataFrame) -> pd.Series:
    pkg = _col(df, "package", None)
    kind = _col(df, "kind", None)
    out = np.full(len(df.index), None, dtype=object)
    drain = _in(pkg, _TAB_DRAIN_PACKAGES)
    out[drain & _in(kind, ("igbt",))] = "collector"
    out[drain & _in(kind, ("nmos", "pmos"))] = "drain"
    out[_in(pkg, _TAB_ISOLATED_PACKAGES)] = "isolated"
    return pd.Series(out, index=df.index, dtype=object, copy=False)


def _reason_tab(value: Any, row: pd.Series) -> str:
    if value == "isolated":
        return f"{row.get('package')} is a fully moulded package with an isolated tab (common practice)"
    pkg = row.get("package")
    src = (
        "physics.md §7.3, common practice"
        if pkg in ("TO-220", "TO-247", "D2PAK")
        else "common practice"
    )
    what = "drain pins and pad are" if pkg == "SO-8" else "tab is"
    return f"{pkg} {what} tied to the {value} ({src}); treated as live when mounted"


def _default_vgs_max(df: pd.DataFrame) -> pd.Series:
    lowest = _col(df, "_rds_lowest_vgs", np.nan)
    kind = _col(df, "kind", None)
    low = lowest.to_numpy(dtype=float)
    out = np.full(len(df.index), np.nan)
    mos = _in(kind, ("nmos", "pmos"))
    with np.errstate(invalid="ignore"):
        out[mos & (low >= 10.0 - 1e-9)] = 20.0
        out[mos & (low < 10.0 - 1e-9)] = 12.0
    out[_in(kind, ("igbt",))] = 20.0
    return pd.Series(out, index=df.index, dtype=float, copy=False)


def _reason_vgs_max(value: Any, row: pd.Series) -> str:
    if row.get("kind") == "igbt":
        return "±20 V gate-emitter maximum is usual for IGBTs (common practice)"
    if value >= 20.0:
        return (
            "lowest Rds(on) point is at 10 V or more: standard-level gate, ±20 V usual "
            "(physics.md §9, common practice)"
        )
    return (
        "Rds(on) given below 10 V: logic-level gate, ±12 V taken as a conservative "
        "maximum (physics.md §9: ±8…±12 V common, common practice)"
    )


def _default_rds_hot_ratio(df: pd.DataFrame) -> pd.Series:
    v = _col(df, "v_rating", np.nan).to_numpy(dtype=float)
    kind = _col(df, "kind", None)
    mos = _in(kind, ("nmos", "pmos")) & ~np.isnan(v)
    out = np.full(len(df.index), np.nan)
    with np.errstate(invalid="ignore"):
        out[mos & (v <= 100.0)] = 1.8
        out[mos & (v > 100.0)] = 2.2
    return pd.Series(out, index=df.index, dtype=float, copy=False)


def _reason_rds_hot_ratio(value: Any, row: pd.Series) -> str:
    if value <= 1.8:
        return (
            "linear model M1 with 0.8 %/K for parts rated ≤ 100 V: "
            "Rds(125 °C)/Rds(25 °C) = 1 + 0.008·100 = 1.8 (physics.md §1.2 proposed default)"
        )
    return (
        "linear model M1 with 1.2 %/K for parts rated above 100 V: "
        "Rds(125 °C)/Rds(25 °C) = 1 + 0.012·100 = 2.2 (physics.md §1.2 proposed default)"
    )


def _default_rth_ja(df: pd.DataFrame) -> pd.Series:
    pkg = _col(df, "package", None)
    if isinstance(pkg.dtype, pd.CategoricalDtype):
        codes, uniq = pkg.cat.codes.to_numpy(), pkg.cat.categories
    else:
        codes, uniq = pd.factorize(pkg.astype(object))
    lut = np.array(
        [RTH_JA_BY_PACKAGE.get(u, np.nan) for u in uniq] + [np.nan], dtype=float
    )
    return pd.Series(lut[codes], index=df.index, copy=False)


def _reason_rth_ja(value: Any, row: pd.Series) -> str:
    pkg = row.get("package")
    if pkg in ("TO-220", "TO-247", "D2PAK"):
        src = "physics.md §5.1 typical free-standing value"
    else:
        src = "typical datasheet value, from memory"
    where = (
        "on about 1 in² of 2 oz copper"
        if pkg in ("D2PAK", "DPAK", "SO-8")
        else "upright in still air"
    )
    return f"{pkg} alone {where}: {value:g} K/W ({src})"


def _default_vce_sat_vge(df: pd.DataFrame) -> pd.Series:
    kind = _col(df, "kind", None)
    out = np.full(len(df.index), np.nan)
    out[_in(kind, ("igbt",))] = 15.0
    return pd.Series(out, index=df.index, dtype=float, copy=False)


def _default_rth_sa_rise(df: pd.DataFrame) -> pd.Series:
    r = _col(df, "rth_sa", np.nan)
    out = np.full(len(df.index), np.nan)
    out[r.notna().to_numpy(dtype=bool)] = 75.0
    return pd.Series(out, index=df.index, dtype=float, copy=False)


# --------------------------------------------------------------------------- tables

_PART = ColumnSpec(
    "part",
    "str",
    aliases=(
        "part id",
        "part_id",
        "id",
        "part number",
        "part no",
        "partno",
        "item",
        "ref",
        "name",
    ),
    required=True,
    description="your own part id, unique in the table (text)",
)
_PRICE = ColumnSpec(
    "price",
    "float",
    unit="",
    si_unit="",
    aliases=("unit price", "cost", "price each", "unit cost"),
    required=True,
    sign="nonnegative",
    plausible=(0.0, 10_000.0),
    description="unit price, one currency for the whole inventory (number)",
)
_STOCK = ColumnSpec(
    "stock",
    "int",
    unit="",
    si_unit="",
    aliases=("qty", "quantity", "on hand", "in stock", "count", "units"),
    sign="nonnegative",
    plausible=(0.0, 1e7),
    description="units on hand (count); blank means no limit",
)
_NOTES = (
    ColumnSpec(
        "manufacturer",
        "str",
        aliases=("maker", "vendor", "mfr", "brand"),
        description="maker, carried to the bill of materials (text)",
    ),
    ColumnSpec(
        "mpn",
        "str",
        aliases=("maker part number", "manufacturer part number", "order code"),
        description="maker's part number, carried to the bill of materials (text)",
    ),
    ColumnSpec(
        "notes",
        "str",
        aliases=("note", "comment", "comments", "remarks"),
        description="free text, carried to the bill of materials",
    ),
)


def _zth_columns() -> tuple[ColumnSpec, ...]:
    cols: list[ColumnSpec] = []
    for i in range(1, 6):
        cols.append(
            ColumnSpec(
                f"zth_r{i}",
                unit="K/W",
                si_unit="K/W",
                aliases=(f"r{i}", f"zth r{i}", f"foster r{i}"),
                sign="positive",
                plausible=(1e-5, 50.0),
                description=f"Foster network junction to case, resistance {i} [K/W]",
            )
        )
    for i in range(1, 6):
        cols.append(
            ColumnSpec(
                f"zth_tau{i}",
                unit="s",
                si_unit="s",
                aliases=(f"tau{i}", f"zth tau{i}", f"foster tau{i}", f"zth_t{i}"),
                sign="positive",
                plausible=(1e-7, 1000.0),
                description=f"Foster network junction to case, time constant {i} [s]",
            )
        )
    return tuple(cols)


SWITCHES = TableSchema(
    name="switches",
    aliases=(
        "switches",
        "switch",
        "transistors",
        "transistor",
        "mosfets",
        "fets",
        "semiconductors",
        "switching devices",
    ),
    kind_column="kind",
    kinds=SWITCH_KINDS,
    required_table=True,
    description="power switches: N- and P-channel MOSFETs, IGBTs",
    columns=(
        _PART,
        ColumnSpec(
            "kind",
            "str",
            aliases=("type", "device type", "channel", "polarity", "technology"),
            required=True,
            description="nmos, pmos or igbt (N-channel, P-ch MOSFET, nfet, ... accepted)",
        ),
        ColumnSpec(
            "package",
            "str",
            aliases=("case", "outline", "pkg", "housing"),
            required=True,
            description="outline, e.g. TO-220, TO-247, D2PAK, DPAK, SO-8",
        ),
        _PRICE,
        _STOCK,
        ColumnSpec(
            "v_rating",
            unit="V",
            si_unit="V",
            aliases=(
                "vds",
                "vdss",
                "vces",
                "v_ds",
                "v_ce",
                "vce max",
                "vds max",
                "voltage",
                "v max",
                "bvdss",
                "v_dss",
                "v_ces",
            ),
            required=True,
            sign="positive",
            magnitude=True,
            plausible=(8.0, 3300.0),
            description="drain-source (collector-emitter) maximum voltage [V]",
        ),
        ColumnSpec(
            "i_rating",
            unit="A",
            si_unit="A",
            aliases=(
                "ic",
                "id max",
                "ic max",
                "current",
                "i max",
                "i_cont",
                "i_d25",
                "id25",
            ),
            required=True,
            sign="positive",
            magnitude=True,
            plausible=(0.05, 2000.0),
            description="continuous drain (collector) current at 25 °C case [A]",
        ),
        ColumnSpec(
            "tj_max",
            unit="degC",
            si_unit="degC",
            aliases=(
                "tjmax",
                "t_j max",
                "tj",
                "t_jmax",
                "junction max",
                "max junction temperature",
                "tvj max",
                "tvjmax",
            ),
            required=True,
            sign="positive",
            plausible=(100.0, 200.0),
            description="maximum junction temperature [°C]",
        ),
        ColumnSpec(
            "rth_jc",
            unit="K/W",
            si_unit="K/W",
            aliases=(
                "rthjc",
                "rθjc",
                "r_th_jc",
                "rth j-c",
                "rthetajc",
                "r_thjc",
                "theta jc",
                "thetajc",
            ),
            required=True,
            sign="positive",
            plausible=(0.01, 50.0),
            description="thermal resistance junction to case [K/W] (°C/W is the same)",
        ),
        ColumnSpec(
            "vce_sat",
            unit="V",
            si_unit="V",
            aliases=("vcesat", "v_ce_sat", "vce(sat)", "vce sat max"),
            required=("igbt",),
            sign="positive",
            plausible=(0.5, 6.0),
            description="IGBT: maximum collector-emitter saturation voltage at 25 °C [V]",
        ),
        ColumnSpec(
            "vce_sat_i",
            unit="A",
            si_unit="A",
            aliases=(
                "vcesat_i",
                "vce_sat_ic",
                "vce(sat) ic",
                "vce_sat current",
                "i_vce_sat",
            ),
            required=("igbt",),
            sign="positive",
            magnitude=True,
            plausible=(0.05, 2000.0),
            description="IGBT: collector current at which vce_sat is given [A]",
        ),
        ColumnSpec(
            "vce_sat_vge",
            unit="V",
            si_unit="V",
            aliases=("vcesat_vge", "vce_sat vge", "vge_sat", "vce(sat) vge"),
            sign="positive",
            magnitude=True,
            default=None,
            plausible=(5.0, 25.0),
            description="IGBT: gate-emitter voltage at which vce_sat is given [V]; default 15 V",
        ),
        ColumnSpec(
            "rth_ja",
            unit="K/W",
            si_unit="K/W",
            aliases=(
                "rthja",
                "rθja",
                "r_th_ja",
                "rth j-a",
                "rthetaja",
                "theta ja",
                "thetaja",
            ),
            sign="positive",
            plausible=(2.0, 500.0),
            description="junction to ambient with no heatsink [K/W]; default per package",
        ),
        ColumnSpec(
            "vgs_max",
            unit="V",
            si_unit="V",
            aliases=(
                "vgs",
                "vgsmax",
                "v_gs max",
                "vge max",
                "vgemax",
                "vges",
                "vgss",
                "gate voltage max",
            ),
            sign="positive",
            magnitude=True,
            plausible=(4.0, 40.0),
            description="gate-source (gate-emitter) absolute maximum magnitude [V]; default 20 V or 12 V",
        ),
        ColumnSpec(
            "vth_max",
            unit="V",
            si_unit="V",
            aliases=(
                "vth",
                "vgs(th) max",
                "vgsth max",
                "vgs_th",
                "vgsth",
                "vge(th) max",
                "vgeth",
                "threshold",
            ),
            sign="positive",
            magnitude=True,
            plausible=(0.3, 10.0),
            description="maximum gate threshold voltage at 25 °C [V]",
        ),
        ColumnSpec(
            "rds_hot_ratio",
            unit="",
            si_unit="",
            aliases=(
                "rds hot",
                "rds125/rds25",
                "rds ratio",
                "rdson ratio",
                "hot ratio",
            ),
            sign="positive",
            plausible=(1.0, 3.5),
            description="Rds(on) at 125 °C over Rds(on) at 25 °C [-]; default 1.8 (≤ 100 V) or 2.2",
        ),
        ColumnSpec(
            "tab",
            "str",
            aliases=("tab connection", "tab node", "tab tied to", "flange"),
            description="what the mounting tab is tied to: drain, collector, source or isolated",
        ),
        ColumnSpec(
            "qg",
            unit="nC",
            si_unit="C",
            aliases=("q_g", "qg total", "gate charge", "qg max"),
            sign="positive",
            plausible=(0.1e-9, 5e-6),
            description="total gate charge [nC]",
        ),
        ColumnSpec(
            "qgs",
            unit="nC",
            si_unit="C",
            aliases=("q_gs", "gate source charge"),
            sign="positive",
            plausible=(0.02e-9, 2e-6),
            description="gate-source charge [nC]",
        ),
        ColumnSpec(
            "qgd",
            unit="nC",
            si_unit="C",
            aliases=("q_gd", "gate drain charge", "miller charge"),
            sign="positive",
            plausible=(0.02e-9, 2e-6),
            description="gate-drain (Miller) charge [nC]",
        ),
        ColumnSpec(
            "v_plateau",
            unit="V",
            si_unit="V",
            aliases=("vplateau", "v_pl", "vgp", "plateau", "miller plateau", "v_gp"),
            sign="positive",
            magnitude=True,
            plausible=(1.0, 15.0),
            description="gate plateau (Miller) voltage [V]",
        ),
        ColumnSpec(
            "rg_int",
            unit="ohm",
            si_unit="ohm",
            aliases=("rg", "r_g", "rgint", "internal gate resistance", "r_g_int"),
            sign="nonnegative",
            plausible=(0.0, 50.0),
            description="internal gate resistance [Ω]",
        ),
        ColumnSpec(
            "t_rise",
            unit="ns",
            si_unit="s",
            aliases=("tr", "t_r", "rise time"),
            sign="positive",
            plausible=(0.5e-9, 20e-6),
            description="switching rise time [ns], an alternative to gate charge",
        ),
        ColumnSpec(
            "t_fall",
            unit="ns",
            si_unit="s",
            aliases=("tf", "t_f", "fall time"),
            sign="positive",
            plausible=(0.5e-9, 20e-6),
            description="switching fall time [ns], an alternative to gate charge",
        ),
        ColumnSpec(
            "coss",
            unit="pF",
            si_unit="F",
            aliases=("c_oss", "output capacitance", "coes", "c_oes"),
            sign="positive",
            plausible=(0.5e-12, 100e-9),
            description="output capacitance [pF]",
        ),
        ColumnSpec(
            "e_on",
            unit="mJ",
            si_unit="J",
            aliases=("eon", "turn on energy"),
            sign="positive",
            plausible=(1e-7, 1.0),
            description="IGBT: turn-on switching energy at the test point [mJ]",
        ),
        ColumnSpec(
            "e_off",
            unit="mJ",
            si_unit="J",
            aliases=("eoff", "turn off energy"),
            sign="positive",
            plausible=(1e-7, 1.0),
            description="IGBT: turn-off switching energy at the test point [mJ]",
        ),
        ColumnSpec(
            "e_test_v",
            unit="V",
            si_unit="V",
            aliases=("etest_v", "e_test voltage", "energy test voltage"),
            sign="positive",
            magnitude=True,
            plausible=(5.0, 3300.0),
            description="IGBT: voltage of the switching-energy test point [V]",
        ),
        ColumnSpec(
            "e_test_i",
            unit="A",
            si_unit="A",
            aliases=("etest_i", "e_test current", "energy test current"),
            sign="positive",
            magnitude=True,
            plausible=(0.05, 2000.0),
            description="IGBT: current of the switching-energy test point [A]",
        ),
        ColumnSpec(
            "i_pulse",
            unit="A",
            si_unit="A",
            aliases=(
                "idm",
                "icm",
                "i_dm",
                "i_cm",
                "pulsed current",
                "ipulse",
                "i_peak",
            ),
            sign="positive",
            magnitude=True,
            plausible=(0.1, 10000.0),
            description="pulsed drain (collector) current rating [A]",
        ),
        ColumnSpec(
            "eas",
            unit="mJ",
            si_unit="J",
            aliases=("e_as", "avalanche energy", "single pulse avalanche energy"),
            sign="positive",
            plausible=(1e-6, 20.0),
            description="single-pulse avalanche energy [mJ]",
        ),
        *_zth_columns(),
        *_NOTES,
    ),
    patterns=(
        PatternSpec(
            name="rds_on",
            prefixes=("rdson", "rds", "r_ds_on", "rdsonmax", "rdson_max", "rdsmax"),
            param="vgs",
            param_unit="V",
            param_si="V",
            unit="ohm",
            si_unit="ohm",
            required=("nmos", "pmos"),
            plausible=(1e-4, 20.0),
            param_plausible=(1.0, 20.0),
            description=(
                "MOSFET: maximum on-resistance at 25 °C junction at the gate voltage in the "
                "header [Ω]; give at least one, e.g. rds_on@10V, rds_on@4.5V"
            ),
            example="rds_on@10V",
        ),
    ),
)

_FITS = ColumnSpec(
    "fits",
    "list",
    aliases=("packages", "fits packages", "for packages", "suits", "mounts"),
    required=True,
    description="packages it takes, separated by ';' (e.g. TO-220; TO-247)",
)

_GEOMETRY = (
    "length",
    "width",
    "base_thickness",
    "fin_height",
    "fin_count",
    "fin_thickness",
)

HEATSINKS = TableSchema(
    name="heatsinks",
    aliases=(
        "heatsinks",
        "heatsink",
        "heat sinks",
        "heat sink",
        "sinks",
        "coolers",
        "cooling",
    ),
    description="heatsinks: natural-convection RθSA, airflow points, or fin geometry",
    one_of=(("rth_sa",), _GEOMETRY),
    one_of_reason="give rth_sa, or the fin geometry (length, width, base_thickness, fin_height, fin_count, fin_thickness)",
    columns=(
        _PART,
        _PRICE,
        _STOCK,
        ColumnSpec(
            "rth_sa",
            unit="K/W",
            si_unit="K/W",
            aliases=(
                "rthsa",
                "rθsa",
                "rth s-a",
                "rthetasa",
                "rth",
                "thermal resistance",
                "rth_sa natural",
                "rth_sa@0m/s",
            ),
            sign="positive",
            plausible=(0.05, 100.0),
            description="sink to ambient, natural convection [K/W]",
        ),
        ColumnSpec(
            "rth_sa_rise",
            unit="K",
            si_unit="K",
            aliases=("rthsa rise", "rth_sa dt", "rise", "delta t", "dt", "rth_sa_dt"),
            sign="positive",
            plausible=(10.0, 120.0),
            description="temperature rise at which rth_sa is quoted [K]; default 75 K",
        ),
        _FITS,
        ColumnSpec(
            "positions",
            "int",
            unit="",
            si_unit="",
            aliases=("devices", "max devices", "slots", "places", "mounting positions"),
            sign="positive",
            default=1,
            default_reason="one device per heatsink unless the sheet says more",
            plausible=(1.0, 64.0),
            description="devices it can carry (count); default 1",
        ),
        ColumnSpec(
            "length",
            unit="mm",
            si_unit="m",
            aliases=("l", "fin length", "length_mm", "l_mm"),
            sign="positive",
            plausible=(5e-3, 1.0),
            description="geometry: length along the fins (vertical) [mm]",
        ),
        ColumnSpec(
            "width",
            unit="mm",
            si_unit="m",
            aliases=("w", "width_mm", "w_mm"),
            sign="positive",
            plausible=(5e-3, 1.0),
            description="geometry: base width across the fins [mm]",
        ),
        ColumnSpec(
            "base_thickness",
            unit="mm",
            si_unit="m",
            aliases=("base", "base t", "base_t", "base_t_mm", "base thickness mm"),
            sign="positive",
            plausible=(0.3e-3, 50e-3),
            description="geometry: base plate thickness [mm]",
        ),
        ColumnSpec(
            "fin_height",
            unit="mm",
            si_unit="m",
            aliases=("fin h", "fin_h", "fin_h_mm", "h_fin"),
            sign="positive",
            plausible=(1e-3, 0.3),
            description="geometry: fin height above the base [mm]",
        ),
        ColumnSpec(
            "fin_count",
            "int",
            unit="",
            si_unit="",
            aliases=("fins", "fin n", "fin_n", "n_fins", "number of fins"),
            sign="positive",
            plausible=(1.0, 200.0),
            description="geometry: number of fins (count)",
        ),
        ColumnSpec(
            "fin_thickness",
            unit="mm",
            si_unit="m",
            aliases=("fin t", "fin_t", "fin_t_mm", "t_fin"),
            sign="positive",
            plausible=(0.1e-3, 20e-3),
            description="geometry: fin thickness [mm]",
        ),
        ColumnSpec(
            "mass",
            unit="g",
            si_unit="kg",
            aliases=("weight",),
            sign="positive",
            plausible=(1e-3, 50.0),
            description="mass [g], optional",
        ),
        ColumnSpec(
            "material",
            "str",
            aliases=("alloy",),
            description="geometry: material, e.g. aluminium, copper (text)",
        ),
        ColumnSpec(
            "finish",
            "str",
            aliases=("surface", "coating"),
            description="geometry: finish, e.g. black anodised, bare (text)",
        ),
        *_NOTES,
    ),
    patterns=(
        PatternSpec(
            name="rth_sa",
            prefixes=("rthsa", "rθsa", "rthetasa", "rth"),
            param="airflow",
            param_unit="m/s",
            param_si="m/s",
            unit="K/W",
            si_unit="K/W",
            plausible=(0.02, 100.0),
            param_plausible=(0.1, 20.0),
            description="sink to ambient at the air speed in the header [K/W], e.g. rth_sa@2m/s",
            example="rth_sa@2m/s",
        ),
    ),
)

INTERFACES = TableSchema(
    name="interfaces",
    aliases=(
        "interfaces",
        "interface",
        "thermal interfaces",
        "tims",
        "tim",
        "pads",
        "insulators",
        "interface materials",
    ),
    description="thermal-interface materials: grease, pads, insulating pads",
    columns=(
        _PART,
        _PRICE,
        _STOCK,
        _FITS,
        ColumnSpec(
            "rth_cs",
            unit="K/W",
            si_unit="K/W",
            aliases=(
                "rthcs",
                "rθcs",
                "rth c-s",
                "rthetacs",
                "rth",
                "thermal resistance",
            ),
            required=True,
            sign="positive",
            plausible=(0.01, 10.0),
            description="case to sink for the packages it fits [K/W]",
        ),
        ColumnSpec(
            "insulating",
            "bool",
            aliases=(
                "insulated",
                "isolating",
                "electrically insulating",
                "isolated",
                "insulator",
            ),
            required=True,
            description="electrically insulating: yes or no",
        ),
        ColumnSpec(
            "isolation_voltage",
            unit="V",
            si_unit="V",
            aliases=(
                "isolation",
                "breakdown voltage",
                "dielectric strength",
                "v_iso",
                "viso",
            ),
            sign="positive",
            plausible=(10.0, 20_000.0),
            description="isolation (breakdown) voltage [V]",
        ),
        ColumnSpec(
            "t_max",
            unit="degC",
            si_unit="degC",
            aliases=("tmax", "max temperature", "tj_max", "t_max operating"),
            sign="positive",
            default=150.0,
            default_reason="typical upper use temperature of pads and greases, from memory",
            plausible=(80.0, 300.0),
            description="maximum use temperature [°C]; default 150 °C",
        ),
        *_NOTES,
    ),
)

DIODES = TableSchema(
    name="diodes",
    aliases=(
        "diodes",
        "diode",
        "freewheel diodes",
        "flyback diodes",
        "rectifiers",
        "protection",
    ),
    description="freewheel and protection diodes",
    columns=(
        _PART,
        _PRICE,
        _STOCK,
        ColumnSpec(
            "v_rrm",
            unit="V",
            si_unit="V",
            aliases=("vrrm", "vr", "v_r", "reverse voltage", "piv"),
            required=True,
            sign="positive",
            plausible=(5.0, 5000.0),
            description="repetitive peak reverse voltage [V]",
        ),
        ColumnSpec(
            "i_avg",
            unit="A",
            si_unit="A",
            aliases=("if", "i_f", "if(av)", "ifav", "i_f_av", "forward current", "io"),
            required=True,
            sign="positive",
            plausible=(0.05, 500.0),
            description="average forward current rating [A]",
        ),
        ColumnSpec(
            "vf",
            unit="V",
            si_unit="V",
            aliases=("v_f", "forward voltage", "vf max"),
            required=True,
            sign="positive",
            plausible=(0.1, 3.0),
            description="forward voltage at the rated current [V]",
        ),
        ColumnSpec(
            "rth_ja",
            unit="K/W",
            si_unit="K/W",
            aliases=("rthja", "rθja", "rth j-a", "rthetaja"),
            sign="positive",
            plausible=(2.0, 500.0),
            description="junction to ambient [K/W]",
        ),
        ColumnSpec(
            "tj_max",
            unit="degC",
            si_unit="degC",
            aliases=("tjmax", "tj", "t_j max"),
            sign="positive",
            default=150.0,
            default_reason="150 °C is the usual silicon rectifier limit (common practice)",
            plausible=(100.0, 200.0),
            description="maximum junction temperature [°C]; default 150 °C",
        ),
        ColumnSpec(
            "package",
            "str",
            aliases=("case", "outline", "pkg"),
            description="outline, e.g. DO-41, SMB, TO-220",
        ),
        *_NOTES,
    ),
)

DRIVERS = TableSchema(
    name="drivers",
    aliases=("drivers", "driver", "gate drivers", "gate driver", "gatedrivers"),
    description="gate drivers",
    kind_column="kind",
    kinds=DRIVER_KINDS,
    columns=(
        _PART,
        _PRICE,
        _STOCK,
        ColumnSpec(
            "kind",
            "str",
            aliases=("type", "topology"),
            required=True,
            description="low_side, high_side or isolated",
        ),
        ColumnSpec(
            "v_out",
            unit="V",
            si_unit="V",
            aliases=("vout", "output voltage", "gate voltage", "v_drive", "vdrive"),
            required=True,
            sign="positive",
            plausible=(2.5, 30.0),
            description="gate-drive output voltage [V]",
        ),
        ColumnSpec(
            "i_peak",
            unit="A",
            si_unit="A",
            aliases=("ipeak", "peak current", "i_out", "iout"),
            sign="positive",
            plausible=(0.005, 50.0),
            description="peak output current [A]",
        ),
        ColumnSpec(
            "v_supply_max",
            unit="V",
            si_unit="V",
            aliases=("vsupply max", "vs max", "v_s max", "v_boot max", "max supply"),
            sign="positive",
            plausible=(3.0, 2000.0),
            description="highest supply (or high-side rail) it may sit on [V]",
        ),
        *_NOTES,
    ),
)

#: Table name → schema, in the order tables are reported.
TABLES: Mapping[str, TableSchema] = MappingProxyType(
    {t.name: t for t in (SWITCHES, HEATSINKS, INTERFACES, DIODES, DRIVERS)}
)
TABLE_ORDER: tuple[str, ...] = tuple(TABLES)

#: Rule defaults per (table, column): applied after parsing; each filled value is assumed.
RULE_DEFAULTS: Mapping[tuple[str, str], DefaultRule] = MappingProxyType(
    {
        ("switches", "vce_sat_vge"): DefaultRule(
            _default_vce_sat_vge,
            lambda v, row: (
                "IGBT saturation voltage is normally given at 15 V gate-emitter (common practice)"
            ),
            "IGBT: 15 V",
            reads=("kind",),
        ),
        ("switches", "rth_ja"): DefaultRule(
            _default_rth_ja,
            _reason_rth_ja,
            "per package: TO-220 62, TO-247 40, D2PAK 40, DPAK 50, SO-8 80 K/W",
            reads=("package",),
        ),
        ("switches", "vgs_max"): DefaultRule(
            _default_vgs_max,
            _reason_vgs_max,
            "20 V when the lowest rds_on point is at ≥ 10 V, else 12 V; IGBT 20 V",
            reads=("_rds_lowest_vgs", "kind"),
        ),
        ("switches", "rds_hot_ratio"): DefaultRule(
            _default_rds_hot_ratio,
            _reason_rds_hot_ratio,
            "MOSFET: 1.8 for v_rating ≤ 100 V, else 2.2",
            reads=("v_rating", "kind"),
        ),
        ("switches", "tab"): DefaultRule(
            _default_tab,
            _reason_tab,
            "drain (MOSFET) or collector (IGBT) for TO-220, TO-247, D2PAK, DPAK, SO-8",
            reads=("package", "kind"),
        ),
        ("heatsinks", "rth_sa_rise"): DefaultRule(
            _default_rth_sa_rise,
            lambda v, row: (
                "catalogue natural-convection values are usually quoted at a 75 K rise (common practice)"
            ),
            "75 K when rth_sa is given",
            reads=("rth_sa",),
        ),
    }
)


def table_for_name(text: str) -> str | None:
    """The table a sheet, file or category name refers to, or None.

    >>> table_for_name("Heat Sinks"), table_for_name("greenhouse_switches")
    ('heatsinks', 'switches')
    """
    f = fold_header(text)
    if not f:
        return None
    best: tuple[int, str] | None = None
    for t in TABLES.values():
        for a in (t.name, *t.aliases):
            fa = fold_header(a)
            if f == fa:
                return t.name
            if len(fa) >= 4 and fa in f and (best is None or len(fa) > best[0]):
                best = (len(fa), t.name)
    return best[1] if best else None


def _unit_label(unit: str | None) -> str:
    if not unit:
        return ""
    return {
        "ohm": "Ω",
        "degC": "°C",
        "K/W": "K/W",
        "nC": "nC",
        "pF": "pF",
        "mJ": "mJ",
        "ns": "ns",
        "mm": "mm",
        "m/s": "m/s",
        "g": "g",
    }.get(unit, unit)


def describe_column(table: str, name: str) -> str:
    """One line describing a column: meaning, unit, whether required, default.

    ``name`` may be a pattern column such as ``rds_on@10V``.

    >>> describe_column("switches", "rth_jc")
    'rth_jc: thermal resistance junction to case [K/W] (°C/W is the same). Required.'
    """
    schema = TABLES[table]
    col = schema.column_map.get(name)
    if col is None:
        base = name.split("@", 1)[0]
        for p in schema.patterns:
            if fold_header(base) in (fold_header(p.name), *p.prefixes):
                req = (
                    f" Required for {', '.join(p.required)} (at least one)."
                    if p.required
                    else ""
                )
                return f"{name}: {p.description}.{req}"
        raise KeyError(f"no column {name!r} in table {table!r}")
    parts = [f"{col.name}: {col.description}."]
    if col.unit and "[" not in col.description:
        parts.append(f"Unit: {_unit_label(col.unit)}.")
    if col.required is True:
        parts.append("Required.")
    elif col.required:
        parts.append(f"Required for {', '.join(col.required)}.")
    if col.default is not None:
        parts.append(
            f"Default {col.default:g}{(' ' + _unit_label(col.unit)) if col.unit else ''}: {col.default_reason}."
        )
    elif (table, name) in RULE_DEFAULTS:
        parts.append(f"Default when blank: {RULE_DEFAULTS[(table, name)].summary}.")
    for i, group in enumerate(schema.one_of):
        if name in group:
            others = [g for j, g in enumerate(schema.one_of) if j != i]
            alt = " or ".join(", ".join(g) for g in others)
            parts.append(
                f"Required unless {alt} {'is' if len(others[0]) == 1 else 'are'} given."
            )
    return " ".join(parts)
