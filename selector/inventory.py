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


class IssueList(Sequence[RowIssue]):
    """A list of :class:`RowIssue` stored column-wise in blocks.

    Large inventories produce hundreds of thousands of assumed values; they are kept as
    arrays and turned into ``RowIssue`` objects only when read. Behaves like a read-only
    list with ``append``, ``extend``, ``add_columns`` and ``sort``.
    """

    def __init__(self, items: Any = ()) -> None:
        self._blocks: list[Any] = []  # list[RowIssue] or dict of equal-length arrays
        self._cache: list[RowIssue] | None = None
        if items:
            self.extend(items)

    def append(self, issue: RowIssue) -> None:
        self._cache = None
        if not self._blocks or not isinstance(self._blocks[-1], list):
            self._blocks.append([])
        self._blocks[-1].append(issue)

    def extend(self, issues: Any) -> None:
        for i in issues:
            self.append(i)

    def add_columns(self, **cols: np.ndarray) -> None:
        """Append issues given as equal-length arrays, one per RowIssue field."""
        n = len(cols["row"])
        if n:
            self._cache = None
            self._blocks.append({k: cols[k] for k in _ISSUE_FIELDS})

    def _items(self) -> list[RowIssue]:
        if self._cache is None:
            out: list[RowIssue] = []
            for b in self._blocks:
                if isinstance(b, list):
                    out.extend(b)
                else:
                    rows = b["row"].tolist()
                    out.extend(
                        RowIssue(f, sh, r, c, v, why, t, pt)
                        for f, sh, r, c, v, why, t, pt in zip(
                            b["file"],
                            b["sheet"],
                            rows,
                            b["column"],
                            b["value"],
                            b["reason"],
                            b["table"],
                            b["part"],
                            strict=True,
                        )
                    )
            self._cache = out
        return self._cache

    def __len__(self) -> int:
        return sum(
            len(b) if isinstance(b, list) else len(b["row"]) for b in self._blocks
        )

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
                parts.append(
                    pd.DataFrame(
                        {
                            k: pd.Series(np.asarray(b[k], dtype=object), dtype=object)
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


def _parse_param(p: PatternSpec, text: str) -> float | None:
    t = re.sub(
        r"^\s*(?:vgs|vge|v_gs|v|airflow|v_air|air)\s*=\s*", "", text, flags=re.I
    ).strip()
    t = re.sub(r"(?<=\d)\s*v$", "V", t)  # "4.5v"
    try:
        val = to_si(t, p.param_unit)
    except Exception:  # noqa: BLE001 - any unparseable parameter
        return None
    if check_unit(t.lstrip("0123456789.,+-± ") or p.param_unit, p.param_si) is not None:
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
                and check_unit(m["unit"], schema.column_map[name2].si_unit or "")
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
    text, encoding = _decode(name, data)
    codec = _CODECS.get(encoding)
    if not text.strip():
        raise _loc_error("file is empty", file=name)
    head = text[:65536]
    ctrl = sum(1 for ch in head[:8192] if ord(ch) < 32 and ch not in "\t\r\n")
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
    body = text.split("\n", h + 1)[h + 1] if text.count("\n") > h else ""
    # decimal mark: from the cells, never guessed against the evidence
    sample = body[:262144]
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
    all_text = decimal is None and _has_ambiguous_dot(body)
    ncol = max(len(headers), 1)
    frame: pd.DataFrame
    extra = None
    try:
        if all_text:
            raise ValueError("read as text")
        # the C parser reads the bytes itself (much faster than a decoded StringIO);
        # a lone carriage return above the body would shift its line count: use text
        head_part = text[: len(text) - len(body)]
        lone_cr = "\r" in head_part.replace("\r\n", "")
        source: Any = (
            io.StringIO(body) if lone_cr or codec is None else io.BytesIO(data)
        )
        skip = 0 if isinstance(source, io.StringIO) else h + 1
        with warnings.catch_warnings():
            # extra cells must not be cut silently
            warnings.simplefilter("error", pd.errors.ParserWarning)
            frame = pd.read_csv(
                source,
                encoding=None if isinstance(source, io.StringIO) else codec,
                skiprows=skip,
                sep=sep,
                header=None,
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
            records = list(csv.reader(io.StringIO(body), delimiter=sep))
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
    if not data or not data.strip():
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


def _text_array_fast(col: pd.Series) -> np.ndarray:
    if col.dtype != object and pd.api.types.is_string_dtype(col.dtype):
        arr = col.str.strip().to_numpy(dtype=object, na_value=None)
        arr[arr == ""] = None
        return arr
    return _text_array(col)


def _factor_text(col: pd.Series) -> tuple[np.ndarray, list]:
    """Codes and distinct stripped texts of a text column (-1 for blank cells)."""
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
        if col.dtype.kind in "iufb":
            nonblank |= col.notna().to_numpy()
        else:
            text_cols.append(c)
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
                why = check_unit(m.unit, spec.si_unit or "")
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
            why = check_unit(m.unit, p.si_unit)
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
    codes_of: dict[str, tuple[np.ndarray, list]] = {}
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
                txt = _text_array_fast(col)
                values[spec.name] = txt
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
            elif spec.dtype == "list":
                lut = np.empty(len(uniq) + 1, dtype=object)
                for k, u in enumerate(uniq):
                    items = [normalise_package(x) for x in re.split(r"[;,/|+]", str(u))]
                    items = tuple(dict.fromkeys(x for x in items if x))
                    lut[k] = items if items else None
                values[spec.name] = lut[codes]
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
                kind_arr = values["kind"]
            elif spec.name == "package":
                lut = np.array(
                    [normalise_package(u) for u in uniq] + [None], dtype=object
                )
                values[spec.name] = lut[codes]
    if "tab" in codes_of:
        tcodes, tuniq = codes_of["tab"]
        kinds_ = kind_arr if kind_arr is not None else np.full(n, None, dtype=object)
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
    for spec in schema.columns:
        if spec.required is False:
            continue
        label = headers.get(spec.name, spec.name)
        have = values.get(spec.name)
        if have is None:
            missing_v = np.ones(n, dtype=bool)
        elif have.dtype == object:
            missing_v = pd.isna(have)
        else:
            missing_v = np.isnan(have)
        if spec.required is not True:
            if kinds is None:
                continue
            missing_v &= np.isin(kinds.astype(str), spec.required)
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
        need = np.isin(kinds.astype(str), p.required)
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
    return _Parsed(piece, idx, values, headers, pats, blank, problems)


# =============================================================================== assembly


def _empty_table(schema: TableSchema) -> pd.DataFrame:
    cols: dict[str, pd.Series] = {}
    for c in schema.columns:
        dtype = float if c.is_quantity else (bool if c.dtype == "bool" else object)
        cols[c.name] = pd.Series([], dtype=dtype)
    cols["source_file"] = pd.Series([], dtype=object)
    cols["source_sheet"] = pd.Series([], dtype=object)
    cols["source_row"] = pd.Series([], dtype="int64")
    return pd.DataFrame(cols)


def _obj(a: Any, n: int | None = None) -> np.ndarray:
    """An object array (a scalar is repeated ``n`` times)."""
    if n is not None and not isinstance(a, np.ndarray | list | tuple | pd.Series):
        out = np.empty(n, dtype=object)
        out[:] = [a] * n if isinstance(a, tuple) else a
        return out
    if isinstance(a, pd.Series):
        return a.to_numpy(dtype=object)
    return np.asarray(a, dtype=object)


_Src = tuple  # (files, sheets, rows, parts) of an assembled table, as arrays


def _add_block(
    target: IssueList,
    src: _Src,
    pos: np.ndarray,
    table: str,
    column: Any,
    value: Any,
    reason: Any,
) -> None:
    """Append issues for rows ``pos`` of an assembled table, column-wise."""
    if len(pos) == 0:
        return
    n = len(pos)
    target.add_columns(
        file=src[0][pos],
        sheet=src[1][pos],
        row=src[2][pos],
        column=_obj(column, n),
        value=_obj(value, n),
        reason=_obj(reason, n),
        table=_obj(table, n),
        part=src[3][pos],
    )


def _assemble(
    schema: TableSchema, parsed: list[_Parsed], report: InventoryReport
) -> tuple[pd.DataFrame, pd.DataFrame, dict[str, int]]:
    """Combine parsed pieces of one table: duplicates, accept/reject, warnings, defaults."""
    counts = {"accepted": 0, "rejected": 0, "blank": 0}
    if not parsed:
        return _empty_table(schema), pd.DataFrame(), counts
    n_tot = sum(len(p.idx) for p in parsed)
    blank = np.concatenate([p.blank for p in parsed])
    files = np.concatenate([_obj(p.piece.file, len(p.idx)) for p in parsed])
    sheets = np.concatenate([_obj(p.piece.sheet, len(p.idx)) for p in parsed])
    rows = np.concatenate([p.piece.rows[p.idx] for p in parsed]).astype(np.int64)
    problems: dict[int, list[tuple[str | None, Any, str]]] = {}
    offset = 0
    for p in parsed:
        for i, pr in p.problems.items():
            problems[i + offset] = pr
        offset += len(p.idx)

    def col_values(name: str, spec: ColumnSpec | None) -> np.ndarray:
        parts = []
        for p in parsed:
            v = p.values.get(name)
            if v is None:
                quantity = spec is not None and spec.is_quantity
                v = (
                    np.full(len(p.idx), np.nan)
                    if quantity
                    else np.full(len(p.idx), None, dtype=object)
                )
            parts.append(v)
        return np.concatenate(parts) if len(parts) > 1 else parts[0]

    values = {c.name: col_values(c.name, c) for c in schema.columns}
    part_label = {id(p): p.headers.get("part", "part") for p in parsed}
    part_labels = np.concatenate([_obj(part_label[id(p)], len(p.idx)) for p in parsed])

    # duplicate part ids: the first occurrence keeps the id
    parts = values["part"]
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
    data: dict[str, Any] = {}
    for c in schema.columns:
        v = values[c.name][acc]
        if c.is_quantity:
            data[c.name] = pd.Series(v.astype(float), copy=False)
        else:
            data[c.name] = pd.Series(v, dtype=object)
    data["source_file"] = pd.Series(files[acc], dtype=object)
    data["source_sheet"] = pd.Series(sheets[acc], dtype=object)
    data["source_row"] = pd.Series(rows[acc], dtype=np.int64)
    df = pd.DataFrame(data)
    src = (files[acc], sheets[acc], rows[acc], values["part"][acc])
    present = {k for p in parsed for k in p.values} | {
        k for p in parsed for k in p.headers
    }
    if "insulating" in df and len(df):
        df["insulating"] = df["insulating"].astype(bool)

    # pattern points of accepted rows, as a long table (_row = row of df)
    pos_to_acc = np.full(n_tot, -1, dtype=np.int64)
    pos_to_acc[acc] = np.arange(len(acc))
    pts = []
    offset = 0
    for p in parsed:
        for pat, param, label, vals in p.patterns:
            ok = ~np.isnan(vals)
            pos = np.flatnonzero(ok) + offset
            keep = accepted[pos]
            if keep.any():
                pts.append(
                    pd.DataFrame(
                        {
                            "_row": pos_to_acc[pos[keep]],
                            "pattern": pat.name,
                            "param": param,
                            "label": pd.Series(
                                np.full(int(keep.sum()), label, dtype=object),
                                dtype=object,
                            ),
                            "value": vals[ok][keep],
                        }
                    )
                )
        offset += len(p.idx)
    points = (
        pd.concat(pts, ignore_index=True)
        if pts
        else pd.DataFrame(
            {
                "_row": pd.Series([], dtype=np.int64),
                "pattern": pd.Series([], dtype=object),
                "param": pd.Series([], dtype=float),
                "label": pd.Series([], dtype=object),
                "value": pd.Series([], dtype=float),
            }
        )
    )
    if schema.name == "switches" and len(points):
        is_mos = df["kind"].isin(("nmos", "pmos")).to_numpy()[points["_row"].to_numpy()]
        points = points[is_mos].reset_index(
            drop=True
        )  # IGBT rows: rds_on points unused
    if schema.name == "switches":
        lowest = np.full(len(df), np.nan)
        if len(points):
            low = points.groupby("_row")["param"].min()
            lowest[low.index.to_numpy()] = low.to_numpy()
        df["_rds_lowest_vgs"] = lowest

    label_of: dict[str, str] = {}
    for p in parsed:
        for k, v in p.headers.items():
            label_of.setdefault(k, v)
    _warn_plausibility(schema, df, src, present, points, label_of, report)
    _apply_defaults(schema, df, src, report)
    if schema.name == "switches":
        _warn_switches(df, src, points, report, label_of)
        df = df.drop(columns="_rds_lowest_vgs")
    elif schema.name == "heatsinks":
        _warn_heatsinks(df, src, points, report)
        df["positions"] = df["positions"].fillna(1).astype("int64")
    points["part"] = (
        src[3][points["_row"].to_numpy(dtype=np.int64)]
        if len(points)
        else pd.Series([], dtype=object)
    )
    return df.reset_index(drop=True), points, counts


def _apply_defaults(
    schema: TableSchema, df: pd.DataFrame, src: _Src, report: InventoryReport
) -> None:
    """Fill blank cells from the schema's defaults; list every filled value as assumed."""
    n = len(df)
    if n == 0:
        return
    keycols = [k for k in ("kind", "package") if k in df]
    key_codes = {}
    # rules see kind and package as categoricals: comparisons work on small codes
    view = df.copy(deep=False)
    for k in keycols:
        codes_k, uniq_k = pd.factorize(
            df[k].to_numpy(dtype=object), use_na_sentinel=True
        )
        key_codes[k] = (codes_k, np.append(np.asarray(uniq_k, dtype=object), None))
        view[k] = pd.Categorical.from_codes(
            codes_k, categories=pd.Index(uniq_k, dtype=object)
        )
    for c in schema.columns:
        rule = RULE_DEFAULTS.get((schema.name, c.name))
        if c.default is None and rule is None:
            continue
        cur = df[c.name]
        blank = cur.isna().to_numpy()
        if not blank.any():
            continue
        if rule is None:
            use = blank
            pos = np.flatnonzero(use)
            fill = _obj(c.default, len(pos))
            reasons = _obj(c.default_reason, len(pos))
        else:
            fill_s = rule.compute(view)
            numeric = pd.api.types.is_float_dtype(fill_s.dtype)
            fill_all = (
                fill_s.to_numpy(dtype=float)
                if numeric
                else fill_s.to_numpy(dtype=object)
            )
            use = blank & fill_s.notna().to_numpy()
            pos = np.flatnonzero(use)
            if len(pos) == 0:
                continue
            fill = fill_all[pos]
            vcodes, _ = pd.factorize(fill, use_na_sentinel=False)
            combined = vcodes.astype(np.int64)
            for k in keycols:
                ck, uk = key_codes[k]
                combined = combined * (len(uk) + 1) + ck[pos]
            inverse, uniq_combined = pd.factorize(combined)
            first = np.empty(len(uniq_combined), dtype=np.int64)
            first[inverse[::-1]] = np.arange(len(inverse) - 1, -1, -1)
            lut = np.array(
                [
                    rule.reason(
                        fill[f],
                        {
                            "value": fill[f],
                            **{
                                k: key_codes[k][1][key_codes[k][0][pos[f]]]
                                for k in keycols
                            },
                        },
                    )
                    for f in first
                ],
                dtype=object,
            )
            reasons = lut[inverse]
        if c.is_quantity:
            new = cur.to_numpy(dtype=float).copy()
            new[pos] = np.asarray(fill, dtype=float)
            df[c.name] = new
            view[c.name] = new
        else:
            new = cur.to_numpy(dtype=object, na_value=None).copy()
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
    raw_vals = np.asarray(values, dtype=object)[pos]
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
    points: pd.DataFrame,
    label_of: dict[str, str],
    report: InventoryReport,
) -> None:
    """Values outside the schema's plausible range (given values only, before defaults)."""
    if not len(df):
        return
    for c in schema.columns:
        if not c.is_quantity or c.plausible is None or c.name not in present:
            continue
        v = df[c.name].to_numpy(dtype=float)
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
        sub = points[points["pattern"] == p.name]
        lo, hi = p.plausible
        v = sub["value"].to_numpy(dtype=float)
        bad = (v < lo) | (v > hi)
        if bad.any():
            rows_ = sub["_row"].to_numpy(dtype=np.int64)[bad]
            _add_block(
                report.warnings,
                src,
                rows_,
                schema.name,
                sub["label"].to_numpy(dtype=object)[bad],
                [_show(x, p.si_unit) for x in v[bad]],
                [
                    f"implausible {_show(x, p.si_unit)} (expected {_show(lo, p.si_unit)} … {_show(hi, p.si_unit)}); check the value and its unit"
                    for x in v[bad]
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
        pkg = df["package"].to_numpy(dtype=object, na_value=None)
        unknown = (
            df["package"].notna() & ~df["package"].isin(KNOWN_PACKAGES)
        ).to_numpy()
        _warn_rows(
            report,
            src,
            unknown,
            schema.name,
            label_of.get("package", "package"),
            pkg,
            lambda p: (
                f"package '{p}' is not one the tool knows; kept as written (no rth_ja or tab default)"
            ),
        )


def _warn_switches(
    df: pd.DataFrame,
    src: _Src,
    points: pd.DataFrame,
    report: InventoryReport,
    label_of: dict[str, str],
) -> None:
    """Cross-column checks of the switch table (after defaults)."""
    if not len(df):
        return
    lab = label_of.get
    none = np.full(len(df), None, dtype=object)
    # IGBT energies need their test point; Foster terms come in pairs
    e_any = df["e_on"].notna().to_numpy() | df["e_off"].notna().to_numpy()
    no_pt = e_any & (
        df["e_test_v"].isna().to_numpy() | df["e_test_i"].isna().to_numpy()
    )
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
    r = np.column_stack([df[f"zth_r{i}"].notna().to_numpy() for i in range(1, 6)])
    t = np.column_stack([df[f"zth_tau{i}"].notna().to_numpy() for i in range(1, 6)])
    unpaired = (r != t).any(axis=1)
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
    pr = points[points["pattern"] == "rds_on"] if len(points) else points
    if len(pr):
        order = np.lexsort(
            (pr["param"].to_numpy(dtype=float), pr["_row"].to_numpy(dtype=np.int64))
        )
        pr = pr.iloc[order]
        rowi = pr["_row"].to_numpy(dtype=np.int64)
        vgs = pr["param"].to_numpy(dtype=float)
        rds = pr["value"].to_numpy(dtype=float)
        labels = pr["label"].to_numpy(dtype=object)
        same = rowi[1:] == rowi[:-1]
        rising = np.flatnonzero(same & (rds[1:] > rds[:-1] * (1 + 1e-9))) + 1
        if len(rising):
            _add_block(
                report.warnings,
                src,
                rowi[rising],
                "switches",
                labels[rising],
                [_show(x, "ohm") for x in rds[rising]],
                [
                    f"Rds(on) at {vgs[k]:g} V is higher than at {vgs[k - 1]:g} V; it should fall as the gate voltage rises: check the columns"
                    for k in rising
                ],
            )
        over = np.flatnonzero(vgs > vgsmax[rowi] + 1e-9)
        if len(over):
            _add_block(
                report.warnings,
                src,
                rowi[over],
                "switches",
                labels[over],
                [_show(x, "ohm") for x in rds[over]],
                [
                    f"given at {vgs[k]:g} V, above vgs_max {vgsmax[rowi[k]]:g} V"
                    for k in over
                ],
            )
        lowest = df["_rds_lowest_vgs"].to_numpy(dtype=float)
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
    df: pd.DataFrame, src: _Src, points: pd.DataFrame, report: InventoryReport
) -> None:
    if not len(points) or not len(df):
        return
    nat = df["rth_sa"].to_numpy(dtype=float)
    sub = points[points["pattern"] == "rth_sa"]
    rowi = sub["_row"].to_numpy(dtype=np.int64)
    v = sub["value"].to_numpy(dtype=float)
    with np.errstate(invalid="ignore"):
        bad = v > nat[rowi] * (1 + 1e-9)
    if bad.any():
        _add_block(
            report.warnings,
            src,
            rowi[bad],
            "heatsinks",
            sub["label"].to_numpy(dtype=object)[bad],
            [_show(x, "K/W") for x in v[bad]],
            [
                f"{x:g} K/W with airflow is above the natural-convection rth_sa {nat[i]:g} K/W; check the columns"
                for x, i in zip(v[bad], rowi[bad], strict=True)
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
        df, pts, counts = _assemble(TABLES[t], by_table[t], report)
        frames[t] = df
        report.tables[t] = counts
        if len(pts) and t == "switches":
            rp = pts[pts["pattern"] == "rds_on"]
            rds_points = pd.DataFrame(
                {
                    "part": rp["part"].to_numpy(dtype=object),
                    "vgs": rp["param"].to_numpy(dtype=float),
                    "rds_on": rp["value"].to_numpy(dtype=float),
                }
            )
            rds_points = _sorted_by_part(rds_points, "vgs")
        if len(pts) and t == "heatsinks":
            ap = pts[pts["pattern"] == "rth_sa"]
            sink_airflow = pd.DataFrame(
                {
                    "part": ap["part"].to_numpy(dtype=object),
                    "airflow": ap["param"].to_numpy(dtype=float),
                    "rth_sa": ap["value"].to_numpy(dtype=float),
                }
            )
            sink_airflow = _sorted_by_part(sink_airflow, "airflow")

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
