"""Property tests of the inventory reader (hypothesis).

Random headers (known columns, unit brackets, noise), random cells (numbers, numbers with
units of every kind, decimal commas, text, blanks, signs) and random encodings and
separators. The reader must either return an inventory in which every input row is
accepted, rejected (with a reason and a place) or counted blank, or raise the one
input-error type with a one-line message. Any other exception is a bug.
"""

from __future__ import annotations

import csv
import io

import openpyxl
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from selector.errors import InputError
from selector.inventory import load_inventory

KNOWN = [
    "part",
    "kind",
    "package",
    "price",
    "stock",
    "v_rating",
    "i_rating",
    "tj_max",
    "rth_jc",
    "rds_on@10V",
    "rds_on@4.5V",
    "vce_sat",
    "vce_sat_i",
    "vgs_max",
    "tab",
    "qg",
    "coss",
    "rth_sa",
    "rth_sa@2m/s",
    "fits",
    "positions",
    "rth_cs",
    "insulating",
    "v_rrm",
    "i_avg",
    "vf",
    "v_out",
    "category",
]
UNITS = ["", " [V]", " [mohm]", " [°C/W]", " [A]", " [nC]", " [blorf]", " (K/W)"]
WORDS = [
    "nmos",
    "pmos",
    "igbt",
    "NPN",
    "TO-220",
    "D²PAK",
    "yes",
    "no",
    "drain",
    "switches",
    "heatsinks",
    "x",
    "n/a",
    "-",
    "#N/A",
    "Ω",
    "µ",
    "°",
]
NUMBER_UNITS = [
    "",
    " V",
    "V",
    " mΩ",
    " mOhm",
    " A",
    " °C",
    " °C/W",
    " K/W",
    " nC",
    " pF",
    " ns",
    " mJ",
    " furlong",
    " kV",
    "%",
]

header_cell = st.one_of(
    st.builds(lambda k, u: k + u, st.sampled_from(KNOWN), st.sampled_from(UNITS)),
    st.text(alphabet=st.characters(blacklist_categories=("Cs", "Cc")), max_size=8),
)
number_text = st.builds(
    lambda sign, x, comma, unit: (
        sign + (f"{x:g}".replace(".", ",") if comma else f"{x:g}") + unit
    ),
    st.sampled_from(["", "-", "±", "+"]),
    st.floats(min_value=0, max_value=5000, allow_nan=False, allow_infinity=False),
    st.booleans(),
    st.sampled_from(NUMBER_UNITS),
)
cell = st.one_of(
    st.just(""),
    number_text,
    st.sampled_from(WORDS),
    st.sampled_from(["1.250", "1,250", "1.250,5", "12,5", "0.010", "1e-3"]),
    st.text(
        alphabet=st.characters(
            blacklist_categories=("Cs",), blacklist_characters="\r\n\x00"
        ),
        max_size=6,
    ),
)


tables = st.integers(min_value=1, max_value=10).flatmap(
    lambda ncol: st.tuples(
        st.lists(header_cell, min_size=ncol, max_size=ncol).filter(
            lambda h: any(x.strip() for x in h)
        ),
        st.lists(st.lists(cell, min_size=ncol, max_size=ncol), min_size=0, max_size=8),
    )
)


def check(result_or_exc, n_rows: int) -> None:
    if isinstance(result_or_exc, Exception):
        assert isinstance(result_or_exc, InputError), repr(result_or_exc)
        assert "\n" not in str(result_or_exc) and str(result_or_exc).strip()
        return
    r = result_or_exc.report
    total = sum(c["accepted"] + c["rejected"] + c["blank"] for c in r.tables.values())
    total += r.unassigned["rejected"] + r.unassigned["blank"]
    assert total == n_rows, (total, n_rows, r.tables, r.unassigned)
    rejected_places = {(i.file, i.sheet, i.row) for i in r.rejected_rows}
    assert len(rejected_places) == r.rejected_count
    for i in r.rejected_rows:
        assert i.reason and i.row is not None and i.row >= 2
    for name in ("switches", "heatsinks", "interfaces", "diodes", "drivers"):
        assert len(result_or_exc.table(name)) == r.tables[name]["accepted"]


def run(sources):
    try:
        return load_inventory(sources)
    except Exception as exc:  # noqa: BLE001 - the property inspects the type
        return exc


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    data=tables,
    sep=st.sampled_from([",", ";", "\t"]),
    encoding=st.sampled_from(["utf-8", "utf-8-sig", "cp1252", "latin-1", "utf-16"]),
    name=st.sampled_from(["switches.csv", "inventory.csv", "heatsinks.csv", "x.txt"]),
)
def test_random_csv_is_accepted_rejected_or_refused_with_an_input_error(
    data, sep, encoding, name
):
    headers, rows = data
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=sep, lineterminator="\n")
    w.writerow(headers)
    w.writerows(rows)
    raw = buf.getvalue().encode(encoding, errors="replace")
    check(run([(name, raw)]), len(rows))


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    data=tables, sheet=st.sampled_from(["switches", "Sheet1", "Heat sinks", "Notes"])
)
def test_random_workbook_is_accepted_rejected_or_refused_with_an_input_error(
    data, sheet
):
    headers, rows = data
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = sheet
    printable = [[c if c.isprintable() else "" for c in r] for r in [headers, *rows]]
    for r in printable:
        ws.append([None if c == "" else c for c in r])
    buf = io.BytesIO()
    wb.save(buf)
    result = run([("inv.xlsx", buf.getvalue())])
    if isinstance(result, Exception):
        check(result, 0)
        return
    # trailing all-blank rows are not stored in a workbook; count the rows it holds
    last = max(
        (k for k, r in enumerate(printable[1:]) if any(c.strip() for c in r)),
        default=-1,
    )
    r = result.report
    total = sum(c["accepted"] + c["rejected"] + c["blank"] for c in r.tables.values())
    total += r.unassigned["rejected"] + r.unassigned["blank"]
    assert last + 1 <= total <= len(rows)
    check(result, total)


@settings(max_examples=40, deadline=None)
@given(
    raw=st.binary(max_size=400),
    name=st.sampled_from(["a.csv", "a.xlsx", "switches.csv"]),
)
def test_random_bytes_never_raise_anything_but_the_input_error(raw, name):
    result = run([(name, raw)])
    if isinstance(result, Exception):
        assert isinstance(result, InputError), repr(result)


REQUIRED = [
    "part",
    "kind",
    "package",
    "price",
    "v_rating",
    "i_rating",
    "tj_max",
    "rth_jc",
]
OPTIONAL = [
    "stock",
    "rds_on@10V [mohm]",
    "rds_on@4.5V",
    "vce_sat",
    "vce_sat_i",
    "vgs_max",
    "vth_max",
    "tab",
    "qg [nC]",
    "coss",
    "i_pulse",
    "zth_r1",
    "zth_tau1",
    "notes",
]
switch_cell = st.one_of(
    cell,
    number_text,
    st.sampled_from(
        ["nmos", "pmos", "igbt", "N-channel", "bjt", "TO-220", "SO-8", "DPAK"]
    ),
)


@st.composite
def switch_tables(draw):
    extra = draw(st.lists(st.sampled_from(OPTIONAL), unique=True, max_size=6))
    headers = REQUIRED + extra
    order = draw(st.permutations(range(len(headers))))
    headers = [headers[i] for i in order]
    rows = draw(
        st.lists(
            st.lists(switch_cell, min_size=len(headers), max_size=len(headers)),
            max_size=12,
        )
    )
    return headers, rows


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    data=switch_tables(),
    sep=st.sampled_from([",", ";"]),
    encoding=st.sampled_from(["utf-8", "cp1252", "utf-16"]),
)
def test_random_switch_rows_are_each_accepted_or_rejected_with_a_reason(
    data, sep, encoding
):
    headers, rows = data
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=sep, lineterminator="\n")
    w.writerow(headers)
    w.writerows(rows)
    result = run([("switches.csv", buf.getvalue().encode(encoding, errors="replace"))])
    event("refused" if isinstance(result, Exception) else "read")
    assert not isinstance(result, Exception) or isinstance(result, InputError), repr(
        result
    )
    if not isinstance(result, Exception):
        check(result, len(rows))
        sw = result.switches
        assert sw["kind"].isin(["nmos", "pmos", "igbt"]).all()
        assert (
            (sw["price"] >= 0).all()
            and (sw["rth_jc"] > 0).all()
            and (sw["v_rating"] > 0).all()
        )
        mos = sw[sw["kind"] != "igbt"]
        assert set(mos["part"]) <= set(result.rds_points["part"])
