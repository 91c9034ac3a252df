"""Stress stage, circuit level: the options of the circuit stresses and the state one run shares.

``CircuitRun`` holds the placements' columns by name (each a column array, converted to numbers
once) while the circuit stresses of ``bomcheck.stress.circuit`` change their inputs and add their
metrics; the table is built from it once, at the end. No I/O.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.stress.columns import Columns, as_numbers, empty_as, read_only_nan, text_codes
from bomcheck.stress.placement import StressData


@frozen
class CircuitOptions:
    """Typical data and options of the circuit stresses (the rule set's ``[circuit]`` table)."""

    # IEC 60204-1 figure, where neither the design sheet nor the rule set gives a safe voltage.
    safe_voltage_v: float = 60.0
    life_ripple_factor: bool = False
    can_beta_w_per_cm2_k: float | None = None
    thermal_resistance_c_per_w: Mapping[str, float] = field(default_factory=dict)
    label: str = ""

    @classmethod
    def from_ruleset(cls, ruleset: Any) -> CircuitOptions:
        """Options of a loaded ``RuleSet`` (defaults where it has no ``[circuit]`` table)."""
        raw = getattr(ruleset, "circuit", None) or {}
        return cls(
            safe_voltage_v=float(raw.get("safe_voltage_v", 60.0)),
            life_ripple_factor=bool(raw.get("life_ripple_factor", False)),
            can_beta_w_per_cm2_k=raw.get("can_beta_w_per_cm2_k"),
            thermal_resistance_c_per_w={str(k).upper(): float(v) for k, v in
                                        raw.get("thermal_resistance_c_per_w", {}).items()},
            label=str(raw.get("label", "")),
        )


def finite(x: Any) -> float | None:
    """A JSON number: finite, the last-digit noise of the arithmetic dropped; else None."""
    x = float(x)
    return float(f"{x:.15g}") if math.isfinite(x) else None


def members(group: Any, where: Mapping[str, int]) -> tuple[list[int], list[str], list[str]]:
    """(table positions, designators) of a group's fitted members, and the members not audited."""
    pos, fitted, missing = [], [], []
    for m in group.members:
        if m in where:
            pos.append(where[m])
            fitted.append(m)
        else:
            missing.append(m)
    return pos, fitted, missing


@dataclass
class CircuitRun:
    """One run of the circuit stage: the columns, the options and what the stresses share.

    The stresses that change inputs (series shares, bank ripple, part DC bias, ripple heating)
    run before the placement stresses are run again; the others only add metric columns.
    """

    table: pd.DataFrame  # the stress stage's table as given (the placement stresses' inputs)
    data: StressData
    opts: CircuitOptions
    groups: dict[str, Any]
    parts: Any
    columns: dict[str, Any]  # every column by name, in table order; the circuit's own added last
    verdicts: list[pd.DataFrame] = field(default_factory=list)
    summaries: list[dict] = field(default_factory=list)  # one per bank or stack, for the report
    shared: dict[str, Any] = field(default_factory=dict)  # one stress's results another reads
    _numbers: dict[str, np.ndarray] = field(default_factory=dict)  # columns converted, by name

    @property
    def index(self) -> pd.Index:
        """The placements' index."""
        return self.table.index

    @property
    def n(self) -> int:
        """The number of placements."""
        return len(self.table)

    def num(self, name: str) -> np.ndarray:
        """A column as floats (NaN where missing or not a number; all NaN when absent), converted
        once; never write into it."""
        if name not in self._numbers:
            values = self.columns.get(name)
            self._numbers[name] = self.nan() if values is None else as_numbers(values)
        return self._numbers[name]

    def nan(self) -> np.ndarray:
        """The run's one read-only column of NaN: every absent column, every one NaN throughout."""
        if "nan:" not in self._numbers:
            self._numbers["nan:"] = read_only_nan(self.n)
        return self._numbers["nan:"]

    def coded(self, name: str) -> tuple[np.ndarray, list[str]]:
        """A column as (codes, distinct texts) (``columns.text_codes``; "" where absent),
        converted once."""
        key = f"text:{name}"
        if key not in self._numbers:
            values = self.columns.get(name)
            self._numbers[key] = ((np.full(self.n, -1, dtype=np.intp), [""]) if values is None
                                  else text_codes(values))
        return self._numbers[key]

    def is_text(self, name: str, values: Iterable[str]) -> np.ndarray:
        """True where the column's text is one of ``values``."""
        codes, texts = self.coded(name)
        wanted = set(values)
        return np.array([t in wanted for t in texts], dtype=bool)[codes]

    def text(self, name: str, rows: np.ndarray | None = None) -> np.ndarray:
        """A column as text ("" where missing or absent), of the placements ``rows`` selects (a
        mask or positions; all without it), one string object per distinct text."""
        codes, texts = self.coded(name)
        return np.array(texts, dtype=object)[codes if rows is None else codes[rows]]

    def inputs(self, rows: np.ndarray | None = None, **replaced: np.ndarray) -> Columns:
        """The placement stresses' inputs from the run's columns, of the placements where
        ``rows`` is True (all without it), with ``replaced`` columns (of those placements)."""
        def get(name: str) -> Any:
            if name in replaced:
                return replaced[name]
            values = self.columns.get(name)
            if values is None or rows is None:
                return values
            array = values.to_numpy() if isinstance(values, pd.Series) else np.asarray(values)
            return array[rows]
        return Columns(get, self.n if rows is None else int(np.count_nonzero(rows)))

    def put(self, name: str, values: Any) -> None:
        """Set a column (an existing one keeps its place; a new one goes last); one NaN
        throughout is the run's shared one (``nan``), its own memory freed at once."""
        self.columns[name] = empty_as(values, self.nan())
        self._numbers.pop(name, None)
        self._numbers.pop(f"text:{name}", None)

    def frame(self, names: Iterable[str] | None = None) -> pd.DataFrame:
        """A table of the named columns that exist (every column when ``names`` is None)."""
        chosen = self.columns if names is None else {
            c: self.columns[c] for c in names if c in self.columns}
        return pd.DataFrame(chosen, index=self.index, copy=False)

    def of_kind(self, kind: str) -> list[Any]:
        """The design's groups of ``kind`` (rail, bank or series), in design order."""
        return [g for g in self.groups.values() if g.kind == kind]

    def where(self) -> dict[str, int]:
        """Table position of each designator (upper case), for the groups' members."""
        if "where" not in self.shared:
            refdes = pd.Series(self.columns["refdes"]).astype(str).str.strip().str.upper()
            self.shared["where"] = dict(zip(refdes.to_numpy(dtype=object), range(self.n)))
        return self.shared["where"]

    def tolerances(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(minus %, plus %, True where the default was assumed) of each capacitance."""
        if "tolerances" not in self.shared:
            c = self.num("capacitance_f")
            by_abs = self.num("tol_abs_f") / c * 100.0
            minus = _fill(self.num("tol_minus_pct"), by_abs)
            plus = _fill(self.num("tol_plus_pct"), by_abs)
            assumed = np.isnan(minus) | np.isnan(plus)
            default = self.data.default_tol_pct
            self.shared["tolerances"] = (_fill(minus, default), _fill(plus, default), assumed)
        return self.shared["tolerances"]

    def c_max(self) -> np.ndarray:
        """Each placement's largest capacitance (nominal at its plus tolerance)."""
        if "c_max" not in self.shared:
            self.shared["c_max"] = self.num("capacitance_f") * (1.0 + self.tolerances()[1] / 100.0)
        return self.shared["c_max"]

    def group_array(self, name: str, fill: Any = np.nan) -> np.ndarray:
        """A per-placement array the group stresses fill in (``fill`` outside every group). Without
        banks and series stacks nothing fills it: one read-only array per ``fill`` serves all."""
        if name not in self.shared:
            dtype = bool if isinstance(fill, bool) else object if isinstance(fill, str) else float
            if self.of_kind("bank") or self.of_kind("series"):
                self.shared[name] = np.full(self.n, fill, dtype=dtype)
            else:
                key = f"fill:{fill!r}"
                if key not in self._numbers:
                    self._numbers[key] = np.full(self.n, fill, dtype=dtype)
                    self._numbers[key].flags.writeable = False
                self.shared[name] = self._numbers[key]
        return self.shared[name]


def _fill(values: np.ndarray, other: Any) -> np.ndarray:
    """``values`` with NaN replaced by ``other`` (an array or a number)."""
    return np.where(np.isnan(values), other, values)


__all__ = ["CircuitOptions", "CircuitRun", "finite", "members"]
