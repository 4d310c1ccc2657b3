"""Load an inventory (CSV files or one workbook) and check it row by row.

Layouts (design overview, "Inventory format"):

* one ``.xlsx`` workbook with one sheet per table (sheet named after the table, or
  recognised by its columns);
* one CSV file per table (table known by the file name, or by its columns);
* one CSV holding several tables, with a ``category`` column naming the table per row.

Every non-blank input row ends up accepted or rejected, with the reason, the file, the
sheet, the row number as the user sees it (header on row 1: first data row is row 2) and
the column. Blank rows are counted apart. Implausible values are warnings; every default
that stands in for a blank cell is listed as assumed. Files that cannot be read at all
raise :class:`~selector.errors.InventoryError` with one line naming the place.

The reader never writes to the user's files: paths are only opened for reading.
"""

from __future__ import annotations

import codecs
import csv
import functools
import io
import itertools
import os
import re
import warnings
import zipfile
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from .errors import InventoryError, Location
from .schema import (
    KNOWN_PACKAGES,
    RULE_DEFAULTS,
    TABLE_ORDER,
    TABLES,
    ColumnSpec,
    PatternSpec,
    TableSchema,
    fold_header,
    normalise_bool,
    normalise_driver_kind,
    normalise_package,
    normalise_switch_kind,
    normalise_tab,
    table_for_name,
)
from .units import _parse_quantity_series, check_unit, to_si

__all__ = [
    "Inventory",
    "InventoryReport",
    "RowIssue",
    "load_inventory",
    "MAX_FILE_BYTES",
    "MAX_UNPACKED_BYTES",
]

#: Largest input file accepted [bytes].
MAX_FILE_BYTES = 200 * 1024 * 1024
#: Largest total unpacked size of a workbook (zip) accepted [bytes].
MAX_UNPACKED_BYTES = 400 * 1024 * 1024
#: Largest unpacked/packed ratio of a workbook above 16 MiB unpacked (zip bombs).
MAX_ZIP_RATIO = 150.0
#: Most entries in a workbook's zip container.
MAX_ZIP_ENTRIES = 5000

_OLE2_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
_ZIP_MAGIC = (b"PK\x03\x04", b"PK\x05\x06")
_ENCRYPTED_MARK = "EncryptedPackage".encode("utf-16-le")
_DOC_SHEETS = frozenset(
    {
        "readme",
        "notes",
        "about",
        "help",
        "info",
        "instructions",
        "legend",
        "units",
        "howto",
        "changelog",
        "cover",
    }
)
_CATEGORY_HEADERS = frozenset({"category", "table"})
# characters below 32 other than tab, line feed and carriage return
_CONTROL_CHAR_RE = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f]")
_UNIT_BRACKET_RE = re.compile(r"^(?P<name>.*?)\s*\[(?P<unit>[^\]]*)\]\s*$")
_UNIT_PAREN_RE = re.compile(r"^(?P<name>.*?)\s*\((?P<unit>[^()]*)\)\s*$")
_CURRENCY_RE = re.compile(
    r"^\s*(?:[$€£¥]|EUR|USD|GBP|CHF)\s*|\s*(?:[$€£¥]|EUR|USD|GBP|CHF)\s*$", re.I
)
_DEC_COMMA_EVIDENCE_RE = re.compile(
    r"(?<![\d.,])(?:\d+,(?:\d{1,2}|\d{4,})|0,\d+)(?![\d.,])"
)
_DEC_POINT_EVIDENCE_RE = re.compile(
    r"(?<![\d.,])(?:\d+\.(?:\d{1,2}|\d{4,})|0\.\d+)(?![\d.,])"
)
# in a comma-separated file the comma next to a number is a separator
_DEC_POINT_EVIDENCE_COMMA_SEP_RE = re.compile(
    r"(?<![\d.])(?:\d+\.(?:\d{1,2}|\d{4,})|0\.\d+)(?![\d.])"
)


# =============================================================================== records


@dataclass(slots=True)
class RowIssue:
    """One problem, warning or assumed value, placed as the user sees it.

    ``row`` is the spreadsheet row number (header on row 1: first data row is 2);
    ``sheet`` is None for CSV files. ``value`` is the cell as written (for assumed
    values: the default used, in the column's SI unit).
    """

    file: str | None
    sheet: str | None
    row: int | None
    column: str | None
    value: Any
    reason: str
    table: str | None = None
    part: str | None = None

    def location(self) -> Location:
        return Location(
            file=self.file, sheet=self.sheet, row=self.row, column=self.column
        )

    def describe(self) -> str:
        """One line: place, value, reason."""
        where = self.location().describe()
        val = "" if _is_blank_value(self.value) else f" value {_fmt_value(self.value)}:"
        who = f" [{self.table} {self.part}]" if self.part else ""
        return (
            f"{where}:{val} {self.reason}{who}"
            if where
            else f"{val} {self.reason}{who}"
        )

    def to_dict(self) -> dict[str, Any]:
        return {
            "file": self.file,
            "sheet": self.sheet,
            "row": self.row,
            "column": self.column,
            "value": _json_value(self.value),
            "reason": self.reason,
            "table": self.table,
            "part": self.part,
        }


def _is_blank_value(v: Any) -> bool:
    if v is None:
        return True
    if isinstance(v, float) and np.isnan(v):
        return True
    return isinstance(v, str) and not v.strip()


def _fmt_value(v: Any) -> str:
    if isinstance(v, float | np.floating):
        return f"{float(v):g}"
    if isinstance(v, tuple):
        return "; ".join(map(str, v))
    return repr(str(v)) if isinstance(v, str) else str(v)


def _json_value(v: Any) -> Any:
    if v is None:
        return None
    if isinstance(v, bool | np.bool_):
        return bool(v)
    if isinstance(v, int | np.integer):
        return int(v)
    if isinstance(v, float | np.floating):
        f = float(v)
        return None if np.isnan(f) else f
    if isinstance(v, tuple | list):
        return [_json_value(x) for x in v]
    return str(v)


_ISSUE_FIELDS = ("file", "sheet", "row", "column", "value", "reason", "table", "part")


class _Same:
    """One value standing for every issue of a column-wise block."""

    __slots__ = ("value",)

    def __init__(self, value: Any) -> None:
        self.value = value


class _Take:
    """``base[index]``, taken only when the issues are read."""

    __slots__ = ("base", "index")

    def __init__(self, base: np.ndarray, index: np.ndarray) -> None:
        self.base = base
        self.index = index


def _block_field(v: Any) -> Any:
    """A field of a column-wise block: an array (or list) per issue, one value for all,
    or a :class:`_Take`."""
    if isinstance(v, np.ndarray | _Take):
        return v
    if isinstance(v, list | tuple):
        return np.asarray(v, dtype=object)
    if isinstance(v, pd.Series):
        return v.to_numpy(dtype=object)
    return _Same(v)


def _field_values(v: Any, n: int) -> Any:
    """The values of a block field, one per issue, as Python objects."""
    if isinstance(v, _Same):
        return itertools.repeat(v.value, n)
    if isinstance(v, _Take):
        return v.base[v.index].tolist()
    return v.tolist()


def _field_array(v: Any, n: int) -> np.ndarray:
    """The values of a block field as an object array."""
    if isinstance(v, _Same):
        out = np.empty(n, dtype=object)
        out[:] = v.value
        return out
    if isinstance(v, _Take):
        return np.asarray(v.base[v.index], dtype=object)
    return np.asarray(v, dtype=object)


class IssueList(Sequence[RowIssue]):
    """A list of :class:`RowIssue` stored column-wise in blocks.

    Large inventories produce hundreds of thousands of assumed values; they are kept as
    arrays (or one value for a whole block) and turned into ``RowIssue`` objects only
    when read. Behaves like a read-only list with ``append``, ``extend``,
    ``add_columns`` and ``sort``.
    """

    def __init__(self, items: Any = ()) -> None:
        self._blocks: list[Any] = []  # list[RowIssue], or (n, dict of block fields)
        self._cache: list[RowIssue] | None = None
        self._len = 0
        if items:
            self.extend(items)

    def append(self, issue: RowIssue) -> None:
        self._cache = None
        if not self._blocks or not isinstance(self._blocks[-1], list):
            self._blocks.append([])
        self._blocks[-1].append(issue)
        self._len += 1

    def extend(self, issues: Any) -> None:
        for i in issues:
            self.append(i)

    def add_columns(self, **cols: Any) -> None:
        """Append issues given column-wise, one entry per RowIssue field.

        ``row`` is an array (one issue per element) or a :class:`_Take`; any other
        field is an array or list of the same length, a :class:`_Take` of it, or a
        single value shared by all these issues. Arrays are kept, not copied: the
        caller hands over arrays it does not change afterwards.
        """
        row = cols["row"]
        n = len(row.index) if isinstance(row, _Take) else len(row)
        if n:
            self._cache = None
            self._blocks.append((n, {k: _block_field(cols[k]) for k in _ISSUE_FIELDS}))
            self._len += n

    def _items(self) -> list[RowIssue]:
        if self._cache is None:
            out: list[RowIssue] = []
            for b in self._blocks:
                if isinstance(b, list):
                    out.extend(b)
                    continue
                n, f = b
                out.extend(
                    itertools.starmap(
                        RowIssue,
                        zip(
                            *(_field_values(f[k], n) for k in _ISSUE_FIELDS),
                            strict=True,
                        ),
                    )
                )
            self._cache = out
        return self._cache

    def __len__(self) -> int:
        return self._len

    def __getitem__(self, i):  # type: ignore[override]
        return self._items()[i]

    def __iter__(self):
        return iter(self._items())

    def __eq__(self, other: object) -> bool:
        if isinstance(other, IssueList | list | tuple):
            return list(self) == list(other)
        return NotImplemented

    def __repr__(self) -> str:
        return f"IssueList({len(self)} issues)"

    def sort(self, key: Any) -> None:
        items = sorted(self._items(), key=key)
        self._blocks = [items]
        self._cache = None

    def to_frame(self) -> pd.DataFrame:
        """All issues as a DataFrame with the RowIssue fields as columns."""
        parts = []
        for b in self._blocks:
            if isinstance(b, list):
                if b:
                    parts.append(
                        pd.DataFrame(
                            {
                                k: pd.Series([getattr(i, k) for i in b], dtype=object)
                                for k in _ISSUE_FIELDS
                            }
                        )
                    )
            else:
                n, f = b
                parts.append(
                    pd.DataFrame(
                        {
                            k: pd.Series(_field_array(f[k], n), dtype=object)
                            for k in _ISSUE_FIELDS
                        }
                    )
                )
        if not parts:
            return pd.DataFrame({k: pd.Series([], dtype=object) for k in _ISSUE_FIELDS})
        return pd.concat(parts, ignore_index=True)


@dataclass
class InventoryReport:
    """What the check found: counts per table, rejected rows, warnings, assumed values.

    ``tables`` maps each table name to ``{"accepted", "rejected", "blank"}`` row counts;
    ``unassigned`` counts rows of a ``category`` CSV that belong to no table;
    ``files`` describes how each file was read (format, sheets, encoding, separator,
    decimal mark, header row).
    """

    tables: dict[str, dict] = field(default_factory=dict)
    rejected_rows: IssueList = field(default_factory=IssueList)
    warnings: IssueList = field(default_factory=IssueList)
    assumed: IssueList = field(default_factory=IssueList)
    files: list[dict] = field(default_factory=list)
    unassigned: dict[str, int] = field(
        default_factory=lambda: {"rejected": 0, "blank": 0}
    )

    @property
    def rejected_count(self) -> int:
        """Rows rejected in all tables (a row with several problems counts once)."""
        return (
            sum(t["rejected"] for t in self.tables.values())
            + self.unassigned["rejected"]
        )

    @property
    def accepted_count(self) -> int:
        return sum(t["accepted"] for t in self.tables.values())

    def to_dict(self) -> dict[str, Any]:
        """The ``check --json`` object."""
        return {
            "tables": {k: dict(v) for k, v in self.tables.items()},
            "unassigned": dict(self.unassigned),
            "rejected_rows": [i.to_dict() for i in self.rejected_rows],
            "warnings": [i.to_dict() for i in self.warnings],
            "assumed": [_assumed_dict(i) for i in self.assumed],
            "files": [dict(f) for f in self.files],
        }

    def format_text(self, max_lines: int = 40) -> str:
        """A readable summary: files, counts per table, rejected rows, warnings, assumed."""
        out: list[str] = []
        for f in self.files:
            out.append(f"Read {f['file']}: {f.get('summary', f.get('format', ''))}")
        out.append("")
        width = max((len(t) for t in self.tables), default=8)
        for name, c in self.tables.items():
            line = f"  {name:<{width}}  {c['accepted']:>6} accepted  {c['rejected']:>5} rejected"
            if c.get("blank"):
                line += f"  ({c['blank']} blank rows skipped)"
            out.append(line)
        if self.unassigned["rejected"] or self.unassigned["blank"]:
            out.append(
                f"  {'no table':<{width}}  {0:>6} accepted  {self.unassigned['rejected']:>5} rejected"
                + (
                    f"  ({self.unassigned['blank']} blank rows skipped)"
                    if self.unassigned["blank"]
                    else ""
                )
            )
        rows = {(i.file, i.sheet, i.row) for i in self.rejected_rows}
        out.append("")
        out.append(f"Rejected rows: {len(rows)}")
        out.extend(
            _limited(
                (f"  {i.describe()}" for i in self.rejected_rows),
                len(self.rejected_rows),
                max_lines,
            )
        )
        out.append(f"Warnings: {len(self.warnings)}")
        out.extend(
            _limited(
                (f"  {i.describe()}" for i in self.warnings),
                len(self.warnings),
                max_lines,
            )
        )
        groups: dict[tuple, list[RowIssue]] = {}
        for i in self.assumed:
            groups.setdefault(
                (i.table, i.column, _fmt_assumed(i), i.reason), []
            ).append(i)
        out.append(
            f"Assumed values: {len(self.assumed)} (defaults standing in for blank cells)"
        )
        lines = []
        for (table, column, value, reason), items in groups.items():
            parts = [str(i.part) for i in items[:6]]
            more = f", … {len(items) - 6} more" if len(items) > 6 else ""
            lines.append(
                f"  {table}.{column} = {value} for {len(items)} part(s) ({', '.join(parts)}{more}): {reason}"
            )
        out.extend(_limited(iter(lines), len(lines), max_lines))
        return "\n".join(out).rstrip() + "\n"


def _limited(lines, total: int, max_lines: int) -> list[str]:
    res = []
    for k, line in enumerate(lines):
        if k >= max_lines:
            res.append(
                f"  … and {total - max_lines} more (use --json for the full list)"
            )
            break
        res.append(line)
    return res


def _si_unit(table: str | None, column: str | None) -> str | None:
    if table not in TABLES or column is None:
        return None
    spec = TABLES[table].column_map.get(column)
    return spec.si_unit if spec is not None else None


_UNIT_SHOW = {"ohm": "Ω", "degC": "°C", "": ""}


def _fmt_assumed(i: RowIssue) -> str:
    unit = _si_unit(i.table, i.column)
    if isinstance(i.value, float | int | np.floating | np.integer) and not isinstance(
        i.value, bool
    ):
        u = _UNIT_SHOW.get(unit or "", unit or "")
        return f"{float(i.value):g}{(' ' + u) if u else ''}"
    return str(i.value)


def _assumed_dict(i: RowIssue) -> dict[str, Any]:
    d = i.to_dict()
    d["unit"] = _si_unit(i.table, i.column)
    return d


@dataclass
class Inventory:
    """The accepted inventory rows as SI tables, plus the check report.

    Tables use the overview's column names with SI values (°C for temperatures) and carry
    ``source_file``, ``source_sheet``, ``source_row``. Every table is present, empty with
    its columns when the inventory has none.

    ``rds_points``: ``part``, ``vgs`` [V], ``rds_on`` [Ω], sorted by part then vgs (the
    guaranteed maximum on-resistance points of each accepted MOSFET).
    ``sink_airflow``: ``part``, ``airflow`` [m/s], ``rth_sa`` [K/W] (forced-air points).
    ``assumed``: ``table``, ``part``, ``column``, ``value``, ``reason`` (defaults used).
    """

    switches: pd.DataFrame
    heatsinks: pd.DataFrame
    interfaces: pd.DataFrame
    diodes: pd.DataFrame
    drivers: pd.DataFrame
    rds_points: pd.DataFrame
    sink_airflow: pd.DataFrame
    report: InventoryReport

    @functools.cached_property
    def assumed(self) -> pd.DataFrame:
        """Defaults used: ``table``, ``part``, ``column``, ``value``, ``reason`` (built on use)."""
        return self.report.assumed.to_frame()[
            ["table", "part", "column", "value", "reason"]
        ]

    def table(self, name: str) -> pd.DataFrame:
        """One table by name (``"switches"``, ``"heatsinks"``, ...)."""
        return getattr(self, name)


# =============================================================================== reading


@dataclass
class _Piece:
    """A block of rows of one table from one file (and sheet), still as typed cells."""

    file: str
    sheet: str | None
    headers: list[str]
    frame: pd.DataFrame  # columns 0..k-1 in header order
    rows: np.ndarray  # user-visible row number per frame row
    decimal: str | None
    header_row: int = 1  # row number of the header as the user sees it
    table: str | None = None
    extra_cells: np.ndarray | None = None  # per row: True if cells beyond the header


def _loc_error(
    message: str,
    file: str | None = None,
    sheet: str | None = None,
    row: int | None = None,
    column: str | None = None,
) -> InventoryError:
    return InventoryError(
        message, Location(file=file, sheet=sheet, row=row, column=column)
    )


def _expand_sources(
    sources: Sequence[str | os.PathLike | tuple[str, bytes]],
) -> list[tuple[str, bytes]]:
    if isinstance(sources, str | os.PathLike) or (
        isinstance(sources, tuple)
        and len(sources) == 2
        and isinstance(sources[1], bytes | bytearray)
    ):
        sources = [sources]  # type: ignore[list-item]
    out: list[tuple[str, bytes]] = []
    for src in sources:
        if isinstance(src, tuple):
            name, data = src
            if not isinstance(data, bytes | bytearray | memoryview):
                raise _loc_error("upload holds no bytes", file=str(name))
            data = bytes(data)
            if len(data) > MAX_FILE_BYTES:
                raise _loc_error(
                    f"file is too large ({len(data) / 2**20:.0f} MiB; limit {MAX_FILE_BYTES / 2**20:.0f} MiB)",
                    file=str(name),
                )
            out.append((str(name), data))
            continue
        path = Path(src)
        if path.is_dir():
            files = sorted(
                p
                for p in path.iterdir()
                if p.suffix.lower() in (".csv", ".xlsx", ".xlsm", ".txt", ".tsv")
            )
            if not files:
                raise _loc_error("folder holds no .csv or .xlsx files", file=str(path))
            out.extend(_expand_sources(files))
            continue
        try:
            size = path.stat().st_size
        except OSError:
            raise _loc_error("file not found", file=str(path)) from None
        if size > MAX_FILE_BYTES:
            raise _loc_error(
                f"file is too large ({size / 2**20:.0f} MiB; limit {MAX_FILE_BYTES / 2**20:.0f} MiB)",
                file=str(path),
            )
        try:
            with open(path, "rb") as fh:  # read only; the reader never writes
                data = fh.read()
        except OSError as exc:
            raise _loc_error(
                f"cannot be opened ({exc.strerror or exc})", file=str(path)
            ) from None
        out.append((str(path), data))
    if not out:
        raise InventoryError("no inventory file given")
    return out


# ------------------------------------------------------------------------------- headers


@dataclass(frozen=True)
class _HeaderMatch:
    kind: str  # "column", "pattern", "category", "unknown", "empty"
    table: str | None = None
    name: str | None = None  # column name, or pattern name
    unit: str | None = None  # unit from the header
    param: float | None = None  # pattern parameter (SI)
    label: str = ""  # the header as written


def _split_header_unit(header: str) -> tuple[str, str | None]:
    m = _UNIT_BRACKET_RE.match(header)
    if m:
        return m["name"].strip(), m["unit"].strip()
    return header.strip(), None


def _match_pattern(schema: TableSchema, base: str) -> tuple[PatternSpec, str] | None:
    if "@" not in base:
        return None
    stem, param = base.split("@", 1)
    fstem = fold_header(stem)
    for p in schema.patterns:
        if fstem in {fold_header(x) for x in (p.name, *p.prefixes)}:
            return p, param.strip()
    return None


@functools.lru_cache(maxsize=1024)
def _unit_problem(text: str, target: str) -> str | None:
    """:func:`~selector.units.check_unit`, remembered (headers repeat across files)."""
    return check_unit(text, target)


@functools.lru_cache(maxsize=1024)
def _parse_param(p: PatternSpec, text: str) -> float | None:
    t = re.sub(
        r"^\s*(?:vgs|vge|v_gs|v|airflow|v_air|air)\s*=\s*", "", text, flags=re.I
    ).strip()
    t = re.sub(r"(?<=\d)\s*v$", "V", t)  # "4.5v"
    try:
        val = to_si(t, p.param_unit)
    except Exception:  # noqa: BLE001 - any unparseable parameter
        return None
    if (
        _unit_problem(t.lstrip("0123456789.,+-± ") or p.param_unit, p.param_si)
        is not None
    ):
        return None
    return float(val)


def _match_header(schema: TableSchema, header: str) -> _HeaderMatch:
    label = str(header).strip()
    if not label:
        return _HeaderMatch("empty", label=label)
    base, unit = _split_header_unit(label)
    f = fold_header(base)
    if f in _CATEGORY_HEADERS:
        return _HeaderMatch("category", label=label)
    name = schema.alias_map.get(f)
    if name is not None:
        return _HeaderMatch("column", schema.name, name, unit, label=label)
    pm = _match_pattern(schema, base)
    if pm is not None:
        p, ptext = pm
        val = _parse_param(p, ptext)
        if val is None:
            raise _loc_error(
                f"cannot read the {p.param} in header '{label}' (write e.g. {p.example})",
                column=label,
            )
        if p.name == "rth_sa" and val == 0.0:
            return _HeaderMatch("column", schema.name, "rth_sa", unit, label=label)
        return _HeaderMatch(
            "pattern", schema.name, p.name, unit, param=val, label=label
        )
    if unit is None:  # "rth_jc (K/W)": a unit in parentheses, if the rest is a column
        m = _UNIT_PAREN_RE.match(label)
        if m:
            name2 = schema.alias_map.get(fold_header(m["name"]))
            if (
                name2 is not None
                and _unit_problem(m["unit"], schema.column_map[name2].si_unit or "")
                is None
            ):
                return _HeaderMatch(
                    "column", schema.name, name2, m["unit"], label=label
                )
    for p in schema.patterns:  # a pattern column without its parameter
        if (
            f in {fold_header(x) for x in (p.name, *p.prefixes)}
            and p.name not in schema.column_map
        ):
            raise _loc_error(
                f"header '{label}' needs the {p.param} after '@', e.g. {p.example}",
                column=label,
            )
    return _HeaderMatch("unknown", label=label)


def _known_in_any_table(header: str) -> tuple[bool, bool]:
    """(known column of some table, is a part/category header)."""
    label = str(header).strip()
    if not label:
        return False, False
    base, _ = _split_header_unit(label)
    f = fold_header(base)
    if f in _CATEGORY_HEADERS:
        return True, True
    for t in TABLES.values():
        name = t.alias_map.get(f)
        if name is not None:
            return True, name == "part"
        if "@" in base and _match_pattern(t, base) is not None:
            return True, False
    return False, False


def _find_header(rows: list[list[Any]]) -> int | None:
    """Index of the header row among the first rows: the first with a part (or category)
    column and at least one other known column; else the first non-blank row."""
    first_nonblank = None
    for i, row in enumerate(rows[:30]):
        cells = [c for c in row if not _is_blank_value(c)]
        if not cells:
            continue
        if first_nonblank is None:
            first_nonblank = i
        known = 0
        key = False
        for c in cells:
            if not isinstance(c, str):
                continue
            k, p = _known_in_any_table(c)
            known += k
            key = key or p
        if key and known >= 2:
            return i
    return first_nonblank


# ------------------------------------------------------------------------------- CSV


_CODECS = {
    "utf-8": "utf-8",
    "utf-8 (with BOM)": "utf-8-sig",
    "windows-1252": "cp1252",
    "latin-1": "latin-1",
    "utf-16": "utf-16",
    "utf-16-le": "utf-16-le",
    "utf-16-be": "utf-16-be",
}


def _has_ambiguous_dot(text: str) -> bool:
    """True if a number like ``1.250`` (1–3 digits, a dot, three digits) occurs."""
    for m in re.finditer(r"\.\d{3}(?![\d.,])", text):
        k = m.start()
        j = k
        while j > 0 and text[j - 1].isdigit():
            j -= 1
        digits = k - j
        if 1 <= digits <= 3 and text[j] != "0" and (j == 0 or text[j - 1] not in ".,"):
            return True
    return False


def _decode(name: str, data: bytes) -> tuple[str, str]:
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            return data.decode("utf-16"), "utf-16"
        except UnicodeDecodeError:
            raise _loc_error("cannot decode the UTF-16 text", file=name) from None
    if data.startswith(codecs.BOM_UTF8):
        try:
            return data.decode("utf-8-sig"), "utf-8 (with BOM)"
        except UnicodeDecodeError:
            pass
    head = data[:4096]
    if b"\x00" in head:
        # UTF-16 without BOM: every other byte is zero in ASCII text
        if head[1::2].count(0) > len(head) // 4:
            try:
                return data.decode("utf-16-le"), "utf-16-le"
            except UnicodeDecodeError:
                pass
        elif head[0::2].count(0) > len(head) // 4:
            try:
                return data.decode("utf-16-be"), "utf-16-be"
            except UnicodeDecodeError:
                pass
        raise _loc_error(
            "not a CSV text file or an .xlsx workbook (binary data)", file=name
        )
    try:
        return data.decode("utf-8"), "utf-8"
    except UnicodeDecodeError:
        pass
    try:
        return data.decode("cp1252"), "windows-1252"
    except UnicodeDecodeError:
        return data.decode("latin-1"), "latin-1"


_PREFIX_BYTES = 1 << 20  # decoded up front; the rest only when a path needs it
_DECODE_CHUNK = 1 << 16


def _decode_prefix(name: str, data: bytes) -> tuple[str, str, Any, bool]:
    """As :func:`_decode`, but for a large UTF-8 file only the first MiB as text.

    Returns (text, encoding, whole, complete): ``whole()`` gives the whole text
    (decoded on the first call); ``text`` is all of it (``complete``) or a prefix of at
    least 256 Ki characters. The whole file is still checked to be valid UTF-8 (in
    chunks, without keeping them), so the encoding is the one :func:`_decode` picks.
    """
    if (
        len(data) <= 2 * _PREFIX_BYTES
        or data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE))
        or b"\x00" in data[:4096]
    ):
        text, encoding = _decode(name, data)
        return text, encoding, lambda: text, True
    codec = "utf-8-sig" if data.startswith(codecs.BOM_UTF8) else "utf-8"
    decoder = codecs.getincrementaldecoder(codec)()
    view = memoryview(data)
    parts = []
    try:
        for i in range(0, len(data), _DECODE_CHUNK):
            piece = decoder.decode(view[i : i + _DECODE_CHUNK])
            if i < _PREFIX_BYTES:
                parts.append(piece)
        decoder.decode(b"", final=True)
    except UnicodeDecodeError:  # not UTF-8: the fallbacks of _decode
        text, encoding = _decode(name, data)
        return text, encoding, lambda: text, True
    cache: list[str] = []

    def whole() -> str:
        if not cache:
            cache.append(data.decode(codec))
        return cache[0]

    encoding = "utf-8 (with BOM)" if codec == "utf-8-sig" else "utf-8"
    return "".join(parts), encoding, whole, False


def _sniff_separator(lines: list[str]) -> str:
    best, best_score = ",", -1.0
    sample = [ln for ln in lines if ln.strip()][:40]
    if not sample:
        return ","
    for sep in (",", ";", "\t", "|"):
        try:
            counts = [len(r) for r in csv.reader(sample, delimiter=sep)]
        except csv.Error:
            continue
        if not counts:
            continue
        vals, freq = np.unique(counts, return_counts=True)
        mode = int(vals[np.argmax(freq)])
        if mode < 2:
            continue
        score = mode * (freq.max() / len(counts))
        if score > best_score + 1e-9:
            best, best_score = sep, score
    return best


def _above_header(
    name: str, sheet: str | None, rows: list[list[Any]], h: int
) -> list[RowIssue]:
    return [
        RowIssue(
            name,
            sheet,
            k + 1,
            None,
            None,
            f"text above the header row ({h + 1}); ignored",
        )
        for k, r in enumerate(rows[:h])
        if any(not _is_blank_value(c) for c in r)
    ]


def _read_csv(name: str, data: bytes) -> tuple[_Piece, dict, list[RowIssue]]:
    text, encoding, whole, complete = _decode_prefix(name, data)
    codec = _CODECS.get(encoding)
    if not complete and text.isspace():  # only blanks so far: look at all of it
        text, complete = whole(), True
    if not text or text.isspace():
        raise _loc_error("file is empty", file=name)
    head = text[:65536]
    ctrl = len(_CONTROL_CHAR_RE.findall(head, 0, 8192))
    if ctrl > max(8, len(head[:8192]) // 100):
        raise _loc_error(
            "not a CSV text file or an .xlsx workbook (binary data)", file=name
        )
    head_lines = [ln.rstrip("\r") for ln in head.split("\n")[:60]]
    sep = _sniff_separator(head_lines)
    try:
        first = list(csv.reader(head_lines[:31], delimiter=sep))
    except csv.Error as exc:
        raise _loc_error(f"not a readable CSV file ({exc})", file=name) from None
    h = _find_header(first)
    if h is None:
        raise _loc_error("file is empty", file=name)
    headers = [c.strip() for c in first[h]]
    # the body starts after the header's line (no copy of it unless needed)
    while True:
        start = 0
        for _ in range(h + 1):
            k = text.find("\n", start)
            if k < 0:
                start = len(text)
                break
            start = k + 1
        if complete or start + 262144 < len(text):
            break
        text, complete = whole(), True  # the prefix ends too soon: use all of it
    # decimal mark: from the cells, never guessed against the evidence
    sample = text[start : start + 262144]
    comma_ev = sep != "," and _DEC_COMMA_EVIDENCE_RE.search(sample) is not None
    point_re = (
        _DEC_POINT_EVIDENCE_COMMA_SEP_RE if sep == "," else _DEC_POINT_EVIDENCE_RE
    )
    point_ev = point_re.search(sample) is not None
    decimal: str | None
    if comma_ev and not point_ev:
        decimal = ","
    elif point_ev and not comma_ev:
        decimal = "."
    else:
        decimal = None
    if decimal is None:
        text, complete = whole(), True
    all_text = decimal is None and _has_ambiguous_dot(text[start:])
    ncol = max(len(headers), 1)
    frame: pd.DataFrame
    extra = None
    try:
        if all_text:
            raise ValueError("read as text")
        # the C parser reads the bytes itself (much faster than a decoded StringIO);
        # a lone carriage return above the body would shift its line count: use text
        head_part = text[:start]
        lone_cr = "\r" in head_part.replace("\r\n", "")
        source: Any = (
            io.StringIO(whole()[start:])
            if lone_cr or codec is None
            else io.BytesIO(data)
        )
        skip = 0 if isinstance(source, io.StringIO) else h + 1
        # a header on the first line without quotes is the parser's first record:
        # reading it as the (replaced) header is much faster than skipping a row
        as_header = skip == 1 and '"' not in head_lines[0]
        with warnings.catch_warnings():
            # extra cells must not be cut silently
            warnings.simplefilter("error", pd.errors.ParserWarning)
            frame = pd.read_csv(
                source,
                encoding=None if isinstance(source, io.StringIO) else codec,
                skiprows=None if as_header else skip,
                sep=sep,
                header=0 if as_header else None,
                names=list(range(ncol)),
                index_col=False,
                decimal="," if decimal == "," else ".",
                keep_default_na=False,
                na_values=[""],
                skip_blank_lines=False,
                low_memory=False,
                engine="c",
                dtype=None,
            )
    except (
        ValueError,
        pd.errors.ParserError,
        pd.errors.ParserWarning,
        csv.Error,
        OverflowError,
    ):
        try:
            records = list(csv.reader(io.StringIO(whole()[start:]), delimiter=sep))
        except csv.Error as exc:
            raise _loc_error(f"not a readable CSV file ({exc})", file=name) from None
        extra = np.array(
            [any(c.strip() for c in r[ncol:]) for r in records], dtype=bool
        )
        frame = pd.DataFrame(
            [(r + [None] * ncol)[:ncol] for r in records],
            columns=list(range(ncol)),
            dtype=object,
        )
        frame = frame.map(lambda v: None if v is None or v == "" else v)
    rows = np.arange(len(frame)) + h + 2
    info = {
        "file": name,
        "format": "csv",
        "encoding": encoding,
        "separator": {",": "comma", ";": "semicolon", "\t": "tab", "|": "bar"}[sep],
        "decimal": {
            ",": "comma",
            ".": "point",
            None: "not decided (no unambiguous numbers)",
        }[decimal],
        "header_row": h + 1,
    }
    info["summary"] = (
        f"CSV, {info['encoding']}, {info['separator']}-separated, decimal {info['decimal']}, "
        f"header on row {h + 1}"
    )
    notes = _above_header(name, None, first, h)
    return (
        _Piece(
            name,
            None,
            headers,
            frame,
            rows,
            decimal,
            header_row=h + 1,
            extra_cells=extra,
        ),
        info,
        notes,
    )


# ------------------------------------------------------------------------------- XLSX


def _check_zip(name: str, data: bytes) -> None:
    try:
        zf = zipfile.ZipFile(io.BytesIO(data))
        infos = zf.infolist()
    except (zipfile.BadZipFile, OSError, ValueError, EOFError):
        raise _loc_error(
            "not a valid .xlsx workbook (damaged zip container)", file=name
        ) from None
    if len(infos) > MAX_ZIP_ENTRIES:
        raise _loc_error(
            f"workbook holds {len(infos)} parts; refused as unreasonable", file=name
        )
    unpacked = sum(max(i.file_size, 0) for i in infos)
    packed = sum(max(i.compress_size, 0) for i in infos) or 1
    if unpacked > MAX_UNPACKED_BYTES or (
        unpacked > 16 * 2**20 and unpacked / packed > MAX_ZIP_RATIO
    ):
        raise _loc_error(
            f"workbook would unpack to {unpacked / 2**20:.0f} MiB from {len(data) / 2**20:.1f} MiB; "
            "refused as too large (possible zip bomb)",
            file=name,
        )
    names = {i.filename for i in infos}
    if "xl/workbook.xml" not in names and "xl/workbook.bin" not in names:
        if "content.xml" in names:
            raise _loc_error(
                "an OpenDocument spreadsheet; save it as .xlsx or CSV", file=name
            )
        raise _loc_error("a zip file but not an .xlsx workbook", file=name)
    if "xl/workbook.bin" in names:
        raise _loc_error("a binary .xlsb workbook; save it as .xlsx or CSV", file=name)


def _sheets_calamine(name: str, data: bytes) -> list[tuple[str, list[list[Any]]]]:
    import python_calamine as pc

    try:
        wb = pc.CalamineWorkbook.from_filelike(io.BytesIO(data))
        out = []
        for sheet in wb.sheet_names:
            rows = wb.get_sheet_by_name(sheet).to_python(skip_empty_area=False)
            out.append((sheet, rows))
        return out
    except pc.PasswordError:
        raise _loc_error(
            "workbook is password-protected; save an unprotected copy", file=name
        ) from None
    except Exception as exc:  # noqa: BLE001 - calamine raises several kinds on bad files
        raise _loc_error(
            f"not a valid .xlsx workbook ({type(exc).__name__}: {str(exc)[:120]})",
            file=name,
        ) from None


def _sheets_openpyxl(name: str, data: bytes) -> list[tuple[str, list[list[Any]]]]:
    import openpyxl  # defusedxml is used by openpyxl when installed

    try:
        wb = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception as exc:  # noqa: BLE001
        raise _loc_error(
            f"not a valid .xlsx workbook ({type(exc).__name__})", file=name
        ) from None
    out = []
    try:
        for ws in wb.worksheets:
            rows = [list(r) for r in ws.iter_rows(values_only=True)]
            out.append((ws.title, rows))
    finally:
        wb.close()
    return out


def _read_xlsx(name: str, data: bytes) -> tuple[list[_Piece], dict, list[RowIssue]]:
    _check_zip(name, data)
    try:
        import python_calamine  # noqa: F401

        sheets = _sheets_calamine(name, data)
        engine = "calamine"
    except ImportError:  # pragma: no cover - calamine is a dependency
        sheets = _sheets_openpyxl(name, data)
        engine = "openpyxl"
    pieces: list[_Piece] = []
    notes: list[RowIssue] = []
    read_sheets: list[str] = []
    skipped: list[str] = []
    for sheet, rows in sheets:
        rows = [
            [None if (isinstance(c, str) and c == "") else c for c in r] for r in rows
        ]
        h = _find_header(rows)
        if h is None:
            skipped.append(sheet)
            continue
        if fold_header(sheet) in _DOC_SHEETS and table_for_name(sheet) is None:
            skipped.append(sheet)
            continue
        header_row = rows[h]
        ncol = len(header_row)
        while ncol > 0 and _is_blank_value(header_row[ncol - 1]):
            ncol -= 1
        headers = [
            ""
            if c is None
            else (str(c).strip() if not isinstance(c, float) else f"{c:g}")
            for c in header_row[:ncol]
        ]
        body = rows[h + 1 :]
        extra = np.array(
            [any(not _is_blank_value(c) for c in r[ncol:]) for r in body], dtype=bool
        )
        frame = pd.DataFrame(
            [(list(r) + [None] * ncol)[:ncol] for r in body],
            columns=list(range(ncol)),
            dtype=object,
        )
        piece = _Piece(
            name,
            sheet,
            headers,
            frame,
            np.arange(len(body)) + h + 2,
            None,
            header_row=h + 1,
            extra_cells=extra,
        )
        pieces.append(piece)
        notes.extend(_above_header(name, sheet, rows, h))
        read_sheets.append(f"{sheet} (header row {h + 1})")
    info = {
        "file": name,
        "format": "xlsx",
        "engine": engine,
        "sheets": read_sheets,
        "skipped_sheets": skipped,
    }
    info["summary"] = f"workbook, sheets {', '.join(read_sheets) or 'none'}" + (
        f"; not tables: {', '.join(skipped)}" if skipped else ""
    )
    return pieces, info, notes


def _read_source(name: str, data: bytes) -> tuple[list[_Piece], dict, list[RowIssue]]:
    if not data or data.isspace():
        raise _loc_error("file is empty", file=name)
    if data.startswith(_OLE2_MAGIC):
        if _ENCRYPTED_MARK in data:
            raise _loc_error(
                "workbook is password-protected (encrypted); save an unprotected .xlsx copy",
                file=name,
            )
        raise _loc_error(
            "an old binary Excel (.xls) file; save it as .xlsx or CSV", file=name
        )
    if data.startswith(_ZIP_MAGIC):
        return _read_xlsx(name, data)
    if name.lower().endswith((".xlsx", ".xlsm")):
        raise _loc_error("named like a workbook but is not an .xlsx file", file=name)
    piece, info, notes = _read_csv(name, data)
    return [piece], info, notes


# =============================================================================== tables


def _table_by_columns(headers: list[str]) -> tuple[str | None, list[str]]:
    """Pick the table whose specific columns the headers match best."""
    generic = {
        "part",
        "price",
        "stock",
        "manufacturer",
        "mpn",
        "notes",
        "kind",
        "package",
    }
    scores: dict[str, int] = {}
    for t in TABLES.values():
        s = 0
        for hd in headers:
            try:
                m = _match_header(t, hd)
            except InventoryError:
                m = _HeaderMatch("pattern", t.name, "?")
            if m.kind == "pattern" or (m.kind == "column" and m.name not in generic):
                s += 1
        scores[t.name] = s
    best = max(scores.values()) if scores else 0
    winners = [k for k, v in scores.items() if v == best]
    if best == 0:
        return None, []
    if len(winners) > 1:
        return None, winners
    return winners[0], []


def _assign_tables(piece: _Piece, is_workbook: bool) -> list[_Piece]:
    """Return pieces with ``table`` set; split a category CSV into one piece per table."""
    cat_idx = None
    for j, hd in enumerate(piece.headers):
        if fold_header(_split_header_unit(hd)[0]) in _CATEGORY_HEADERS:
            cat_idx = j
            break
    if cat_idx is not None:
        piece.table = "__category__"
        return [piece]
    label = piece.sheet if is_workbook else Path(piece.file).stem
    t = table_for_name(label or "")
    if t is None:
        t, tied = _table_by_columns(piece.headers)
        if t is None:
            what = f"sheet '{piece.sheet}'" if is_workbook else "file"
            hint = f" (its columns fit {' and '.join(tied)} equally)" if tied else ""
            raise _loc_error(
                f"cannot tell which table this {what} holds{hint}; name it after the table "
                "(switches, heatsinks, interfaces, diodes, drivers) or add a 'category' column",
                file=piece.file,
                sheet=piece.sheet,
            )
    piece.table = t
    return [piece]


# =============================================================================== values


def _text_array(col: pd.Series) -> np.ndarray:
    """Cells as stripped text (None for blank); numbers written without a trailing .0."""
    kind = col.dtype.kind
    if kind in "iu":
        return col.astype(str).to_numpy(dtype=object)
    if kind == "f":
        arr = col.to_numpy(dtype=float)
        return np.array(
            [None if np.isnan(v) else (f"{v:.15g}") for v in arr], dtype=object
        )
    if kind == "b":
        return col.astype(str).to_numpy(dtype=object)
    arr = col.to_numpy(dtype=object)
    out = np.empty(len(arr), dtype=object)
    for i, v in enumerate(arr):
        if v is None or (isinstance(v, float) and np.isnan(v)):
            out[i] = None
        elif isinstance(v, str):
            s = v.strip()
            out[i] = s if s else None
        elif isinstance(v, float):
            out[i] = f"{v:.15g}"
        else:
            out[i] = str(v).strip() or None
    return out


def _arrow_of(col: pd.Series) -> Any:
    """The pyarrow array behind a pyarrow-backed text column, else None."""
    dtype = col.dtype
    if not (isinstance(dtype, pd.StringDtype) and dtype.storage == "pyarrow"):
        return None
    try:
        import pyarrow as pa

        return pa.array(col.array)
    except Exception:  # noqa: BLE001 - no arrow view: the callers use numpy
        return None


def _text_array_fast(
    col: pd.Series,
) -> tuple[np.ndarray, np.ndarray | None, Any]:
    """:func:`_text_array`, fast for text columns.

    Also returns the blank mask and the text as a pyarrow array (blank is null) when
    the column is pyarrow-backed text, else None for both.
    """
    if col.dtype != object and pd.api.types.is_string_dtype(col.dtype):
        stripped = col.str.strip()
        arr = stripped.to_numpy(dtype=object, na_value=None)
        blank = stripped.isna().to_numpy(dtype=bool)
        arrow = _arrow_of(stripped)
        if arrow is not None:
            import pyarrow as pa
            import pyarrow.compute as pc

            is_empty = pc.fill_null(pc.equal(arrow, ""), False)
            empty = is_empty.to_numpy(zero_copy_only=False).astype(bool, copy=False)
            if empty.any():
                arrow = pc.if_else(is_empty, pa.scalar(None, pa.string()), arrow)
        else:
            empty = (stripped.str.len() == 0).to_numpy(dtype=bool, na_value=False)
        if empty.any():
            if not arr.flags.writeable:
                arr = arr.copy()
            arr[empty] = None
            blank = blank | empty
        return arr, blank, arrow
    return _text_array(col), None, None


def _factor_arrow_text(arrow: Any) -> tuple[np.ndarray, list]:
    """:func:`_factor_text` of a pyarrow text array: encode the raw texts, then strip
    only the (few) distinct ones and merge those that become equal."""
    import pyarrow as pa
    import pyarrow.compute as pc

    enc = pc.dictionary_encode(arrow)
    if isinstance(enc, pa.ChunkedArray):
        enc = enc.combine_chunks()  # one dictionary, values in order of appearance
    raw = pc.fill_null(enc.indices, -1).to_numpy(zero_copy_only=False)
    stripped = pc.utf8_trim_whitespace(enc.dictionary).to_pylist()
    first: dict[str, int] = {}
    uniq: list[str] = []
    lut = np.empty(len(stripped) + 1, dtype=np.int64)
    lut[-1] = -1  # blank cells (raw code -1)
    for k, v in enumerate(stripped):
        if v not in first:
            first[v] = len(uniq)
            uniq.append(v)
        lut[k] = first[v]
    if "" in first:  # blank after stripping: blank (kept in uniq, as pandas' way does)
        lut[lut == first[""]] = -1
    return lut[raw.astype(np.int64, copy=False)], uniq


def _factor_text(col: pd.Series) -> tuple[np.ndarray, list]:
    """Codes and distinct stripped texts of a text column (-1 for blank cells).

    As ``pd.factorize(col.str.strip())``: the distinct texts in order of appearance.
    """
    arrow = _arrow_of(col)
    if arrow is not None:
        try:
            return _factor_arrow_text(arrow)
        except Exception:  # noqa: BLE001 - pandas' own way below
            pass
    if col.dtype != object and pd.api.types.is_string_dtype(col.dtype):
        codes, uniq = pd.factorize(col.str.strip(), use_na_sentinel=True)
        uniq = [str(u) for u in uniq]
    else:
        codes, uniq = pd.factorize(
            pd.Series(_text_array(col), dtype=object), use_na_sentinel=True
        )
        uniq = list(uniq)
    if "" in uniq:
        codes = codes.copy()
        codes[codes == uniq.index("")] = -1
    return np.asarray(codes, dtype=np.int64), uniq


def _blank_mask(frame: pd.DataFrame) -> np.ndarray:
    n = len(frame)
    nonblank = np.zeros(n, dtype=bool)
    text_cols = []
    for c in frame.columns:
        col = frame[c]
        if col.dtype.kind == "f" and isinstance(col.dtype, np.dtype):
            nonblank |= ~np.isnan(col.to_numpy())
        elif col.dtype.kind in "iufb":
            nonblank |= col.notna().to_numpy()
        else:
            text_cols.append(c)
            continue
        if nonblank.all():  # every row has a number: no row is blank
            return ~nonblank
    cand = np.flatnonzero(~nonblank)
    if len(cand) and text_cols:
        sub = frame.iloc[cand]
        nb = np.zeros(len(cand), dtype=bool)
        for c in text_cols:
            arr = _text_array(sub[c])
            nb |= np.array(
                [v is not None and str(v).strip().lower() not in ("nan",) for v in arr],
                dtype=bool,
            )
        nonblank[cand] = nb
    return ~nonblank


@dataclass
class _Parsed:
    """One piece parsed against one table schema."""

    piece: _Piece
    idx: np.ndarray  # positions in piece.frame of the rows that belong to the table
    values: dict[str, np.ndarray]
    headers: dict[str, str]  # column name -> header label as written
    patterns: list[tuple[PatternSpec, float, str, np.ndarray]]
    blank: np.ndarray
    problems: dict[
        int, list[tuple[str | None, Any, str]]
    ]  # row -> (column label, value, reason)
    arrow_part: Any = None  # part ids as a pyarrow string array (null: blank), if made
    # kind, package: per row a code into a lookup table of normalised values (-1: blank)
    lut_codes: dict[str, tuple[np.ndarray, np.ndarray]] = field(default_factory=dict)
    nulls: dict[str, np.ndarray] = field(default_factory=dict)  # blank masks, text


def _parse_piece(
    schema: TableSchema,
    piece: _Piece,
    idx: np.ndarray,
    report: InventoryReport,
    warn_unknown: bool,
) -> _Parsed:
    frame = piece.frame.iloc[idx] if len(idx) != len(piece.frame) else piece.frame
    n = len(frame)
    matches = []
    for j, hd in enumerate(piece.headers):
        try:
            m = _match_header(schema, hd)
        except InventoryError as exc:
            raise _loc_error(
                exc.message,
                file=piece.file,
                sheet=piece.sheet,
                row=piece.header_row,
                column=hd,
            ) from None
        matches.append((j, m))
    header_row = piece.header_row
    seen: dict[tuple, str] = {}
    for _j, m in matches:
        if m.kind in ("column", "pattern"):
            key = (m.name, m.param)
            if key in seen:
                raise _loc_error(
                    f"columns '{seen[key]}' and '{m.label}' both give {m.name}"
                    + (f" at {m.param:g}" if m.param is not None else ""),
                    file=piece.file,
                    sheet=piece.sheet,
                    row=header_row,
                    column=m.label,
                )
            seen[key] = m.label
        if m.kind == "column" and m.unit is not None:
            spec = schema.column_map[m.name]
            if spec.is_quantity:
                why = _unit_problem(m.unit, spec.si_unit or "")
                if why is not None:
                    raise _loc_error(
                        f"unit in header: {why}",
                        file=piece.file,
                        sheet=piece.sheet,
                        row=header_row,
                        column=m.label,
                    )
        if m.kind == "pattern" and m.unit is not None:
            p = next(p for p in schema.patterns if p.name == m.name)
            why = _unit_problem(m.unit, p.si_unit)
            if why is not None:
                raise _loc_error(
                    f"unit in header: {why}",
                    file=piece.file,
                    sheet=piece.sheet,
                    row=header_row,
                    column=m.label,
                )
    present = {m.name: (j, m) for j, m in matches if m.kind == "column"}
    missing = [c for c in schema.always_required() if c not in present]
    if missing:
        raise _loc_error(
            f"missing required column{'s' if len(missing) > 1 else ''} "
            + ", ".join(f"'{c}'" for c in missing)
            + f" for the {schema.name} table",
            file=piece.file,
            sheet=piece.sheet,
            row=header_row,
        )
    if schema.one_of and not any(all(c in present for c in g) for g in schema.one_of):
        raise _loc_error(
            f"the {schema.name} table needs columns to {schema.one_of_reason}",
            file=piece.file,
            sheet=piece.sheet,
            row=header_row,
        )
    if warn_unknown:
        for j, m in matches:
            if m.kind == "unknown" or (m.kind == "empty" and frame[j].notna().any()):
                label = m.label or f"column {j + 1} (no header)"
                report.warnings.append(
                    RowIssue(
                        piece.file,
                        piece.sheet,
                        header_row,
                        label,
                        None,
                        f"not a {schema.name} column; ignored",
                        schema.name,
                    )
                )

    blank = _blank_mask(frame)
    problems: dict[int, list[tuple[str | None, Any, str]]] = {}
    values: dict[str, np.ndarray] = {}
    headers: dict[str, str] = {}
    bad_by_label: dict[str | None, np.ndarray] = {}

    def add(
        rows_bad: np.ndarray,
        label: str | None,
        raw_cells: np.ndarray | None,
        reasons: Any,
    ) -> None:
        rows_bad = np.asarray(rows_bad, dtype=bool) & ~blank
        if not rows_bad.any():
            return
        mask = bad_by_label.setdefault(label, np.zeros(n, dtype=bool))
        mask |= rows_bad
        for i in np.flatnonzero(rows_bad):
            r = reasons[i] if isinstance(reasons, np.ndarray | list) else reasons
            v = raw_cells[i] if isinstance(raw_cells, np.ndarray) else raw_cells
            problems.setdefault(int(i), []).append((label, v, r))

    def failed(*labels: str | None) -> np.ndarray:
        out = np.zeros(n, dtype=bool)
        for lab in labels:
            m_ = bad_by_label.get(lab)
            if m_ is not None:
                out |= m_
        return out

    kind_arr = None
    kind_lut: np.ndarray | None = None
    codes_of: dict[str, tuple[np.ndarray, list]] = {}
    nulls: dict[str, np.ndarray] = {}  # blank masks of text columns, where known
    arrow_part = None
    lut_codes: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    for spec in schema.columns:
        if spec.name not in present:
            continue
        j, m = present[spec.name]
        col = frame[j]
        headers[spec.name] = m.label
        if spec.is_quantity:
            if spec.name == "price" and not pd.api.types.is_numeric_dtype(col.dtype):
                col = col.map(
                    lambda v: _CURRENCY_RE.sub("", v) if isinstance(v, str) else v
                )
            vals, why, any_bad = _parse_quantity_series(
                col,
                spec.si_unit or "",
                m.unit if m.unit is not None else spec.unit,
                decimal=piece.decimal,
                magnitude=spec.magnitude,
            )
            bad = why.notna().to_numpy() if any_bad else None
            if bad is not None and bad.any():
                rc = col.to_numpy(dtype=object)
                add(bad, m.label, rc, why.to_numpy(dtype=object))
            if spec.sign == "positive":
                neg = vals <= 0
            elif spec.sign == "nonnegative":
                neg = vals < 0
            else:
                neg = np.zeros(n, dtype=bool)
            if neg.any():
                rc = col.to_numpy(dtype=object)
                add(
                    neg,
                    m.label,
                    rc,
                    "must be greater than zero"
                    if spec.sign == "positive"
                    else "must not be negative",
                )
                vals = np.where(neg, np.nan, vals)
            if spec.dtype == "int":
                frac = ~np.isnan(vals) & (np.abs(vals - np.round(vals)) > 1e-9)
                if frac.any():
                    rc = col.to_numpy(dtype=object)
                    add(frac, m.label, rc, "must be a whole number")
                    vals = np.where(frac, np.nan, vals)
            values[spec.name] = vals
        else:
            if spec.dtype == "str" and spec.name not in ("kind", "package", "tab"):
                txt, txt_blank, txt_arrow = _text_array_fast(col)
                values[spec.name] = txt
                if txt_blank is not None:
                    nulls[spec.name] = txt_blank
                if spec.name == "part":
                    arrow_part = txt_arrow
                continue
            codes, uniq = _factor_text(col)
            codes_of[spec.name] = (codes, uniq)
            if spec.dtype == "bool":
                lut = np.empty(len(uniq) + 1, dtype=object)
                for k, u in enumerate(uniq):
                    b, why = normalise_bool(u)
                    lut[k] = b
                    if why is not None:
                        add(codes == k, m.label, uniq[k], why)
                values[spec.name] = lut[codes]
                nulls[spec.name] = pd.isna(lut)[codes]
            elif spec.dtype == "list":
                lut = np.empty(len(uniq) + 1, dtype=object)
                for k, u in enumerate(uniq):
                    items = [normalise_package(x) for x in re.split(r"[;,/|+]", str(u))]
                    items = tuple(dict.fromkeys(x for x in items if x))
                    lut[k] = items if items else None
                values[spec.name] = lut[codes]
                nulls[spec.name] = pd.isna(lut)[codes]
            elif spec.name == "kind":
                norm = (
                    normalise_switch_kind
                    if schema.name == "switches"
                    else normalise_driver_kind
                )
                lut = np.empty(len(uniq) + 1, dtype=object)
                for k, u in enumerate(uniq):
                    kind, why = norm(u)
                    lut[k] = kind
                    if why is not None:
                        add(codes == k, m.label, u, why)
                values["kind"] = lut[codes]
                nulls["kind"] = pd.isna(lut)[codes]
                kind_arr = values["kind"]
                kind_lut = lut
                lut_codes["kind"] = (codes, lut)
            elif spec.name == "package":
                lut = np.array(
                    [normalise_package(u) for u in uniq] + [None], dtype=object
                )
                values[spec.name] = lut[codes]
                nulls[spec.name] = pd.isna(lut)[codes]
                lut_codes[spec.name] = (codes, lut)
    if "tab" in codes_of:
        tcodes, tuniq = codes_of["tab"]
        if kind_lut is not None:
            # the kinds' own codes, through their (small) lookup table
            lcodes, kuniq = pd.factorize(kind_lut, use_na_sentinel=True)
            kcodes = lcodes[codes_of["kind"][0]]
        else:
            kinds_ = (
                kind_arr if kind_arr is not None else np.full(n, None, dtype=object)
            )
            kcodes, kuniq = pd.factorize(kinds_, use_na_sentinel=True)
        kuniq = list(kuniq) + [None]
        kk = len(kuniq)
        kc = np.where(kcodes < 0, kk - 1, kcodes).astype(np.int64)
        combo = (tcodes.astype(np.int64) + 1) * kk + kc
        inv_, uniq_combo = pd.factorize(combo)
        lut = np.empty(len(uniq_combo), dtype=object)
        for k, cval in enumerate(uniq_combo):
            t_i, k_i = divmod(int(cval), kk)
            t_txt = tuniq[t_i - 1] if t_i >= 1 else None
            k_txt = kuniq[k_i]
            tab, why = normalise_tab(t_txt, k_txt)
            lut[k] = tab
            if why is not None:
                add(inv_ == k, headers["tab"], t_txt, why)
        values["tab"] = lut[inv_]
        nulls["tab"] = pd.isna(lut)[inv_]

    pats: list[tuple[PatternSpec, float, str, np.ndarray]] = []
    for j, m in matches:
        if m.kind != "pattern":
            continue
        p = next(p for p in schema.patterns if p.name == m.name)
        col = frame[j]
        vals, why, any_bad = _parse_quantity_series(
            col,
            p.si_unit,
            m.unit if m.unit is not None else p.unit,
            decimal=piece.decimal,
        )
        bad = why.notna().to_numpy() if any_bad else None
        if bad is not None and bad.any():
            add(bad, m.label, col.to_numpy(dtype=object), why.to_numpy(dtype=object))
        neg = vals <= 0
        if neg.any():
            add(neg, m.label, col.to_numpy(dtype=object), "must be greater than zero")
            vals = np.where(neg, np.nan, vals)
        pats.append((p, float(m.param), m.label, vals))

    if piece.extra_cells is not None:
        ex = (
            piece.extra_cells[idx]
            if len(idx) != len(piece.frame)
            else piece.extra_cells
        )
        add(
            ex,
            None,
            None,
            f"row has more cells than the header has columns ({len(piece.headers)})",
        )

    # required values, per kind
    kinds = values.get("kind")
    kind_masks: dict[tuple[str, ...], np.ndarray] = {}

    def kind_in(required: tuple[str, ...]) -> np.ndarray:
        """Rows whose kind is one of ``required`` (as ``np.isin`` on the kind text)."""
        got = kind_masks.get(required)
        if got is None:
            if kind_lut is not None and kinds is kind_arr:
                got = np.isin(kind_lut.astype(str), required)[codes_of["kind"][0]]
            else:
                got = np.isin(kinds.astype(str), required)
            kind_masks[required] = got
        return got

    for spec in schema.columns:
        if spec.required is False:
            continue
        label = headers.get(spec.name, spec.name)
        have = values.get(spec.name)
        if have is None:
            missing_v = np.ones(n, dtype=bool)
        elif have.dtype == object:
            known = nulls.get(spec.name)
            missing_v = known.copy() if known is not None else pd.isna(have)
        else:
            missing_v = np.isnan(have)
        if spec.required is not True:
            if kinds is None:
                continue
            missing_v &= kind_in(spec.required)
        if spec.name == "kind":
            continue  # reported by the kind normaliser
        missing_v &= ~failed(label)
        if missing_v.any():
            for_kind = "" if spec.required is True else " for this kind"
            add(missing_v, label, None, f"missing required value{for_kind}")
    if kinds is not None and "kind" in present:
        miss_kind = codes_of["kind"][0] < 0
        add(miss_kind, headers.get("kind", "kind"), None, "missing required value")
    for p in schema.patterns:
        if not p.required or kinds is None:
            continue
        need = kind_in(p.required)
        mine = [v for (pp, _param, _label, v) in pats if pp is p]
        has_any = np.zeros(n, dtype=bool)
        for v in mine:
            has_any |= ~np.isnan(v)
        bad_in = failed(*{lab for (pp, _pa, lab, _v) in pats if pp is p})
        miss = need & ~has_any & ~bad_in
        if miss.any():
            add(
                miss,
                f"{p.name}@{p.param.upper()}",
                None,
                f"a MOSFET needs at least one {p.name}@{p.param.upper()} value (e.g. {p.example})",
            )
    if schema.one_of:
        alt = schema.one_of
        ok = np.zeros(n, dtype=bool)
        for g in alt:
            g_ok = np.ones(n, dtype=bool)
            for c in g:
                v = values.get(c)
                g_ok &= ~np.isnan(v) if v is not None else False
            ok |= g_ok
        failed_parse = failed(*{headers.get(c) for g in alt for c in g})
        miss = ~ok & ~failed_parse
        if miss.any():
            add(
                miss,
                headers.get(alt[0][0], alt[0][0]),
                None,
                f"missing value: {schema.one_of_reason}",
            )
    return _Parsed(
        piece, idx, values, headers, pats, blank, problems, arrow_part, lut_codes, nulls
    )


# =============================================================================== assembly

_EMPTY_TABLES: dict[str, pd.DataFrame] = {}


def _empty_table(schema: TableSchema) -> pd.DataFrame:
    tmpl = _EMPTY_TABLES.get(schema.name)
    if tmpl is None:
        cols: dict[str, pd.Series] = {}
        for c in schema.columns:
            dtype = float if c.is_quantity else (bool if c.dtype == "bool" else object)
            cols[c.name] = pd.Series([], dtype=dtype)
        cols["source_file"] = pd.Series([], dtype=object)
        cols["source_sheet"] = pd.Series([], dtype=object)
        cols["source_row"] = pd.Series([], dtype="int64")
        tmpl = _EMPTY_TABLES[schema.name] = pd.DataFrame(cols)
    return tmpl.copy(deep=True)


def _obj(a: Any, n: int | None = None) -> np.ndarray:
    """An object array (a scalar is repeated ``n`` times)."""
    if n is not None and not isinstance(a, np.ndarray | list | tuple | pd.Series):
        out = np.empty(n, dtype=object)
        out[:] = [a] * n if isinstance(a, tuple) else a
        return out
    if isinstance(a, pd.Series):
        return a.to_numpy(dtype=object)
    return np.asarray(a, dtype=object)


_VARIES = object()


class _Src:
    """Where each row of an assembled table comes from: file, sheet, row number, part.

    ``file`` and ``sheet`` hold the one file (sheet) of every row when the table came
    from one piece, so issues can share it instead of repeating it per row. The arrays
    are the source's own (never a table's column): issues read them lazily.
    """

    __slots__ = ("files", "sheets", "rows", "parts", "file", "sheet")

    def __init__(
        self,
        files: np.ndarray,
        sheets: np.ndarray,
        rows: np.ndarray,
        parts: np.ndarray,
        file: Any = _VARIES,
        sheet: Any = _VARIES,
    ) -> None:
        self.files, self.sheets, self.rows, self.parts = files, sheets, rows, parts
        self.file, self.sheet = file, sheet


def _add_block(
    target: IssueList,
    src: _Src,
    pos: np.ndarray,
    table: str,
    column: Any,
    value: Any,
    reason: Any,
) -> None:
    """Append issues for rows ``pos`` of an assembled table, column-wise.

    ``column``, ``value`` and ``reason`` are one entry per row in ``pos`` or a single
    value for all of them.
    """
    if len(pos) == 0:
        return
    target.add_columns(
        file=_Take(src.files, pos) if src.file is _VARIES else src.file,
        sheet=_Take(src.sheets, pos) if src.sheet is _VARIES else src.sheet,
        row=_Take(src.rows, pos),
        column=column,
        value=value,
        reason=reason,
        table=table,
        part=_Take(src.parts, pos),
    )


class _Points:
    """Pattern values (``rds_on@VGS``, ``rth_sa@AIRFLOW``) of accepted rows.

    Kept as one block per pattern column: ``[pattern name, parameter (SI), header label,
    rows of the assembled table, values (SI)]``, in the order of the columns.
    """

    def __init__(self, blocks: list[list[Any]]) -> None:
        self.blocks = blocks

    def __len__(self) -> int:
        return sum(len(b[3]) for b in self.blocks)

    def of(self, name: str) -> tuple[np.ndarray, ...]:
        """One pattern, block after block: rows, parameters, values, and the rank of
        each parameter among the pattern's distinct parameters (with their count)."""
        bl = [b for b in self.blocks if b[0] == name]
        if not bl:
            empty = np.zeros(0, dtype=np.int64)
            return empty, np.zeros(0), np.zeros(0), empty, 0
        lens = [len(b[3]) for b in bl]
        bparams = np.array([b[1] for b in bl], dtype=float)
        levels, bcode = np.unique(bparams, return_inverse=True)
        rows = np.concatenate([b[3] for b in bl])
        params = np.repeat(bparams, lens)
        vals = np.concatenate([b[4] for b in bl])
        return rows, params, vals, np.repeat(bcode, lens), len(levels)


def _pair_order(
    first: np.ndarray,
    second: np.ndarray,
    code: np.ndarray,
    levels: int,
    runs: bool = False,
) -> np.ndarray:
    """The order of ``np.lexsort((second, first))``: by ``first``, then ``second``.

    ``first`` holds non-negative integers; ``code`` ranks ``second`` among its
    ``levels`` distinct values, so ``first * levels + code`` orders the pairs. With
    ``runs`` (``first`` rising within each block) a stable sort of that key merges the
    blocks; otherwise a counting sort places distinct pairs without comparing them.
    """
    n = len(first)
    if n == 0:
        return np.zeros(0, dtype=np.int64)
    top = int(first.max()) + 1
    if first.min() < 0 or top > (2**62) // max(levels, 1):
        return np.lexsort((second, first))
    key = first.astype(np.int64) * levels + code
    if runs or top * levels > 4 * n + 4096:
        return np.argsort(key, kind="stable")
    slot = np.full(top * levels, -1, dtype=np.int64)
    slot[key] = np.arange(n)
    order = slot[slot >= 0]
    if len(order) != n:  # repeated pairs: a stable sort keeps lexsort's order of ties
        return np.argsort(key, kind="stable")
    return order


def _arrow_text(values: np.ndarray) -> Any:
    """An object array of text (None for blank) as a pyarrow string array, or None."""
    try:
        import pyarrow as pa

        return pa.array(values, type=pa.string(), from_pandas=True)
    except Exception:  # noqa: BLE001 - no pyarrow, or text arrow cannot hold
        return None


def _strictly_rising(arr: Any) -> bool:
    """True when a pyarrow string array without nulls is in strictly rising order."""
    import pyarrow.compute as pc

    n = len(arr)
    if n < 2:
        return True
    if arr.null_count:
        return False
    return pc.all(pc.less(arr.slice(0, n - 1), arr.slice(1))).as_py() is True


def _ids_surely_unique(parts: np.ndarray, valid: np.ndarray, arrow: Any) -> bool:
    """True when the part ids in ``valid`` rows are distinct after ``str.casefold``.

    False means "maybe not": the caller then runs the exact duplicate check.
    """
    sel = parts[valid] if not valid.all() else parts
    if len(sel) < 2:
        return True
    if arrow is not None:
        try:
            import pyarrow as pa
            import pyarrow.compute as pc

            arr = arrow if valid.all() else arrow.filter(pa.array(valid))
            if pc.all(pc.string_is_ascii(arr)).as_py() is True:
                # ASCII text: casefold is lower case; ids in rising order are distinct
                low = pc.ascii_lower(arr)
                if _strictly_rising(low):
                    return True
                return len(pc.unique(low)) == len(arr)
        except Exception:  # noqa: BLE001 - fall back to Python's casefold
            pass
    try:
        keys = [s.casefold() for s in sel.tolist()]
    except AttributeError:
        return False
    return len(set(keys)) == len(keys)


def _assemble(
    schema: TableSchema, parsed: list[_Parsed], report: InventoryReport
) -> tuple[pd.DataFrame, _Points, dict[str, int], Any]:
    """Combine parsed pieces of one table: duplicates, accept/reject, warnings, defaults.

    Returns the table, its pattern points, the row counts and the accepted part ids as
    a pyarrow string array (None when not made).
    """
    counts = {"accepted": 0, "rejected": 0, "blank": 0}
    if not parsed:
        return _empty_table(schema), _Points([]), counts, None
    n_tot = sum(len(p.idx) for p in parsed)
    blank = np.concatenate([p.blank for p in parsed])
    one = len(parsed) == 1
    if one:
        files = _obj(parsed[0].piece.file, n_tot)
        sheets = _obj(parsed[0].piece.sheet, n_tot)
    else:
        files = np.concatenate([_obj(p.piece.file, len(p.idx)) for p in parsed])
        sheets = np.concatenate([_obj(p.piece.sheet, len(p.idx)) for p in parsed])
    rows = np.concatenate([p.piece.rows[p.idx] for p in parsed]).astype(np.int64)
    problems: dict[int, list[tuple[str | None, Any, str]]] = {}
    offset = 0
    for p in parsed:
        for i, pr in p.problems.items():
            problems[i + offset] = pr
        offset += len(p.idx)

    # columns a piece lacks are blank: one block of rows per piece and kind (numbers,
    # text) instead of one allocation per column
    blanks: dict[tuple[int, bool], list[np.ndarray]] = {}
    for i, p in enumerate(parsed):
        for quantity in (True, False):
            k = sum(
                1
                for c in schema.columns
                if c.is_quantity == quantity and c.name not in p.values
            )
            if k:
                block = (
                    np.full((k, len(p.idx)), np.nan)
                    if quantity
                    else np.full((k, len(p.idx)), None, dtype=object)
                )
                blanks[(i, quantity)] = list(block)

    def col_values(name: str, spec: ColumnSpec) -> np.ndarray:
        parts = []
        for i, p in enumerate(parsed):
            v = p.values.get(name)
            if v is None:
                v = blanks[(i, spec.is_quantity)].pop()
            parts.append(v)
        return np.concatenate(parts) if len(parts) > 1 else parts[0]

    values = {c.name: col_values(c.name, c) for c in schema.columns}

    # duplicate part ids: the first occurrence keeps the id
    parts = values["part"]
    arrow_all = None
    if all(p.arrow_part is not None for p in parsed):
        import pyarrow as pa

        if len(parsed) == 1:
            arrow_all = parsed[0].arrow_part
        else:
            chunks = [
                c.cast(pa.large_string())
                for p in parsed
                for c in (
                    p.arrow_part.chunks
                    if isinstance(p.arrow_part, pa.ChunkedArray)
                    else [p.arrow_part]
                )
            ]
            arrow_all = pa.chunked_array(chunks, type=pa.large_string())
    elif n_tot >= 1000:
        arrow_all = _arrow_text(parts)
    if arrow_all is not None and len(arrow_all) == n_tot:
        part_null = arrow_all.is_null().to_numpy(zero_copy_only=False).astype(bool)
    else:
        arrow_all = None
        part_null = pd.isna(parts)
    if not _ids_surely_unique(parts, ~part_null & ~blank, arrow_all):
        part_labels = np.concatenate(
            [_obj(p.headers.get("part", "part"), len(p.idx)) for p in parsed]
        )
        key = pd.Series(parts, dtype="str").str.casefold()
        valid = key.notna().to_numpy() & ~blank
        if valid.any():
            kv = key[valid]
            d = kv.duplicated(keep="first").to_numpy()
            if d.any():
                pos_valid = np.flatnonzero(valid)
                first_pos: dict[str, int] = {}
                for pos, k in zip(
                    pos_valid, kv.to_numpy(dtype=object, na_value=None), strict=True
                ):
                    first_pos.setdefault(k, pos)
                for pos in pos_valid[d]:
                    fp = first_pos[key.iat[pos]]
                    where = f"row {rows[fp]}"
                    if files[fp] != files[pos]:
                        where += f" of {files[fp]}"
                    if sheets[fp] and sheets[fp] != sheets[pos]:
                        where += f", sheet '{sheets[fp]}'"
                    problems.setdefault(int(pos), []).append(
                        (
                            part_labels[pos],
                            parts[pos],
                            f"duplicate part id (first on {where})",
                        )
                    )

    rejected = np.zeros(n_tot, dtype=bool)
    if problems:
        rejected[np.fromiter(problems.keys(), dtype=np.int64)] = True
    rejected &= ~blank
    accepted = ~rejected & ~blank
    counts = {
        "accepted": int(accepted.sum()),
        "rejected": int(rejected.sum()),
        "blank": int(blank.sum()),
    }
    for i in sorted(problems):
        if blank[i]:
            continue
        for label, val, reason in problems[i]:
            report.rejected_rows.append(
                RowIssue(
                    files[i],
                    sheets[i],
                    int(rows[i]),
                    label,
                    val,
                    reason,
                    schema.name,
                    parts[i],
                )
            )

    acc = np.flatnonzero(accepted)
    every = len(acc) == n_tot
    # the arrays are fresh and one per column: the table takes them without a copy
    data: dict[str, Any] = {}
    given: dict[str, np.ndarray] = {}  # the numeric columns as given (before defaults)
    for c in schema.columns:
        v = values[c.name] if every else values[c.name][acc]
        if c.is_quantity:
            given[c.name] = v = v.astype(float, copy=False)
            data[c.name] = pd.Series(v, copy=False)
        else:
            data[c.name] = pd.Series(v, dtype=object, copy=False)
    files_acc = files if every else files[acc]
    sheets_acc = sheets if every else sheets[acc]
    rows_acc = rows[acc]  # a copy: the table's column and the issues' rows stay apart
    data["source_file"] = pd.Series(files_acc, dtype=object, copy=False)
    data["source_sheet"] = pd.Series(sheets_acc, dtype=object, copy=False)
    data["source_row"] = pd.Series(rows_acc.copy(), dtype=np.int64, copy=False)
    df = pd.DataFrame(data, copy=False)
    # the issues read file, sheet and part lazily: from arrays apart from the table's
    src = _Src(
        files_acc if one else files_acc.copy(),
        sheets_acc if one else sheets_acc.copy(),
        rows_acc,
        values["part"][acc],
        file=parsed[0].piece.file if one else _VARIES,
        sheet=parsed[0].piece.sheet if one else _VARIES,
    )
    arrow_acc = None
    if arrow_all is not None:
        arrow_acc = arrow_all if every else arrow_all.take(acc)
    present = {k for p in parsed for k in p.values} | {
        k for p in parsed for k in p.headers
    }
    if "insulating" in df and len(df):
        df["insulating"] = df["insulating"].astype(bool)
    # kind and package as codes of their distinct values (rules, warnings)
    keycodes: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    for k in ("kind", "package"):
        if k not in df:
            continue
        if all(k in p.lut_codes for p in parsed):
            # the pieces' lookup tables, merged: equal values get one code, blank -1
            luts, codes_ = [], []
            off = 0
            for p in parsed:
                pc_, plut = p.lut_codes[k]
                # a blank cell (-1) points at the table's last entry (None) either way
                codes_.append(
                    pc_ if one else np.where(pc_ < 0, len(plut) - 1, pc_) + off
                )
                luts.append(plut)
                off += len(plut)
            lcodes, uk = pd.factorize(
                np.concatenate(luts) if len(luts) > 1 else luts[0],
                use_na_sentinel=True,
            )
            allc = np.concatenate(codes_) if len(codes_) > 1 else codes_[0]
            ck = lcodes[allc if every else allc[acc]]
        else:
            ck, uk = pd.factorize(df[k].to_numpy(dtype=object), use_na_sentinel=True)
        keycodes[k] = (np.asarray(ck, dtype=np.int64), np.asarray(uk, dtype=object))

    # pattern points of accepted rows (rows of df), one block per pattern column
    pos_to_acc = np.full(n_tot, -1, dtype=np.int64)
    pos_to_acc[acc] = np.arange(len(acc))
    blocks: list[list[Any]] = []
    offset = 0
    for p in parsed:
        for pat, param, label, vals in p.patterns:
            ok = ~np.isnan(vals)
            pos = np.flatnonzero(ok) + offset
            keep = accepted[pos]
            if keep.any():
                blocks.append(
                    [pat.name, param, label, pos_to_acc[pos[keep]], vals[ok][keep]]
                )
        offset += len(p.idx)
    lowest = None
    if schema.name == "switches":
        if blocks:  # IGBT rows: rds_on points unused
            ck, uk = keycodes["kind"]
            mos_lut = np.array([u in ("nmos", "pmos") for u in uk] + [False])
            is_mos = mos_lut[ck]
            for b in blocks:
                m = is_mos[b[3]]
                if not m.all():
                    b[3], b[4] = b[3][m], b[4][m]
            blocks = [b for b in blocks if len(b[3])]
        lowest = np.full(len(df), np.nan)
        for b in blocks:
            lowest[b[3]] = np.fmin(lowest[b[3]], b[1])
    points = _Points(blocks)

    label_of: dict[str, str] = {}
    for p in parsed:
        for k, v in p.headers.items():
            label_of.setdefault(k, v)
    _warn_plausibility(
        schema, df, src, present, points, label_of, report, keycodes, given
    )
    # blank masks of the text columns that have defaults, where the pieces know them
    text_nulls: dict[str, np.ndarray] = {}
    for c in schema.columns:
        if c.is_quantity or (
            c.default is None and (schema.name, c.name) not in RULE_DEFAULTS
        ):
            continue
        masks = []
        for p in parsed:
            if c.name in p.nulls:
                masks.append(p.nulls[c.name])
            elif c.name not in p.values:
                masks.append(np.ones(len(p.idx), dtype=bool))
            else:
                masks.append(pd.isna(p.values[c.name]))
        m_all = np.concatenate(masks) if len(masks) > 1 else masks[0]
        text_nulls[c.name] = m_all if every else m_all[acc]
    _apply_defaults(schema, df, src, report, keycodes, lowest, text_nulls)
    if schema.name == "switches":
        _warn_switches(df, src, points, report, label_of, lowest)
    elif schema.name == "heatsinks":
        _warn_heatsinks(df, src, points, report)
        df["positions"] = df["positions"].fillna(1).astype("int64")
    return df.reset_index(drop=True), points, counts, arrow_acc


def _small_codes(values: np.ndarray, most: int = 8) -> tuple[np.ndarray, int] | None:
    """Codes of the distinct values (equal values, equal codes) when there are at most
    ``most`` of them, found with a few whole-array comparisons; else None."""
    n = len(values)
    codes = np.zeros(n, dtype=np.int64)
    if n == 0:
        return codes, 0
    left = np.arange(n)
    sub = values
    for k in range(most):
        try:
            same = sub == sub[0]
        except Exception:  # noqa: BLE001 - not comparable element-wise
            return None
        if not isinstance(same, np.ndarray) or same.dtype != bool or not same[0]:
            return None  # not comparable element-wise (or NaN): let factorize decide
        if same.all():
            if k:
                codes[left] = k
            return codes, k + 1
        if k:
            codes[left[same]] = k
        keep = ~same
        left = left[keep]
        sub = sub[keep]
    return None


def _rule_reasons(
    rule: Any,
    fill: np.ndarray,
    pos: np.ndarray,
    key_codes: dict[str, tuple[np.ndarray, np.ndarray]],
) -> Any:
    """The rule's reason for every filled value; computed once per distinct
    (value, kind, package). Returns an array or a :class:`_Take` of one."""
    keycols = list(key_codes)
    small = _small_codes(fill)
    if small is not None:
        vcodes, nv = small
    else:
        vcodes, uniq_v = pd.factorize(fill, use_na_sentinel=False)
        nv = len(uniq_v)
    combined = vcodes.astype(np.int64)
    size = max(nv, 1)
    for k in keycols:
        ck, uk = key_codes[k]
        combined = combined * (len(uk) + 1) + (ck[pos] + 1)
        size *= len(uk) + 1
    if size <= 4 * len(combined) + 4096:
        # the groups are numbered densely enough to index a lookup table directly
        first = np.full(size, -1, dtype=np.int64)
        first[combined[::-1]] = np.arange(len(combined) - 1, -1, -1)
        groups = np.flatnonzero(first >= 0)
        inverse = combined
    else:
        inverse, uniq_combined = pd.factorize(combined)
        first = np.empty(len(uniq_combined), dtype=np.int64)
        first[inverse[::-1]] = np.arange(len(inverse) - 1, -1, -1)
        groups = np.arange(len(uniq_combined))
    lut = np.empty(len(first), dtype=object)
    for g in groups:
        f = first[g]
        lut[g] = rule.reason(
            fill[f],
            {
                "value": fill[f],
                **{k: key_codes[k][1][key_codes[k][0][pos[f]]] for k in keycols},
            },
        )
    return _Take(lut, inverse)


class _KeyPairs:
    """Every (kind, package) pair of a table as a small frame, and each row's pair.

    A rule that reads only these columns gives the same value on a row as on its pair,
    so it is computed on the pairs and looked up per row.
    """

    def __init__(
        self, keycols: list[str], key_codes: dict[str, tuple[np.ndarray, np.ndarray]]
    ) -> None:
        self.keycols = keycols
        self.values = [key_codes[k][1] for k in keycols]  # distinct values + None
        sizes = [len(v) for v in self.values]
        grid = np.indices(sizes).reshape(len(sizes), -1)
        self.grid = grid
        cols = {}
        self.row_pair = np.zeros(len(key_codes[keycols[0]][0]), dtype=np.int64)
        for k, size, g in zip(keycols, sizes, grid, strict=True):
            codes_k = key_codes[k][0]
            # the last slot of each column stands for blank (code -1)
            self.row_pair = self.row_pair * size + np.where(
                codes_k < 0, size - 1, codes_k
            )
            cols[k] = pd.Categorical.from_codes(
                np.where(g == size - 1, -1, g),
                categories=pd.Index(key_codes[k][1][:-1], dtype=object),
            )
        self.frame = pd.DataFrame(cols)

    def compute(self, rule: Any) -> tuple[np.ndarray, np.ndarray]:
        """The rule's value per pair, and whether it gives one."""
        fill_s = rule.compute(self.frame)
        if pd.api.types.is_float_dtype(fill_s.dtype):
            fill = fill_s.to_numpy(dtype=float)
            return fill, ~np.isnan(fill)
        fill = fill_s.to_numpy(dtype=object)
        return fill, pd.notna(fill)

    def reasons(self, rule: Any, fill: np.ndarray, used: np.ndarray) -> np.ndarray:
        """The rule's reason for each pair in ``used`` (None elsewhere)."""
        out = np.empty(len(fill), dtype=object)
        for g in used:
            row = {
                k: v[self.grid[j][g]]
                for j, (k, v) in enumerate(zip(self.keycols, self.values, strict=True))
            }
            out[g] = rule.reason(fill[g], {"value": fill[g], **row})
        return out


def _apply_defaults(
    schema: TableSchema,
    df: pd.DataFrame,
    src: _Src,
    report: InventoryReport,
    keycodes: dict[str, tuple[np.ndarray, np.ndarray]],
    lowest: np.ndarray | None = None,
    text_nulls: dict[str, np.ndarray] | None = None,
) -> None:
    """Fill blank cells from the schema's defaults; list every filled value as assumed.

    ``keycodes``: codes and distinct values of ``kind`` and ``package``; ``lowest``:
    the lowest Rds(on) gate voltage per switch (the vgs_max rule reads it);
    ``text_nulls``: blank masks of text columns, when known (else computed).
    """
    text_nulls = text_nulls or {}
    n = len(df)
    if n == 0:
        return
    keycols = [k for k in ("kind", "package") if k in df]
    key_codes = {}
    # rules see kind and package as categoricals: comparisons work on small codes
    view = df.copy(deep=False)
    for k in keycols:
        codes_k, uniq_k = keycodes[k]
        key_codes[k] = (codes_k, np.append(uniq_k, None))
        view[k] = pd.Categorical.from_codes(
            codes_k, categories=pd.Index(uniq_k, dtype=object)
        )
    if lowest is not None:
        view["_rds_lowest_vgs"] = lowest
    pairs: _KeyPairs | None = None
    for c in schema.columns:
        rule = RULE_DEFAULTS.get((schema.name, c.name))
        if c.default is None and rule is None:
            continue
        if c.is_quantity:
            cur = df[c.name].to_numpy(dtype=float)
            blank = np.isnan(cur)
        else:
            cur = df[c.name].to_numpy(dtype=object)
            known = text_nulls.get(c.name)
            blank = known if known is not None else pd.isna(cur)
        if not blank.any():
            continue
        if rule is None:
            pos = np.flatnonzero(blank)
            fill: Any = c.default
            reasons: Any = c.default_reason
        elif (
            keycols
            and getattr(rule, "reads", None) is not None
            and set(rule.reads) <= set(keycols)
        ):
            # the rule reads only kind/package: compute it once per distinct pair
            if pairs is None:
                pairs = _KeyPairs(keycols, key_codes)
            fill_p, has_p = pairs.compute(rule)
            pos = np.flatnonzero(blank)
            pos = pos[has_p[pairs.row_pair[pos]]]
            if len(pos) == 0:
                continue
            at = pairs.row_pair[pos]
            fill = fill_p[at]
            reasons = _Take(pairs.reasons(rule, fill_p, np.unique(at)), at)
        else:
            fill_s = rule.compute(view)
            # the blank cells the rule has a value for
            pos = np.flatnonzero(blank)
            if pd.api.types.is_float_dtype(fill_s.dtype):
                fill_all = fill_s.to_numpy(dtype=float)
                pos = pos[~np.isnan(fill_all[pos])]
            else:
                fill_all = fill_s.to_numpy(dtype=object)
                pos = pos[pd.notna(fill_all[pos])]
            if len(pos) == 0:
                continue
            fill = fill_all[pos]
            reasons = _rule_reasons(rule, fill, pos, key_codes)
        new = cur.copy()
        if c.is_quantity:
            new[pos] = np.asarray(fill, dtype=float)
            df[c.name] = new
            view[c.name] = new
        else:
            new[blank] = None  # as to_numpy(na_value=None): every blank kind is None
            new[pos] = fill
            df[c.name] = pd.Series(new, dtype=object, index=df.index)
        _add_block(report.assumed, src, pos, schema.name, c.name, fill, reasons)


def _show(v: float, unit: str | None) -> str:
    """Format an SI value for a message in a readable unit."""
    if unit == "ohm" and v < 1:
        return f"{v * 1e3:g} mΩ"
    scaled = {
        "C": (1e9, "nC"),
        "F": (1e12, "pF"),
        "J": (1e3, "mJ"),
        "m": (1e3, "mm"),
        "kg": (1e3, "g"),
    }
    if unit in scaled:
        k, u = scaled[unit]
        return f"{v * k:g} {u}"
    u = _UNIT_SHOW.get(unit or "", unit or "")
    return f"{v:g}{(' ' + u) if u else ''}"


def _warn_rows(
    report: InventoryReport,
    src: _Src,
    mask: np.ndarray,
    table: str,
    column: str,
    values: np.ndarray,
    reason: Any,
    unit: str | None = None,
) -> None:
    """Warnings for the rows in ``mask``; ``reason`` is text or a function of the value.

    With ``unit``, numeric values are shown in a readable unit (``30 nC``, ``10 mΩ``).
    """
    pos = np.flatnonzero(mask)
    if len(pos) == 0:
        return
    raw_vals = np.asarray(values)[pos].astype(object)
    reasons = [reason(v) for v in raw_vals] if callable(reason) else reason
    vals = (
        np.array([_show(float(v), unit) for v in raw_vals], dtype=object)
        if unit is not None
        else raw_vals
    )
    _add_block(report.warnings, src, pos, table, column, vals, reasons)


def _warn_plausibility(
    schema: TableSchema,
    df: pd.DataFrame,
    src: _Src,
    present: set[str],
    points: _Points,
    label_of: dict[str, str],
    report: InventoryReport,
    keycodes: dict[str, tuple[np.ndarray, np.ndarray]],
    given: dict[str, np.ndarray] | None = None,
) -> None:
    """Values outside the schema's plausible range (given values only, before defaults).

    ``given``: the table's numeric columns as arrays, when at hand (else read from df).
    """
    if not len(df):
        return
    for c in schema.columns:
        if not c.is_quantity or c.plausible is None or c.name not in present:
            continue
        v = (
            given[c.name]
            if given is not None and c.name in given
            else df[c.name].to_numpy(dtype=float)
        )
        lo, hi = c.plausible
        with np.errstate(invalid="ignore"):
            bad = np.zeros(len(v), dtype=bool)
            if lo is not None:
                bad |= v < lo
            if hi is not None:
                bad |= v > hi
        if not bad.any():
            continue
        unit = c.si_unit
        rng = f"{_show(lo, unit) if lo is not None else '−∞'} … {_show(hi, unit) if hi is not None else '∞'}"
        _warn_rows(
            report,
            src,
            bad,
            schema.name,
            label_of.get(c.name, c.name),
            v,
            lambda x, rng=rng, unit=unit: (
                f"implausible {_show(x, unit)} (expected {rng}); check the value and its unit"
            ),
            unit=unit or "",
        )
    for p in schema.patterns:
        if p.plausible is None or not len(points):
            continue
        lo, hi = p.plausible
        # block by block: the warnings come in the order of the points
        found = []
        for name, _param, label, rows_b, v in points.blocks:
            if name != p.name:
                continue
            bad = (v < lo) | (v > hi)
            if bad.any():
                found.append((rows_b[bad], label, v[bad]))
        if found:
            vbad = np.concatenate([f[2] for f in found])
            _add_block(
                report.warnings,
                src,
                np.concatenate([f[0] for f in found]),
                schema.name,
                np.concatenate([np.full(len(f[0]), f[1], dtype=object) for f in found]),
                [_show(x, p.si_unit) for x in vbad],
                [
                    f"implausible {_show(x, p.si_unit)} (expected {_show(lo, p.si_unit)} … {_show(hi, p.si_unit)}); check the value and its unit"
                    for x in vbad
                ],
            )
    if "fits" in df:
        fits = df["fits"].to_numpy(dtype=object)
        codes, uniq = pd.factorize(pd.Series(fits, dtype=object), use_na_sentinel=True)
        for k, t in enumerate(uniq):
            unknown = [pk for pk in (t or ()) if pk not in KNOWN_PACKAGES]
            if unknown:
                _warn_rows(
                    report,
                    src,
                    codes == k,
                    schema.name,
                    label_of.get("fits", "fits"),
                    fits,
                    f"package{'s' if len(unknown) > 1 else ''} {', '.join(repr(u) for u in unknown)} not known to the tool; kept as written",
                )
    if "package" in df and schema.name == "switches":
        codes, uniq = keycodes["package"]
        lut = np.array([u not in KNOWN_PACKAGES for u in uniq] + [False], dtype=bool)
        unknown = lut[codes]
        if unknown.any():
            _warn_rows(
                report,
                src,
                unknown,
                schema.name,
                label_of.get("package", "package"),
                df["package"].to_numpy(dtype=object, na_value=None),
                lambda p: (
                    f"package '{p}' is not one the tool knows; kept as written (no rth_ja or tab default)"
                ),
            )


def _warn_switches(
    df: pd.DataFrame,
    src: _Src,
    points: _Points,
    report: InventoryReport,
    label_of: dict[str, str],
    lowest: np.ndarray,
) -> None:
    """Cross-column checks of the switch table (after defaults).

    ``lowest``: the lowest Rds(on) gate voltage of each row (NaN without Rds(on) points).
    """
    if not len(df):
        return
    lab = label_of.get
    none = np.full(len(df), None, dtype=object)

    # IGBT energies need their test point; Foster terms come in pairs
    def nan(name: str) -> np.ndarray:
        return np.isnan(df[name].to_numpy(dtype=float))

    e_any = ~nan("e_on") | ~nan("e_off")
    no_pt = e_any & (nan("e_test_v") | nan("e_test_i"))
    if no_pt.any():
        _warn_rows(
            report,
            src,
            no_pt,
            "switches",
            lab("e_on", "e_on"),
            none,
            "switching energies without their test point (e_test_v, e_test_i) cannot be scaled; e_on and e_off are ignored",
        )
        df.loc[no_pt, ["e_on", "e_off"]] = np.nan
    unpaired = np.zeros(len(df), dtype=bool)
    for i in range(1, 6):
        unpaired |= nan(f"zth_r{i}") != nan(f"zth_tau{i}")
    if unpaired.any():
        _warn_rows(
            report,
            src,
            unpaired,
            "switches",
            lab("zth_r1", "zth_r1"),
            none,
            "Foster terms come in pairs (zth_rN with zth_tauN); the Foster data of this part is ignored",
        )
        df.loc[
            unpaired,
            [f"zth_r{i}" for i in range(1, 6)] + [f"zth_tau{i}" for i in range(1, 6)],
        ] = np.nan
    qg = df["qg"].to_numpy(dtype=float)
    with np.errstate(invalid="ignore"):
        for sub in ("qgs", "qgd"):
            q = df[sub].to_numpy(dtype=float)
            _warn_rows(
                report,
                src,
                q > qg * (1 + 1e-9),
                "switches",
                lab(sub, sub),
                q,
                lambda x, sub=sub: (
                    f"{sub} {_show(x, 'C')} exceeds qg; check the gate-charge columns"
                ),
                unit="C",
            )
        ipulse = df["i_pulse"].to_numpy(dtype=float)
        irat = df["i_rating"].to_numpy(dtype=float)
        _warn_rows(
            report,
            src,
            ipulse < irat,
            "switches",
            lab("i_pulse", "i_pulse"),
            ipulse,
            lambda x: (
                f"pulsed current {x:g} A is below the continuous rating; check the columns"
            ),
            unit="A",
        )
        vth = df["vth_max"].to_numpy(dtype=float)
        vgsmax = df["vgs_max"].to_numpy(dtype=float)
        _warn_rows(
            report,
            src,
            vth >= vgsmax,
            "switches",
            lab("vth_max", "vth_max"),
            vth,
            lambda x: f"threshold {x:g} V is not below vgs_max; check the columns",
            unit="V",
        )
    blocks = [b for b in points.blocks if b[0] == "rds_on"]
    if blocks:
        levels = np.unique(np.array([b[1] for b in blocks], dtype=float))
        # walk the gate voltages upwards: each point meets the previous one of its row
        prev_val = np.full(len(df), np.nan)
        prev_vgs = np.full(len(df), np.nan)
        rising: list[tuple[np.ndarray, ...]] = []
        over: list[tuple[np.ndarray, ...]] = []
        for j, level in enumerate(levels):
            for _name, param, label, rows_b, vals_b in blocks:
                if param != level:
                    continue
                pv = prev_val[rows_b]
                with np.errstate(invalid="ignore"):
                    up = vals_b > pv * (1 + 1e-9)  # False where no previous point
                if up.any():
                    r_up = rows_b[up]
                    rising.append(
                        (
                            r_up,
                            j,
                            label,
                            vals_b[up],
                            np.full(len(r_up), param),
                            prev_vgs[r_up],
                        )
                    )
                hi = param > vgsmax[rows_b] + 1e-9
                if hi.any():
                    over.append((rows_b[hi], j, label, vals_b[hi], param))
                prev_val[rows_b] = vals_b
                prev_vgs[rows_b] = param
        nlev = len(levels)
        if rising:
            # in the order of the points sorted by row, then gate voltage
            r_rows = np.concatenate([x[0] for x in rising])
            key = r_rows * nlev + np.concatenate(
                [np.full(len(x[0]), x[1]) for x in rising]
            )
            order = np.argsort(key, kind="stable")
            r_lab = np.concatenate(
                [np.full(len(x[0]), x[2], dtype=object) for x in rising]
            )[order]
            r_val = np.concatenate([x[3] for x in rising])[order]
            r_vgs = np.concatenate([x[4] for x in rising])[order]
            r_prev = np.concatenate([x[5] for x in rising])[order]
            _add_block(
                report.warnings,
                src,
                r_rows[order],
                "switches",
                r_lab,
                [_show(x, "ohm") for x in r_val],
                [
                    f"Rds(on) at {v:g} V is higher than at {pv:g} V; it should fall as the gate voltage rises: check the columns"
                    for v, pv in zip(r_vgs, r_prev, strict=True)
                ],
            )
        if over:
            o_rows = np.concatenate([x[0] for x in over])
            key = o_rows * nlev + np.concatenate(
                [np.full(len(x[0]), x[1]) for x in over]
            )
            order = np.argsort(key, kind="stable")
            o_rows = o_rows[order]
            o_lab = np.concatenate(
                [np.full(len(x[0]), x[2], dtype=object) for x in over]
            )[order]
            o_val = np.concatenate([x[3] for x in over])[order]
            o_vgs = np.concatenate([np.full(len(x[0]), x[4]) for x in over])[order]
            _add_block(
                report.warnings,
                src,
                o_rows,
                "switches",
                o_lab,
                [_show(x, "ohm") for x in o_val],
                [
                    f"given at {v:g} V, above vgs_max {vgsmax[r]:g} V"
                    for v, r in zip(o_vgs, o_rows, strict=True)
                ],
            )
        with np.errstate(invalid="ignore"):
            bad = vth >= lowest - 1e-9
        _warn_rows(
            report,
            src,
            bad,
            "switches",
            lab("vth_max", "vth_max"),
            vth,
            lambda x: (
                f"threshold {x:g} V is not below the lowest Rds(on) gate voltage; check the columns"
            ),
            unit="V",
        )


def _warn_heatsinks(
    df: pd.DataFrame, src: _Src, points: _Points, report: InventoryReport
) -> None:
    if not len(points) or not len(df):
        return
    nat = df["rth_sa"].to_numpy(dtype=float)
    found = []
    for name, _param, label, rows_b, v in points.blocks:
        if name != "rth_sa":
            continue
        with np.errstate(invalid="ignore"):
            bad = v > nat[rows_b] * (1 + 1e-9)
        if bad.any():
            found.append((rows_b[bad], label, v[bad]))
    if found:
        rowi = np.concatenate([f[0] for f in found])
        vbad = np.concatenate([f[2] for f in found])
        _add_block(
            report.warnings,
            src,
            rowi,
            "heatsinks",
            np.concatenate([np.full(len(f[0]), f[1], dtype=object) for f in found]),
            [_show(x, "K/W") for x in vbad],
            [
                f"{x:g} K/W with airflow is above the natural-convection rth_sa {nat[i]:g} K/W; check the columns"
                for x, i in zip(vbad, rowi, strict=True)
            ],
        )


def _sorted_by_part(df: pd.DataFrame, second: str) -> pd.DataFrame:
    """Sort a long table by part (text) then ``second`` without comparing every row."""
    codes, uniq = pd.factorize(df["part"].to_numpy(dtype=object))
    names = np.array([str(u) for u in uniq])
    rank = np.empty(len(uniq), dtype=np.int64)
    rank[np.argsort(names, kind="stable")] = np.arange(len(uniq))
    order = np.lexsort((df[second].to_numpy(dtype=float), rank[codes]))
    return df.iloc[order].reset_index(drop=True)


@functools.cache
def _inferred_text_dtype() -> Any:
    """The dtype pandas gives a column built from an object array of text."""
    return pd.Series(np.array(["a"], dtype=object)).dtype


def _points_table(
    points: _Points,
    pattern: str,
    param_col: str,
    value_col: str,
    parts: np.ndarray,
    arrow_parts: Any,
) -> pd.DataFrame | None:
    """One pattern's points as a long table ``part, <param>, <value>`` sorted by part
    then parameter; None when there are none.

    ``parts``: the part id of each row of the table (object); ``arrow_parts``: the same
    as a pyarrow string array, or None.
    """
    rows, params, vals, code, levels = points.of(pattern)
    if not len(rows):
        return None
    # the table's part column is what pandas infers for text: build that from arrow
    text_dtype = _inferred_text_dtype()
    fast = (
        arrow_parts is not None
        and isinstance(text_dtype, pd.StringDtype)
        and text_dtype.storage == "pyarrow"
    )
    if fast:
        try:
            import pyarrow.compute as pc

            # numpy compares text without trailing NUL characters: keep its order
            if (
                arrow_parts.null_count
                or pc.any(pc.ends_with(arrow_parts, "\x00")).as_py()
            ):
                raise ValueError("blank ids or text with trailing NUL")
            if _strictly_rising(arrow_parts):  # rows already in id order
                order = _pair_order(rows, params, code, levels, runs=True)
            else:
                # accepted part ids are distinct (duplicates are rejected), so a row's
                # rank in the sorted ids orders the rows as the ids do
                by_id = pc.sort_indices(arrow_parts).to_numpy()
                rank = np.empty(len(by_id), dtype=np.int64)
                rank[by_id] = np.arange(len(by_id))
                order = _pair_order(rank[rows], params, code, levels)
            part_col = pd.Series(arrow_parts.take(rows[order]), dtype=text_dtype)
        except Exception:  # noqa: BLE001 - the plain way below gives the same table
            fast = False
    if not fast:
        table = pd.DataFrame(
            {
                "part": parts[rows],
                param_col: params,
                value_col: vals,
            }
        )
        return _sorted_by_part(table, param_col)
    return pd.DataFrame(
        {"part": part_col, param_col: params[order], value_col: vals[order]}
    )


# =============================================================================== entry


def load_inventory(
    sources: Sequence[str | os.PathLike | tuple[str, bytes]],
) -> Inventory:
    """Read and check an inventory.

    Parameters
    ----------
    sources : paths (files or a folder of CSV files), or ``(file name, bytes)`` pairs from
        an upload: several CSV files (one per table), one workbook (one sheet per table),
        or one CSV with a ``category`` column.

    Returns
    -------
    Inventory
        Accepted rows as SI tables and the :class:`InventoryReport`.

    Raises
    ------
    InventoryError
        A file cannot be read at all: missing, empty, not a spreadsheet, password
        protected, too large, a required column missing, or no switches table.
    """
    files = _expand_sources(sources)
    report = InventoryReport()
    pieces: list[_Piece] = []
    for name, data in files:
        ps, info, notes = _read_source(name, data)
        report.files.append(info)
        report.warnings.extend(notes)
        is_wb = info["format"] == "xlsx"
        for p in ps:
            pieces.extend(_assign_tables(p, is_wb))

    by_table: dict[str, list[_Parsed]] = {t: [] for t in TABLE_ORDER}
    for p in pieces:
        n = len(p.frame)
        if p.table != "__category__":
            by_table[p.table].append(
                _parse_piece(TABLES[p.table], p, np.arange(n), report, True)
            )
            continue
        cat_j = next(
            j
            for j, hd in enumerate(p.headers)
            if fold_header(_split_header_unit(hd)[0]) in _CATEGORY_HEADERS
        )
        cats = _text_array(p.frame[cat_j])
        blank = _blank_mask(p.frame)
        codes, uniq = pd.factorize(pd.Series(cats, dtype=object), use_na_sentinel=True)
        table_of = [table_for_name(u) for u in uniq]
        assigned = np.full(n, None, dtype=object)
        for k, t in enumerate(table_of):
            if t is not None:
                assigned[codes == k] = t
        for i in np.flatnonzero(pd.isna(pd.Series(assigned, dtype=object)).to_numpy()):
            if blank[i]:
                report.unassigned["blank"] += 1
                continue
            report.unassigned["rejected"] += 1
            c = cats[i]
            reason = (
                "missing category: say which table the row belongs to"
                if c is None
                else f"unknown category '{c}' (use switches, heatsinks, interfaces, diodes or drivers)"
            )
            report.rejected_rows.append(
                RowIssue(p.file, p.sheet, int(p.rows[i]), p.headers[cat_j], c, reason)
            )
        # columns that belong to no table at all
        for j, hd in enumerate(p.headers):
            if j == cat_j:
                continue
            k, _ = _known_in_any_table(hd)
            if not k and (hd.strip() or p.frame[j].notna().any()):
                report.warnings.append(
                    RowIssue(
                        p.file,
                        p.sheet,
                        p.header_row,
                        hd or f"column {j + 1} (no header)",
                        None,
                        "not an inventory column; ignored",
                    )
                )
        for t in TABLE_ORDER:
            idx = np.flatnonzero(assigned == t)
            if len(idx):
                by_table[t].append(_parse_piece(TABLES[t], p, idx, report, False))

    if not by_table["switches"]:
        raise InventoryError(
            "no switches table found: name a sheet or file 'switches', or add a 'category' column",
            Location(file=", ".join(f for f, _ in files)),
        )

    frames: dict[str, pd.DataFrame] = {}
    rds_points = pd.DataFrame(
        {
            "part": pd.Series([], dtype=object),
            "vgs": pd.Series([], dtype=float),
            "rds_on": pd.Series([], dtype=float),
        }
    )
    sink_airflow = pd.DataFrame(
        {
            "part": pd.Series([], dtype=object),
            "airflow": pd.Series([], dtype=float),
            "rth_sa": pd.Series([], dtype=float),
        }
    )
    for t in TABLE_ORDER:
        df, pts, counts, arrow_parts = _assemble(TABLES[t], by_table[t], report)
        frames[t] = df
        report.tables[t] = counts
        # point columns: Rds(on) per gate voltage, RθSA per airflow
        axes = {"switches": ("rds_on", "vgs"), "heatsinks": ("rth_sa", "airflow")}
        if len(pts) and t in axes:
            value, axis = axes[t]
            table = _points_table(
                pts, value, axis, value, df["part"].to_numpy(dtype=object), arrow_parts
            )
            if table is not None and t == "switches":
                rds_points = table
            elif table is not None:
                sink_airflow = table

    def order(i: RowIssue) -> tuple:
        return (
            TABLE_ORDER.index(i.table) if i.table in TABLE_ORDER else -1,
            str(i.file),
            str(i.sheet),
            i.row or 0,
        )

    report.rejected_rows.sort(key=order)
    if len(report.warnings) < 100_000:
        report.warnings.sort(key=order)
    return Inventory(
        switches=frames["switches"],
        heatsinks=frames["heatsinks"],
        interfaces=frames["interfaces"],
        diodes=frames["diodes"],
        drivers=frames["drivers"],
        rds_points=rds_points,
        sink_airflow=sink_airflow,
        report=report,
    )
