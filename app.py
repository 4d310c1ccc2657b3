"""The selector page: bring an inventory, describe the loads, compare ranked choices.

Wiring only: widgets in, library calls (``selector.*``), results out. No physics here;
unit conversion for display happens at this edge only.
"""

from __future__ import annotations

import functools
import hashlib

import altair as alt
import pandas as pd
import streamlit as st

from selector import demo
from selector.errors import DesignError, SelectorError
from selector.models import LOAD_KINDS, SIDES, Conditions

st.set_page_config(page_title="selector — switches and heatsinks", layout="wide")

CAUTION_TEXT = (
    "**Before you build:** heatsinks and switch tabs can run hot enough to burn and may "
    "be live at the drain or collector potential; mains and other high voltages can "
    "kill and need rated insulation and licensed work under local electrical codes; "
    "switching inductive loads without a freewheel diode or clamp produces voltage "
    "spikes that destroy parts and can start fires. These results are estimates from "
    "datasheet values and published approximations: verify them by measurement "
    "(temperatures at the hottest ambient, gate waveforms, turn-off overshoot)."
)

# Channel table columns: (column, label, SI factor from the shown unit)
CHANNEL_COLUMNS = [
    ("name", "Channel", None),
    ("load", "Load kind", None),
    ("supply", "Supply (V)", 1.0),
    ("current", "Current (A)", 1.0),
    ("peak_current", "Peak current (A)", 1.0),
    ("peak_time", "Peak lasts (s)", 1.0),
    ("on_time", "On time (s)", 1.0),
    ("off_time", "Off time (s)", 1.0),
    ("inductance", "Inductance (mH)", 1e-3),
    ("duty", "Duty (0–1)", 1.0),
    ("pwm_frequency", "PWM (Hz)", 1.0),
    ("drive", "Gate drive (V)", 1.0),
    ("side", "Side", None),
    ("quantity", "Copies", None),
    ("heatsink_group", "Shared heatsink", None),
]


# ---------------------------------------------------------------- cached library calls
@st.cache_data(show_spinner=False, max_entries=8)
def read_inventory(files: tuple[tuple[str, bytes], ...]):
    """Parse the uploaded (or demo) inventory files; cached on their content."""
    from selector.inventory import load_inventory

    return load_inventory(list(files))


@st.cache_resource(show_spinner=False, max_entries=8)
def screenings_of(inventory_key: str) -> dict:
    """Per-channel screenings kept for one inventory (see selector.pipeline.screen_all)."""
    return {}


@st.cache_data(show_spinner=False, max_entries=16)
def run_selection(_inventory, inventory_key: str, design_toml: str, top: int):
    """Select parts for the design; cached on the inventory content and design text."""
    from selector.design import load_design
    from selector.pipeline import select

    design = load_design(design_toml)
    return select(
        _inventory, design, top=top, screen_cache=screenings_of(inventory_key)
    )


@st.cache_data(show_spinner=False, max_entries=16)
def workbook_for(_result, _inventory, inventory_key: str, design_toml: str, index: int):
    from selector.bom import workbook_bytes
    from selector.design import load_design

    return workbook_bytes(_result, _inventory, load_design(design_toml), index)


@st.cache_data(show_spinner=False, max_entries=32)
def explain(_inventory, inventory_key: str, design_toml: str, channel: str, part: str):
    from selector.design import load_design
    from selector.pipeline import why

    return why(_inventory, load_design(design_toml), channel, part)


def as_table(records: list[dict]) -> pd.DataFrame:
    """Report rows as a display table (mixed-type cells shown as text)."""
    df = pd.DataFrame(records)
    for col in df.columns:
        if df[col].dtype == object:
            df[col] = df[col].map(lambda v: "" if v is None else str(v))
    return df


def demo_files() -> tuple[tuple[str, bytes], ...]:
    path = demo.demo_workbook()
    return ((path.name, path.read_bytes()),)


def key_of(files: tuple[tuple[str, bytes], ...]) -> str:
    h = hashlib.sha256()
    for name, data in files:
        h.update(name.encode())
        h.update(data)
    return h.hexdigest()[:16]


# ---------------------------------------------------------------- design state helpers
def design_to_state(design) -> None:
    """Put a Design into the page's widgets (conditions and the channel table)."""
    c = design.conditions
    st.session_state["cond_ambient_min"] = float(c.ambient_min)
    st.session_state["cond_ambient_max"] = float(c.ambient_max)
    st.session_state["cond_junction_margin"] = float(c.junction_margin)
    st.session_state["cond_voltage_derating"] = float(c.voltage_derating)
    st.session_state["cond_airflow"] = float(c.airflow)
    st.session_state["cond_heatsink_derating"] = float(c.heatsink_derating)
    rows = []
    for ch in design.channels:
        row = {}
        for col, _label, factor in CHANNEL_COLUMNS:
            value = getattr(ch, col)
            row[col] = value / factor if factor else value
        rows.append(row)
    st.session_state["channels_base"] = pd.DataFrame(
        rows, columns=[c for c, _, _ in CHANNEL_COLUMNS]
    )
    st.session_state["editor_version"] = st.session_state.get("editor_version", 0) + 1


def channels_si(table: pd.DataFrame) -> pd.DataFrame:
    """The edited channel table with SI values (mH -> H)."""
    out = table.copy()
    for col, _label, factor in CHANNEL_COLUMNS:
        if factor and factor != 1.0 and col in out:
            out[col] = pd.to_numeric(out[col], errors="coerce") * factor
    return out


def current_conditions() -> Conditions:
    return Conditions(
        ambient_min=float(st.session_state["cond_ambient_min"]),
        ambient_max=float(st.session_state["cond_ambient_max"]),
        junction_margin=float(st.session_state["cond_junction_margin"]),
        voltage_derating=float(st.session_state["cond_voltage_derating"]),
        airflow=float(st.session_state["cond_airflow"]),
        heatsink_derating=float(st.session_state["cond_heatsink_derating"]),
    )


if "channels_base" not in st.session_state:
    from selector.design import load_design

    design_to_state(load_design(demo.demo_design()))

# ---------------------------------------------------------------- header
st.title("Switch and heatsink selector")
st.caption(
    "Cheapest safe power switch, heatsink, thermal interface and protection for every "
    "switched load of a board, from the parts you have."
)

parts_tab, loads_tab, results_tab, export_tab = st.tabs(
    ["1 · Parts on hand", "2 · Board and loads", "3 · Ranked choices", "4 · Take away"]
)

# ---------------------------------------------------------------- 1. inventory
with parts_tab:
    uploads = st.file_uploader(
        "Upload your inventory: one workbook (a sheet per table) or several CSV files",
        type=["xlsx", "csv"],
        accept_multiple_files=True,
        key="inventory_files",
    )
    if uploads:
        files = tuple((u.name, u.getvalue()) for u in uploads)
        st.info(f"Using your inventory: {', '.join(name for name, _ in files)}")
    else:
        files = demo_files()
        st.info(
            "Using the bundled demo inventory (an invented greenhouse controller). "
            "Upload your own above; a blank template is on the last tab."
        )
    inventory_key = key_of(files)
    inventory = None
    try:
        inventory = read_inventory(files)
    except SelectorError as exc:
        st.error(f"This inventory cannot be read: {exc}")

    if inventory is not None:
        report = inventory.report
        counts = pd.DataFrame(
            [
                {
                    "table": name,
                    "accepted": t.get("accepted", 0),
                    "rejected": t.get("rejected", 0),
                    "blank rows": t.get("blank", 0),
                }
                for name, t in report.to_dict()["tables"].items()
            ]
        )
        st.subheader("Check report")
        st.dataframe(counts, hide_index=True)
        rep = report.to_dict()
        if rep["rejected_rows"]:
            rejected = as_table(rep["rejected_rows"])
            st.warning(f"{len(rejected)} row(s) rejected; they are not considered.")
            st.dataframe(rejected, hide_index=True)
            st.download_button(
                "Download the rejected rows (CSV)",
                rejected.to_csv(index=False).encode("utf-8"),
                file_name="rejected_rows.csv",
                mime="text/csv",
                key="dl_rejected",
            )
        else:
            st.success("Every row was accepted.")
        if rep["warnings"]:
            with st.expander(f"Warnings ({len(rep['warnings'])})"):
                st.dataframe(as_table(rep["warnings"]), hide_index=True)
        if rep["assumed"]:
            with st.expander(f"Values assumed for blank cells ({len(rep['assumed'])})"):
                st.dataframe(as_table(rep["assumed"]), hide_index=True)

# ---------------------------------------------------------------- 2. design
design = None
design_toml = ""
with loads_tab:
    loaded = st.file_uploader(
        "Load a saved design (TOML)", type=["toml"], key="design_file"
    )
    if loaded is not None:
        digest = hashlib.sha256(loaded.getvalue()).hexdigest()
        if st.session_state.get("design_file_digest") != digest:
            from selector.design import load_design

            try:
                design_to_state(load_design(loaded.getvalue().decode("utf-8")))
                st.session_state["design_file_digest"] = digest
                st.success(f"Loaded {loaded.name}")
            except (SelectorError, UnicodeDecodeError) as exc:
                st.error(f"{loaded.name}: {exc}")

    st.subheader("Conditions")
    c1, c2, c3 = st.columns(3)
    c1.number_input("Coldest ambient (°C)", key="cond_ambient_min", step=1.0)
    c1.number_input("Hottest ambient (°C)", key="cond_ambient_max", step=1.0)
    c2.number_input(
        "Junction margin below tj_max (K)", key="cond_junction_margin", step=5.0
    )
    c2.number_input(
        "Voltage derating (fraction of rating)",
        key="cond_voltage_derating",
        min_value=0.1,
        max_value=1.0,
        step=0.05,
    )
    c3.number_input(
        "Air speed over heatsinks (m/s, 0 = still air)",
        key="cond_airflow",
        min_value=0.0,
        step=0.5,
    )
    c3.number_input(
        "Heatsink safety factor (fraction added to RθSA)",
        key="cond_heatsink_derating",
        min_value=0.0,
        step=0.05,
    )

    st.subheader("Switched loads")
    base = st.session_state["channels_base"]
    column_config = {
        col: (
            st.column_config.SelectboxColumn(label, options=list(LOAD_KINDS))
            if col == "load"
            else st.column_config.SelectboxColumn(label, options=list(SIDES))
            if col == "side"
            else st.column_config.TextColumn(label)
            if col in ("name", "heatsink_group")
            else st.column_config.NumberColumn(label)
        )
        for col, label, _ in CHANNEL_COLUMNS
    }
    edited = st.data_editor(
        base,
        num_rows="dynamic",
        key=f"channels_{st.session_state['editor_version']}",
        column_config=column_config,
        hide_index=True,
        width="stretch",
    )
    d1, d2 = st.columns([3, 1])
    names = [str(n) for n in edited["name"].dropna()] if len(edited) else []
    to_copy = d1.selectbox("Duplicate a channel", names, key="dup_choice")
    if d2.button("Duplicate", key="dup_go") and to_copy is not None:
        row = edited[edited["name"] == to_copy].iloc[[0]].copy()
        row["name"] = f"{to_copy} (copy)"
        st.session_state["channels_base"] = pd.concat([edited, row], ignore_index=True)
        st.session_state["editor_version"] += 1
        st.rerun()

    from selector.design import design_from_table, design_to_toml

    try:
        design = design_from_table(current_conditions(), channels_si(edited))
        design_toml = design_to_toml(design)
        groups = design.groups()
        if groups:
            st.caption(
                "Shared heatsinks: "
                + "; ".join(f"{g}: {', '.join(m)}" for g, m in groups.items())
            )
    except DesignError as exc:
        st.error("The design needs fixing before parts can be picked:")
        problems = getattr(exc, "problems", None) or []
        if problems:
            st.dataframe(
                pd.DataFrame(
                    [
                        {
                            "channel": loc.channel or "",
                            "field": loc.field or "",
                            "problem": msg,
                        }
                        for loc, msg in problems
                    ]
                ),
                hide_index=True,
            )
        else:
            st.write(str(exc))
        design = None

# ---------------------------------------------------------------- 3. results
result = None
with results_tab:
    st.warning(CAUTION_TEXT)
    top = st.number_input(
        "Ranked alternatives to find", min_value=1, max_value=10, value=3, key="top"
    )
    if inventory is None:
        st.info("Load a readable inventory first (tab 1).")
    elif design is None:
        st.info("Fix the design first (tab 2).")
    else:
        with st.spinner("Evaluating every part and solving the selection…"):
            try:
                result = run_selection(inventory, inventory_key, design_toml, int(top))
            except SelectorError as exc:
                st.error(str(exc))

    if result is not None:
        for msg in result.messages:
            st.caption(msg)
        if result.solutions:
            best = result.solutions[0]
            proven = "proven optimal" if best.proven_optimal else "NOT proven optimal"
            st.metric("Total cost of the best selection", f"{best.total_cost:.2f}")
            st.markdown(
                f"<span data-testid='best-total'>best total {best.total_cost:.2f}"
                f"</span> · {proven}",
                unsafe_allow_html=True,
            )
            ranking = pd.DataFrame(
                [
                    {
                        "rank": s.rank,
                        "total cost": round(s.total_cost, 2),
                        "hottest junction (°C)": round(
                            max(p.tj_at_ambient_max for p in s.channels), 1
                        ),
                        "smallest margin (K)": round(s.min_margin, 1),
                        "proven optimal": s.proven_optimal,
                        "differs from the best": "; ".join(s.differs_from_best) or "—",
                    }
                    for s in result.solutions
                ]
            )
            st.subheader("Ranked selections")
            st.dataframe(ranking, hide_index=True)
            rank = st.selectbox(
                "Selection to inspect",
                [s.rank for s in result.solutions],
                key="rank_choice",
            )
            sol = next(s for s in result.solutions if s.rank == rank)
            st.session_state["chosen_rank"] = rank
            picks = pd.DataFrame(
                [
                    {
                        "channel": p.channel,
                        "switch": p.switch,
                        "in parallel": p.switch_count,
                        "copies": p.quantity,
                        "heatsink": p.heatsink or "none",
                        "interface": p.interface or "none",
                        "diode": p.diode or "—",
                        "driver": p.driver or "—",
                        "Tj at hottest ambient (°C)": round(p.tj_at_ambient_max, 1),
                        "limit (°C)": round(p.tj_limit, 1),
                        "margin (K)": round(p.margin, 1),
                        "cost": round(p.cost, 2),
                    }
                    for p in sol.channels
                ]
            )
            st.dataframe(picks, hide_index=True)

            channel = st.selectbox(
                "Channel to inspect", [p.channel for p in sol.channels], key="ch_choice"
            )
            pick = sol.pick(channel)
            left, right = st.columns(2)
            with left:
                st.markdown("**Loss per device**")
                loss = pick.loss.to_dict()
                loss_df = pd.DataFrame(
                    [
                        {"term": k, "watts": float(v)}
                        for k, v in loss.items()
                        if k != "total"
                    ]
                )
                st.altair_chart(
                    alt.Chart(loss_df)
                    .mark_bar()
                    .encode(x=alt.X("watts:Q", title="W"), y=alt.Y("term:N", sort=None))
                    .properties(height=180),
                    width="stretch",
                )
                st.caption(
                    f"Die loss {loss['total']:.3g} W per device; gate-drive power "
                    f"{loss.get('gate_drive', 0.0):.3g} W heats the driver, not the switch."
                )
            with right:
                st.markdown("**Junction temperature across the ambient range**")
                curve = pick.details.get("tj_curve") or {}
                if curve.get("ambient_c"):
                    cdf = pd.DataFrame(
                        {"ambient (°C)": curve["ambient_c"], "Tj (°C)": curve["tj_c"]}
                    )
                    line = (
                        alt.Chart(cdf)
                        .mark_line()
                        .encode(x="ambient (°C):Q", y="Tj (°C):Q")
                    )
                    limit = (
                        alt.Chart(pd.DataFrame({"limit": [pick.tj_limit]}))
                        .mark_rule(strokeDash=[6, 4], color="firebrick")
                        .encode(y="limit:Q")
                    )
                    st.altair_chart(
                        (line + limit).properties(height=220), width="stretch"
                    )
                else:
                    st.caption("No temperature curve for this channel.")

            st.markdown("**Cost against thermal margin, every feasible candidate**")
            cands = result.candidates.get(channel)
            if isinstance(cands, pd.DataFrame) and len(cands):
                cost_col = next(
                    (c for c in ("cost", "cost_per_copy", "price_total") if c in cands),
                    None,
                )
                margin_col = next(
                    (c for c in ("margin_k", "thermal_margin_k") if c in cands), None
                )
                if cost_col and margin_col:
                    sdf = cands[[cost_col, margin_col]].copy()
                    sdf.columns = ["cost", "margin (K)"]
                    sdf["label"] = (
                        cands.get("label", cands.get("switch", "")).astype(str).values
                    )
                    sdf["chosen"] = sdf["label"].str.startswith(pick.switch) & (
                        cands.get("count", pick.switch_count).values
                        == pick.switch_count
                    )
                    st.altair_chart(
                        alt.Chart(sdf)
                        .mark_point(filled=True)
                        .encode(
                            x=alt.X("cost:Q"),
                            y=alt.Y("margin (K):Q"),
                            color=alt.Color("chosen:N", title="chosen"),
                            size=alt.condition(
                                alt.datum.chosen, alt.value(160), alt.value(30)
                            ),
                            tooltip=["label", "cost", "margin (K)"],
                        )
                        .properties(height=260),
                        width="stretch",
                    )
            transient = pick.details.get("transient") or {}
            if transient.get("t_s"):
                st.markdown("**Junction temperature during the start-up surge**")
                tdf = pd.DataFrame(
                    {"time (s)": transient["t_s"], "Tj (°C)": transient["tj_c"]}
                )
                st.altair_chart(
                    alt.Chart(tdf)
                    .mark_line()
                    .encode(x="time (s):Q", y="Tj (°C):Q")
                    .properties(height=200),
                    width="stretch",
                )
            drive = pick.details.get("drive") or {}
            st.markdown("**Gate drive and protection**")
            lines = []
            if drive.get("topology"):
                lines.append(f"Drive: {drive['topology']}")
            if drive.get("needs"):
                lines.append(f"Needs: {drive['needs']}")
            lines += [str(n) for n in drive.get("notes", [])]
            lines += [str(n) for n in pick.notes]
            st.markdown("\n".join(f"- {line}" for line in lines) or "—")
        else:
            st.error(
                "No selection keeps every junction below its limit with these parts. "
                "Per channel:"
            )
        if result.infeasible:
            for name, info in result.infeasible.items():
                with st.expander(f"Why channel '{name}' has no safe choice", True):
                    for reason in info.get("reasons", []):
                        st.markdown(f"- {reason}")
                    miss = info.get("nearest_miss")
                    if miss:
                        text = (
                            miss
                            if isinstance(miss, str)
                            else miss.get("description", str(miss))
                        )
                        st.markdown(f"Nearest miss: {text}")

        st.subheader("What the rules removed")
        funnel_rows = [
            {"channel": ch, "rule": rule, "parts removed": n}
            for ch, rules in result.rejected.items()
            for rule, n in rules.items()
            if n
        ]
        if funnel_rows:
            fdf = pd.DataFrame(funnel_rows)
            st.altair_chart(
                alt.Chart(fdf)
                .mark_bar()
                .encode(
                    x=alt.X("parts removed:Q"),
                    y=alt.Y("rule:N"),
                    color="channel:N",
                    tooltip=["channel", "rule", "parts removed"],
                )
                .properties(height=240),
                width="stretch",
            )
        st.subheader("Why not this part?")
        w1, w2 = st.columns(2)
        why_channel = w1.selectbox(
            "Channel", [c.name for c in design.channels], key="why_channel"
        )
        why_part = w2.text_input("Part id", key="why_part")
        if why_part:
            try:
                st.info(
                    explain(
                        inventory, inventory_key, design_toml, why_channel, why_part
                    )
                )
            except SelectorError as exc:
                st.error(str(exc))

# ---------------------------------------------------------------- 4. export
with export_tab:
    st.warning(CAUTION_TEXT)
    if result is not None and result.solutions:
        index = next(
            (
                i
                for i, s in enumerate(result.solutions)
                if s.rank == st.session_state.get("chosen_rank", 1)
            ),
            0,
        )
        # built when the button is pressed (in its own thread), not on every re-run
        st.download_button(
            "Download the bill of materials and calculations (Excel)",
            functools.partial(
                workbook_for, result, inventory, inventory_key, design_toml, index
            ),
            file_name="selection.xlsx",
            mime=("application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"),
            key="dl_workbook",
        )
    else:
        st.caption("The workbook is available once a selection exists.")
    if design_toml:
        st.download_button(
            "Save this design (TOML)",
            design_toml.encode("utf-8"),
            file_name="design.toml",
            mime="application/toml",
            key="dl_design",
        )
    template = demo.template_workbook()
    if template.exists():
        st.download_button(
            "Blank inventory template (Excel)",
            template.read_bytes(),
            file_name="inventory_template.xlsx",
            key="dl_template",
        )
    st.caption(
        "Numbers in the workbook are stored as numbers; every value that came from a "
        "default rather than your sheet is marked as assumed."
    )
