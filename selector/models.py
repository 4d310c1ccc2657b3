"""Domain objects shared by the engine, the optimizer, the workbook and the page.

All values are SI floats (V, A, Ω, W, J, s, F, H, Hz, m/s, K/W); temperatures in °C,
temperature differences in K. Inventories stay pandas DataFrames (see
``selector.inventory.Inventory``); the objects here describe a design and the answers.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field
from typing import Any

LOAD_KINDS = ("resistive", "inductive", "motor", "lamp", "capacitive")
SIDES = ("low", "high", "any")


@dataclass(frozen=True)
class Conditions:
    """Board-wide conditions of a design.

    Fields
    ------
    ambient_min, ambient_max : [°C] air temperature range around the board.
    junction_margin : [K] kept below every part's tj_max (T_lim = tj_max − margin).
    voltage_derating : [-] apply at most this fraction of v_rating (e.g. 0.8).
    airflow : [m/s] approach air velocity over the heatsinks; 0 = natural convection.
    heatsink_derating : [-] fraction added to every RθSA as a safety factor.
    max_parallel : [-] most devices in parallel per channel the search considers.
    """

    ambient_min: float = -5.0
    ambient_max: float = 45.0
    junction_margin: float = 25.0
    voltage_derating: float = 0.8
    airflow: float = 0.0
    heatsink_derating: float = 0.0
    max_parallel: int = 4


@dataclass(frozen=True)
class Channel:
    """One switched load of the board (one copy; ``quantity`` copies are identical).

    Fields
    ------
    name : the user's name, unique in the design.
    supply : [V] load supply voltage.
    current : [A] on-state load current.
    peak_current : [A] start-up or inrush peak (≥ current).
    peak_time : [s] how long the peak lasts (motor stall); 0 = a short pulse.
    on_time, off_time : [s] repeated on/off profile; 0 = steady.
    load : one of LOAD_KINDS.
    inductance : [H] load inductance (inductive and motor loads).
    duty : [-] on-time fraction for PWM (1 = always on when on).
    pwm_frequency : [Hz] 0 = switched rarely.
    drive : [V] lowest gate-drive level the controller guarantees.
    side : "low", "high" or "any" (the search may choose).
    quantity : identical copies on the board; each has its own parts and sink.
    heatsink_group : channels naming the same group share one heatsink ("" = none).
    """

    name: str
    supply: float
    current: float
    peak_current: float = 0.0
    peak_time: float = 0.0
    on_time: float = 0.0
    off_time: float = 0.0
    load: str = "resistive"
    inductance: float = 0.0
    duty: float = 1.0
    pwm_frequency: float = 0.0
    drive: float = 3.3
    side: str = "low"
    quantity: int = 1
    heatsink_group: str = ""

    @property
    def peak(self) -> float:
        """[A] the larger of peak_current and current."""
        return max(self.peak_current, self.current)

    @property
    def needs_freewheel(self) -> bool:
        """Inductive and motor loads need a freewheel diode or a rated avalanche."""
        return self.load in ("inductive", "motor")


@dataclass(frozen=True)
class Design:
    """Conditions plus channels; ``source`` names the file it came from (for messages)."""

    conditions: Conditions
    channels: tuple[Channel, ...]
    source: str = ""

    def channel(self, name: str) -> Channel:
        for ch in self.channels:
            if ch.name == name:
                return ch
        raise KeyError(name)

    def groups(self) -> dict[str, tuple[str, ...]]:
        """Heatsink group name -> member channel names (only non-empty groups)."""
        out: dict[str, list[str]] = {}
        for ch in self.channels:
            if ch.heatsink_group:
                out.setdefault(ch.heatsink_group, []).append(ch.name)
        return {k: tuple(v) for k, v in out.items()}


@dataclass(frozen=True)
class Settings:
    """Engineering defaults of the engine (physics.md marks them proposed or common practice).

    Every result that used one of these is marked as assumed. Units in brackets.
    """

    pin_resistance: float = 40.0  # [Ω] MCU pin output resistance (physics §2.5, [c])
    gate_resistor_pin: float = 100.0  # [Ω] series gate resistor with pin drive ([b])
    driver_resistance: float = 2.0  # [Ω] gate-driver source/sink resistance ([c])
    gate_resistor_driver: float = 10.0  # [Ω] series gate resistor with a driver ([b])
    rg_int_default: float = 1.5  # [Ω] internal gate resistance when blank ([c])
    rds_min_ratio: float = 0.7  # [-] R_min/R_max for parallel sharing (§7.1, [c])
    parallel_switching_factor: float = 1.5  # [-] switching energy at (I/N)·1.5 (§7.1)
    vgs_derating: float = 0.7  # [-] |Vgs| ≤ 0.7·vgs_max (MIL-DTL-917)
    vth_tempco: float = -5e-3  # [V/K] threshold temperature coefficient (§9, [c])
    avalanche_factor: float = 1.3  # [-] V_BR,av ≈ 1.3·V_DSS (§4.2, [c])
    avalanche_acceptance: float = 0.8  # [-] E ≤ 0.8·E_AS(Tj0) (§4.2 proposed)
    diode_voltage_factor: float = 1.5  # [-] V_RRM ≥ 1.5·V_supply (§10, [b])
    diode_current_derating: float = 0.8  # [-] I_F(AV) ≤ 0.8·rating (§10, [b])
    overshoot_per_amp: float = 0.5  # [V/A] wiring overshoot with a clamp ([c])
    igbt_kv: float = 1.35  # [-] IGBT switching-energy voltage exponent (§3.2, [c])
    igbt_ki: float = 1.0  # [-] current exponent (§3.2, [c])
    igbt_tc: float = 0.003  # [1/K] energy temperature coefficient (§3.2, [c])
    switching_loss_floor: float = 0.02  # [-] switching loss "matters" above this share
    thermal_cap: float = 250.0  # [°C] iteration cap for runaway detection (§6.3)

    def to_dict(self) -> dict[str, float]:
        return asdict(self)


@dataclass
class LossBreakdown:
    """Per-device losses [W] at the reported operating point."""

    conduction: float = 0.0
    switching: float = 0.0
    coss: float = 0.0
    avalanche: float = 0.0
    gate_drive: float = 0.0  # dissipated in the driver and gate resistors, not the die

    @property
    def total(self) -> float:
        """[W] heat in the switch die (gate-drive power excluded)."""
        return self.conduction + self.switching + self.coss + self.avalanche

    def to_dict(self) -> dict[str, float]:
        d = asdict(self)
        d["total"] = self.total
        return d


@dataclass
class ChannelPick:
    """The parts chosen for one channel in one solution, with the final evaluation."""

    channel: str
    switch: str
    switch_count: int
    heatsink: str | None
    interface: str | None
    diode: str | None
    driver: str | None
    quantity: int
    cost: float  # all copies of the channel, own parts (a group's sink counted once, on the group)
    tj_at_ambient_max: float  # [°C] hottest device of the channel at ambient_max
    tj_limit: float  # [°C] tj_max − junction_margin
    sink_temperature: float | None  # [°C] at ambient_max
    loss: LossBreakdown
    notes: list[str] = field(default_factory=list)
    details: dict[str, Any] = field(
        default_factory=dict
    )  # chain, checks, assumed values

    @property
    def margin(self) -> float:
        """[K] tj_limit − tj_at_ambient_max."""
        return self.tj_limit - self.tj_at_ambient_max

    def to_dict(self) -> dict[str, Any]:
        return {
            "channel": self.channel,
            "switch": self.switch,
            "switch_count": self.switch_count,
            "heatsink": self.heatsink,
            "interface": self.interface,
            "diode": self.diode,
            "driver": self.driver,
            "quantity": self.quantity,
            "cost": self.cost,
            "tj_at_ambient_max": self.tj_at_ambient_max,
            "tj_limit": self.tj_limit,
            "margin": self.margin,
            "sink_temperature": self.sink_temperature,
            "loss": self.loss.to_dict(),
            "notes": list(self.notes),
            "details": self.details,
        }


@dataclass
class Solution:
    """One complete selection for the whole design."""

    rank: int
    total_cost: float
    channels: list[ChannelPick]
    proven_optimal: bool = True
    differs_from_best: list[str] = field(default_factory=list)
    group_sinks: dict[str, str] = field(default_factory=dict)  # group -> heatsink part

    def pick(self, channel: str) -> ChannelPick:
        for p in self.channels:
            if p.channel == channel:
                return p
        raise KeyError(channel)

    @property
    def min_margin(self) -> float:
        return min((p.margin for p in self.channels), default=float("inf"))

    def to_dict(self) -> dict[str, Any]:
        return {
            "rank": self.rank,
            "total_cost": self.total_cost,
            "proven_optimal": self.proven_optimal,
            "differs_from_best": list(self.differs_from_best),
            "group_sinks": dict(self.group_sinks),
            "channels": [p.to_dict() for p in self.channels],
        }


@dataclass
class NearMiss:
    """The closest a channel came to a feasible candidate, with its numbers."""

    channel: str
    description: str  # one sentence with the numbers
    values: dict[str, Any] = field(default_factory=dict)


@dataclass
class SelectionResult:
    """What :func:`selector.pipeline.select` returns: ranked solutions or the reasons.

    ``status`` is one of "optimal" (proven), "feasible" (found, not proven optimal,
    e.g. time limit), "infeasible" (no assignment satisfies every limit together) or
    "no_candidates" (some channel has no candidate at all).
    """

    status: str
    solutions: list[Solution]
    rejected: dict[str, dict[str, int]]  # channel -> rule id -> count (the funnel)
    infeasible: dict[str, dict[str, Any]] = field(default_factory=dict)
    assumptions: list[dict[str, Any]] = field(default_factory=list)
    messages: list[str] = field(default_factory=list)
    candidates: dict[str, Any] = field(default_factory=dict)  # channel -> DataFrame
    solver: str = ""
    solve_seconds: float = 0.0

    @property
    def feasible(self) -> bool:
        return bool(self.solutions)

    def to_dict(self) -> dict[str, Any]:
        """The ``pick --json`` object of the command-line contract."""
        return {
            "status": self.status,
            "solutions": [s.to_dict() for s in self.solutions],
            "rejected": self.rejected,
            "infeasible": self.infeasible,
            "assumptions": self.assumptions,
            "messages": list(self.messages),
            "solver": self.solver,
        }
